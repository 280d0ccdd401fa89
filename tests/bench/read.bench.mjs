// Mesh reading benchmark: a 1M-triangle mesh written as binary and ASCII STL, then loaded
// (read + weld + degenerate drop) with the library's own pipeline. Figures only; no pass/fail.
// Targets on the 2-core machine: binary under 2 s, ASCII under 6 s.
import { mkdtempSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { loadMeshFile } from "../../dist/src/io/load.js";
import { writeMeshFile } from "../../dist/src/io/write.js";

/** A closed torus of 2·nu·nv triangles, coordinates in metres rounded to 1 µm (as CAD exports in mm with 3 decimals). */
function torus(nu, nv, R = 0.05, r = 0.015) {
  const positions = new Float64Array(3 * nu * nv);
  for (let i = 0; i < nu; i++) {
    const u = (2 * Math.PI * i) / nu;
    for (let j = 0; j < nv; j++) {
      const v = (2 * Math.PI * j) / nv, o = 3 * (i * nv + j);
      positions[o] = Math.round(((R + r * Math.cos(v)) * Math.cos(u)) * 1e6) / 1e6;
      positions[o + 1] = Math.round(((R + r * Math.cos(v)) * Math.sin(u)) * 1e6) / 1e6;
      positions[o + 2] = Math.round((r * Math.sin(v)) * 1e6) / 1e6;
    }
  }
  const triangles = new Uint32Array(6 * nu * nv);
  let k = 0;
  for (let i = 0; i < nu; i++) for (let j = 0; j < nv; j++) {
    const a = i * nv + j, b = ((i + 1) % nu) * nv + j, c = ((i + 1) % nu) * nv + ((j + 1) % nv), d = i * nv + ((j + 1) % nv);
    triangles[k++] = a; triangles[k++] = b; triangles[k++] = c;
    triangles[k++] = a; triangles[k++] = c; triangles[k++] = d;
  }
  return { positions, triangles, conductor: new Uint32Array(2 * nu * nv), names: ["torus"] };
}

const mesh = torus(1000, 500);
const n = mesh.triangles.length / 3;
const dir = mkdtempSync(join(tmpdir(), "sigmesh-read-bench-"));
try {
  for (const [format, file, target] of [["stl", "torus_bin.stl", 2], ["stl-ascii", "torus_ascii.stl", 6]]) {
    const path = join(dir, file);
    let t0 = performance.now();
    writeMeshFile(path, mesh, format, "mm");
    const tw = (performance.now() - t0) / 1000;
    const size = statSync(path).size;
    globalThis.gc?.();
    const runs = [];
    let r;
    for (let k = 0; k < 3; k++) {
      t0 = performance.now();
      r = loadMeshFile(path, { unit: "mm" });
      runs.push((performance.now() - t0) / 1000);
      globalThis.gc?.();
    }
    const best = Math.min(...runs);
    const ok = r.mesh.triangles.length / 3 === n && r.mesh.positions.length / 3 === mesh.positions.length / 3;
    console.log(`${format.padEnd(9)} ${n} triangles, ${(size / 2 ** 20).toFixed(1)} MiB: write ${tw.toFixed(2)} s; load best ${best.toFixed(2)} s of [${runs.map((s) => s.toFixed(2)).join(", ")}] = ${(n / best / 1e6).toFixed(2)} M triangles/s; welded ${r.welded}, dropped ${r.dropped}, vertices ${r.mesh.positions.length / 3} ${ok ? "(as generated)" : "(MISMATCH)"}; target < ${target} s: ${best < target ? "met" : "NOT met"}`);
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
