// Extraction benchmark: the issue's accuracy and speed targets on generated meshes, and
// the measurements behind the `--solver auto` cost model. Figures are printed, not asserted.
//   node tests/bench/extract.bench.mjs [quick]
import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync, rmSync } from "node:fs";
import { tmpdir, loadavg } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { sphereMesh, boxMesh, plateMesh, diskMesh } from "../../dist/src/mesh/primitives/index.js";
import { writeMeshFile } from "../../dist/src/io/write.js";
import { extractMesh } from "../../dist/src/extract/extract-mesh.js";
import { closeSharedPool } from "../../dist/src/linalg/pool.js";
import { EPSILON_0 } from "../../dist/src/extract/constants.js";

const quick = process.argv.includes("quick");
const k4 = 4 * Math.PI * EPSILON_0;
const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
const dir = mkdtempSync(join(tmpdir(), "sigmesh-bench-"));
console.log(`load average ${loadavg().map((x) => x.toFixed(2)).join(" ")}`);

function pct(x) { return `${(100 * x).toFixed(4)} %`; }

// Accuracy targets (library calls).
const cases = [
  { name: "sphere 5120 panels", mesh: sphereMesh({ radius: 1, level: 4 }), exact: k4 * 1, target: 0.0015, source: "4π ε0 R (exact)" },
  { name: "cube 16×16 per face", mesh: boxMesh({ size: [1, 1, 1], divisions: 16 }), exact: k4 * 0.66068, target: 0.003, source: "Hwang & Mascagni 2004" },
  { name: "square plate 24×24", mesh: plateMesh({ size: [1, 1], divisions: 24 }), exact: k4 * 0.36679, target: 0.01, source: "0.3668 (literature, from memory)" },
  { name: "disk, rim-graded", mesh: diskMesh({ radius: 1, divisions: 16, grading: 4 }), exact: 8 * EPSILON_0, target: 0.005, source: "8 ε0 R (exact)" },
];
console.log("\ncase                        panels   C/C_ref     error      target   time");
for (const c of cases) {
  const t = performance.now();
  const r = await extractMesh(c.mesh, {});
  const s = (performance.now() - t) / 1e3;
  const err = r.maxwell[0] / c.exact - 1;
  console.log(`${c.name.padEnd(26)} ${String(r.solver.panels).padStart(7)}  ${(r.maxwell[0] / c.exact).toFixed(6)}  ${pct(err).padStart(10)}  ${pct(c.target).padStart(9)}  ${s.toFixed(2)} s  (${c.source})`);
}
{
  const t = performance.now();
  const r = await extractMesh(sphereMesh({ radius: 1, level: 3 }), { refine: 1 });
  const s = (performance.now() - t) / 1e3;
  const err = r.maxwell[0] / k4 - 1;
  console.log(`sphere 1280 --refine 1: extrapolated error ${pct(err)} (target 0.02 %), estimate ±${pct(r.accuracy.richardson.relativeError)} ${Math.abs(err) <= r.accuracy.richardson.relativeError ? "brackets" : "DOES NOT bracket"} the true error; ${s.toFixed(2)} s`);
}

// Whole CLI run on the 5120-panel sphere (target under 1.5 s on 2 cores).
writeMeshFile(join(dir, "sphere.stl"), sphereMesh({ radius: 1e-3, level: 4 }), "stl", "mm");
for (let rep = 0; rep < 3; rep++) {
  const t = performance.now();
  const r = spawnSync(process.execPath, [cli, "extract", join(dir, "sphere.stl"), "--json", join(dir, "r.json"), "--quiet"], { encoding: "utf8" });
  const s = (performance.now() - t) / 1e3;
  console.log(`sigmesh extract sphere.stl (5120 panels), whole process: ${s.toFixed(2)} s${r.status ? ` (exit ${r.status}: ${r.stderr.trim()})` : ""}`);
}

// Cost model of --solver auto: direct vs iterative on the same systems.
console.log("\nsolver calibration (Galerkin, spheres; k right-hand sides = conductors)");
console.log("panels  k  direct s  GFLOP/s  iterative s  iterations  entries/s (assembly)");
const sizes = quick ? [1280, 5120] : [1280, 2880, 5120, 8000];
for (const n of sizes) {
  for (const k of [1, 8]) {
    const per = Math.round(n / k / 20);
    const lvl = Math.max(0, Math.round(Math.log(per) / Math.log(4)));
    const parts = [];
    for (let i = 0; i < k; i++) parts.push({ ...sphereMesh({ radius: 1, level: lvl, center: [3 * i, 0, 0] }), names: [`s${i}`] });
    const { concatMeshes } = await import("../../dist/src/mesh/model.js");
    const m = concatMeshes(parts);
    const d = await extractMesh(m, { solver: "direct" });
    const it = await extractMesh(m, { solver: "iterative" });
    console.log(`${String(d.solver.panels).padStart(6)} ${String(k).padStart(2)}  ${d.solver.solveSeconds.toFixed(3).padStart(8)}  ${(d.solver.factorGflops ?? 0).toFixed(2).padStart(7)}  ${it.solver.solveSeconds.toFixed(3).padStart(11)}  ${String(it.solver.iterations).padStart(10)}  ${(d.solver.entriesPerSecond / 1e6).toFixed(1)} M`);
  }
}
await closeSharedPool();
rmSync(dir, { recursive: true, force: true });
