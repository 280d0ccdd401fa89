// CAD reading benchmark: a STEP assembly of about 200 faces (two interdigitated combs of
// 20 fingers fused to their backbones, eight round pins), written by Gmsh's OpenCASCADE kernel
// when gmsh is installed, then read and meshed with the library's own pipeline (the kernel's
// two triangulations, the exact-normal fit, weld, units). Figures only; no pass/fail.
// Target on the 2-core machine: under 5 s, first read of the process included.
import { mkdtempSync, rmSync, writeFileSync, existsSync } from "node:fs";
import { spawnSync } from "node:child_process";
import { tmpdir, loadavg } from "node:os";
import { join } from "node:path";
import { loadMeshFile } from "../../dist/src/io/load.js";

const GEO = `SetFactory("OpenCASCADE");
n = 20; w = 0.4; g = 0.3; L = 6; t = 0.5; p = 2 * (w + g);
Box(1) = {0, 0, 0, n * p, 1, t};
For i In {0 : n - 1}
  Box(10 + i) = {i * p, 1, 0, w, L, t};
EndFor
BooleanUnion(100) = { Volume{1}; Delete; }{ Volume{10 : 10 + n - 1}; Delete; };
Box(2) = {0, L + 1 + g, 0, n * p, 1, t};
For i In {0 : n - 1}
  Box(40 + i) = {i * p + w + g, g + 1, 0, w, L, t};
EndFor
BooleanUnion(200) = { Volume{2}; Delete; }{ Volume{40 : 40 + n - 1}; Delete; };
For k In {0 : 7}
  Cylinder(300 + k) = {k * 3.5 + 1, -3, 0, 0, 0, 2, 0.4, 2 * Pi};
EndFor
Save "comb.step";
`;

const dir = mkdtempSync(join(tmpdir(), "sigmesh-cad-bench-"));
try {
  writeFileSync(join(dir, "comb.geo"), GEO);
  const g = spawnSync("gmsh", ["comb.geo", "-0"], { cwd: dir, encoding: "utf8" });
  if (g.error || !existsSync(join(dir, "comb.step"))) {
    console.log("gmsh not available: CAD bench skipped");
  } else {
    // One read per process: later reads of the same bytes come from the reader's cache.
    const load = loadavg()[0];
    const t0 = performance.now(), c0 = process.cpuUsage();
    const r = loadMeshFile(join(dir, "comb.step"), { unit: "mm" });
    const wall = (performance.now() - t0) / 1000, cu = process.cpuUsage(c0), cpu = (cu.user + cu.system) / 1e6;
    const m = r.mesh;
    console.log(`comb.step: ${m.names.length} parts, ${m.reference.faceCount} CAD faces, ${m.triangles.length / 3} panels, reference ${m.reference.face.length} triangles`);
    console.log(`  read and mesh (first CAD file of the process, kernel start included): wall ${wall.toFixed(2)} s, CPU ${cpu.toFixed(2)} s; load average ${load.toFixed(1)} on 2 cores at the start (wall ≈ CPU on an idle machine)`);
    console.log(`  target < 5 s: ${wall < 5 ? "met" : cpu < 5 ? "met in CPU time, not in wall time on this loaded machine" : "NOT met"}`);
    const w = r.warnings.map((x) => x.message).join("; ");
    if (w) console.log(`  notes: ${w}`);
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
