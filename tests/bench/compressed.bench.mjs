// Compressed solver benchmark: time and memory growth on spheres (5k, 20k, 80k[, 320k with
// `full`]), accuracy against 4π ε0 R, the dense/compressed crossover, preconditioner cluster
// sizes and the two-level coarse correction, and the 64-pad array (64 right-hand sides
// solved together). Figures are printed, not asserted.
//   node tests/bench/compressed.bench.mjs [quick|full]
import { loadavg } from "node:os";
import { sphereMesh, plateMesh } from "../../dist/src/mesh/primitives/index.js";
import { concatMeshes } from "../../dist/src/mesh/model.js";
import { extract } from "../../dist/src/extract/extract.js";
import { closeSharedPool } from "../../dist/src/linalg/pool.js";
import { EPSILON_0 } from "../../dist/src/extract/constants.js";
import { peakResidentBytes } from "../../dist/src/extract/memory.js";

const quick = process.argv.includes("quick"), full = process.argv.includes("full");
const k4 = 4 * Math.PI * EPSILON_0;
const mb = (b) => `${(b / 2 ** 20).toFixed(0)} MiB`;
console.log(`load average ${loadavg().map((x) => x.toFixed(2)).join(" ")} (figures on a shared machine scale with it)`);

function line(label, r, seconds, exact) {
  const s = r.solver;
  const err = exact ? `  C/(4πε0R) − 1 = ${(r.maxwell[0] / exact - 1).toExponential(3)}` : "";
  console.log(`${label.padEnd(22)} ${String(s.panels).padStart(7)}  ${seconds.toFixed(2).padStart(7)} s  build ${s.assemblySeconds.toFixed(2)} s  solve ${s.solveSeconds.toFixed(2)} s  it ${s.iterations}  res ${s.residual?.toExponential(1)}  ratio ${s.compressionRatio?.toExponential(2) ?? "-"}  rank ${s.maxRank ?? "-"}/${s.meanRank?.toFixed(1) ?? "-"}  operator ${s.operatorBytes ? mb(s.operatorBytes) : "-"} (est ${s.estimatedBytes ? mb(s.estimatedBytes) : "-"})  peak RSS ${mb(peakResidentBytes())}${err}`);
}

console.log("\nspheres, R = 1 m, --tol 1e-4 (default)");
const levels = quick ? [4, 5] : full ? [4, 5, 6, 7] : [4, 5, 6];
for (const level of levels) {
  const t = performance.now();
  const r = await extract(sphereMesh({ radius: 1, level }), { solver: "compressed" });
  line("compressed", r, (performance.now() - t) / 1e3, k4);
}

console.log("\ncrossover: dense direct vs compressed (whole extract)");
for (const level of quick ? [3, 4] : [3, 4, 5]) {
  const m = sphereMesh({ radius: 1, level });
  for (const solver of ["direct", "iterative", "compressed"]) {
    if (level >= 5 && solver !== "compressed" && solver !== "direct") continue;
    const t = performance.now();
    const r = await extract(m, { solver });
    line(solver, r, (performance.now() - t) / 1e3, k4);
  }
}

console.log("\npreconditioner: block-Jacobi cluster size, and the two-level coarse correction (aggregates of `coarse` panels), vs iterations");
const { solveUnitPotentials } = await import("../../dist/src/extract/solve.js");
const { sharedPool } = await import("../../dist/src/linalg/pool.js");
const pcLevels = quick ? [4] : full ? [4, 5, 6] : [4, 5];
for (const level of pcLevels) {
  const m = sphereMesh({ radius: 1, level });
  const combos = [[128, 0], [256, 0], [512, 0], [1024, 0], [256, 64], [256, 32]];
  for (const [cluster, coarse] of combos) {
    const t = performance.now();
    const s = await solveUnitPotentials(m.positions, m.triangles, m.conductor, 1, { method: "galerkin", solver: "compressed", tolerance: 1e-4, pool: sharedPool(), preconditionerCluster: cluster, coarseCluster: coarse });
    console.log(`level ${level} (${s.info.panels} panels) cluster ${String(cluster).padStart(4)} coarse ${String(coarse).padStart(3)} (${s.info.coarseAggregates} aggregates): ${s.info.iterations} iterations, setup ${s.info.preconditionerSeconds.toFixed(2)} s, solve ${s.info.solveSeconds.toFixed(2)} s, total ${((performance.now() - t) / 1e3).toFixed(2)} s, load ${loadavg()[0].toFixed(1)}`);
  }
}

if (!quick) {
  console.log("\n64-pad array (8 × 8 pads, ~80k panels in all)");
  const parts = [];
  for (let i = 0; i < 8; i++) for (let j = 0; j < 8; j++)
    parts.push({ ...plateMesh({ size: [0.008, 0.008], divisions: 25, center: [0.01 * i, 0.01 * j, 0] }), names: [`pad${i}${j}`] });
  const m = concatMeshes(parts);
  const t = performance.now();
  const r = await extract(m, { solver: "compressed", progress: (phase, f) => { if (f === 1) console.log(`  ${phase} done at ${((performance.now() - t) / 1e3).toFixed(1)} s`); } });
  line("64 pads", r, (performance.now() - t) / 1e3);
}
await closeSharedPool();
