// Compressed solver benchmark: time and memory growth on spheres (5k, 20k, 80k[, 320k with
// `full`]), accuracy against 4π ε0 R, the dense/compressed crossover, preconditioner cluster
// sizes and the two-level coarse correction, and the 64-pad array (64 right-hand sides
// solved together). Figures are printed, not asserted.
//   node tests/bench/compressed.bench.mjs [quick|full|products]
import { loadavg } from "node:os";
import { sphereMesh, plateMesh } from "../../dist/src/mesh/primitives/index.js";
import { concatMeshes } from "../../dist/src/mesh/model.js";
import { extractMesh } from "../../dist/src/extract/extract-mesh.js";
import { closeSharedPool } from "../../dist/src/linalg/pool.js";
import { EPSILON_0 } from "../../dist/src/extract/constants.js";
import { peakResidentBytes } from "../../dist/src/extract/memory.js";

const quick = process.argv.includes("quick"), full = process.argv.includes("full");
// `products` alone: just the H-matrix product section (JavaScript against SIMD at k = 64).
const only = process.argv.includes("products") || process.argv.some((a) => a.startsWith("pads="));
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
for (const level of only ? [] : levels) {
  const t = performance.now();
  const r = await extractMesh(sphereMesh({ radius: 1, level }), { solver: "compressed" });
  line("compressed", r, (performance.now() - t) / 1e3, k4);
}

console.log("\ncrossover: dense direct vs compressed (whole extract)");
for (const level of only ? [] : quick ? [3, 4] : [3, 4, 5]) {
  const m = sphereMesh({ radius: 1, level });
  for (const solver of ["direct", "iterative", "compressed"]) {
    if (level >= 5 && solver !== "compressed" && solver !== "direct") continue;
    const t = performance.now();
    const r = await extractMesh(m, { solver });
    line(solver, r, (performance.now() - t) / 1e3, k4);
  }
}

console.log("\npreconditioner: block-Jacobi cluster size, and the two-level coarse correction (aggregates of `coarse` panels), vs iterations");
const { solveUnitPotentials } = await import("../../dist/src/extract/solve.js");
const { sharedPool } = await import("../../dist/src/linalg/pool.js");
const pcLevels = quick ? [4] : full ? [4, 5, 6] : [4, 5];
for (const level of only ? [] : pcLevels) {
  const m = sphereMesh({ radius: 1, level });
  const combos = [[128, 0], [256, 0], [512, 0], [1024, 0], [256, 64], [256, 32]];
  for (const [cluster, coarse] of combos) {
    const t = performance.now();
    const s = await solveUnitPotentials(m.positions, m.triangles, m.conductor, 1, { method: "galerkin", solver: "compressed", tolerance: 1e-4, pool: sharedPool(), preconditionerCluster: cluster, coarseCluster: coarse });
    console.log(`level ${level} (${s.info.panels} panels) cluster ${String(cluster).padStart(4)} coarse ${String(coarse).padStart(3)} (${s.info.coarseAggregates} aggregates): ${s.info.iterations} iterations, setup ${s.info.preconditionerSeconds.toFixed(2)} s, solve ${s.info.solveSeconds.toFixed(2)} s, total ${((performance.now() - t) / 1e3).toFixed(2)} s, load ${loadavg()[0].toFixed(1)}`);
  }
}

if (process.argv.includes("products") || (!quick && !only)) {
  // Block products of the H-matrix at k = 64 (the pad array's right-hand sides): JavaScript
  // loops against the WebAssembly SIMD kernel, on the operator of a 16-pad array (~20k panels),
  // both workers. Flops: 2·m·n·k per dense block, 2·r·(m + n)·k per low-rank block, per use.
  const { buildHMatrix } = await import("../../dist/src/linalg/hmatrix.js");
  const { panelSetShared } = await import("../../dist/src/bem/panels.js");
  const { assembleBlockTask } = await import("../../dist/src/bem/assembly.js");
  const { sharedPool, sharedFloat64 } = await import("../../dist/src/linalg/pool.js");
  const parts = [];
  for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++)
    parts.push({ ...plateMesh({ size: [0.008, 0.008], divisions: 25, center: [0.01 * i, 0.01 * j, 0] }), names: [`pad${i}${j}`] });
  const m = concatMeshes(parts);
  const panels = panelSetShared(m.positions, m.triangles);
  const pool = sharedPool();
  const H = await buildHMatrix(panels.centroids, { source: { task: assembleBlockTask, before: [panels], after: ["galerkin", undefined] } },
    { tolerance: 1e-5, leafSize: 32, eta: 2, symmetric: true, pad: panels.radii, pool });
  const k = 64, n = panels.n, B = H.layout.blocks;
  let flops = 0;
  for (const uses of H.layout.uses) for (const use of uses) {
    const o = (use >> 1) * 7, mm = B[o + 1] - B[o], nn = B[o + 3] - B[o + 2], r = B[o + 6];
    flops += r < 0 ? 2 * mm * nn * k : 2 * r * (mm + nn) * k;
  }
  const X = sharedFloat64(n * k), Y = sharedFloat64(n * k);
  for (let i = 0; i < X.length; i++) X[i] = Math.sin(i);
  console.log(`\nH-matrix products, k = ${k}, 16 pads (${n} panels), ${(flops / 1e9).toFixed(2)} GFLOP per product, 2 workers`);
  for (const kernel of ["js", "auto", "js", "auto"]) {
    await H.apply(X, Y, k, kernel);
    const t = performance.now(), reps = 3;
    for (let q = 0; q < reps; q++) await H.apply(X, Y, k, kernel);
    const s = (performance.now() - t) / 1e3 / reps;
    console.log(`  ${kernel === "js" ? "JavaScript  " : "Wasm SIMD   "} ${s.toFixed(3)} s per product  ${(flops / s / 1e9).toFixed(2)} GFLOP/s (both cores)  load ${loadavg()[0].toFixed(2)}`);
  }
  await H.release();

  // Open-sheet centroid fields (the E_pv sum of extract): serial against both workers, on
  // 4,000 target panels of the same 16 pads.
  const { centroidFields, centroidFieldsParallel } = await import("../../dist/src/extract/probe.js");
  const q = new Float64Array(n);
  for (let p = 0; p < n; p++) q[p] = 1e-15 * (1 + Math.sin(p));
  const list = Uint32Array.from({ length: 4000 }, (_, a) => Math.floor((a * n) / 4000));
  let t = performance.now();
  const e1 = centroidFields(panels, q, 8.854e-12, list);
  const serial = (performance.now() - t) / 1e3;
  t = performance.now();
  const e2 = await centroidFieldsParallel(panels, q, 8.854e-12, list, undefined, pool);
  const parallel = (performance.now() - t) / 1e3;
  let d = 0;
  for (let i = 0; i < e1.length; i++) d = Math.max(d, Math.abs(e1[i] - e2[i]));
  console.log(`centroid fields, ${list.length} targets × ${n} sources: serial ${serial.toFixed(2)} s, 2 workers ${parallel.toFixed(2)} s (${(serial / parallel).toFixed(2)}×, max difference ${d.toExponential(1)})  load ${loadavg()[0].toFixed(2)}`);
  // The block-tree evaluation on all 20,000 targets (what extract uses above 3e7 pairs), checked on the 4,000.
  const { centroidFieldsFast } = await import("../../dist/src/extract/probe.js");
  const all = Uint32Array.from({ length: n }, (_, a) => a);
  t = performance.now();
  const cpu0 = process.cpuUsage();
  const e3 = await centroidFieldsFast(panels, q, 8.854e-12, all, undefined, pool, 1e-5);
  const fast = (performance.now() - t) / 1e3, cpu = process.cpuUsage(cpu0);
  let d3 = 0, s3 = 0;
  for (let a = 0; a < list.length; a++) for (let c = 0; c < 3; c++) { d3 = Math.max(d3, Math.abs(e3[3 * list[a] + c] - e1[3 * a + c])); s3 = Math.max(s3, Math.abs(e1[3 * a + c])); }
  console.log(`centroid fields by block tree, all ${n} targets: ${fast.toFixed(2)} s wall, ${((cpu.user + cpu.system) / 1e6).toFixed(2)} s CPU (both threads), vs the exact sum on the 4,000: max difference ${(d3 / s3).toExponential(1)} of the largest  load ${loadavg()[0].toFixed(2)}`);
}

// `pads=16` (a square number): the pad-array section alone with that many pads, ~1,250 panels each.
const padArg = process.argv.find((a) => a.startsWith("pads="));
if ((!quick && !only) || padArg) {
  const side = padArg ? Math.round(Math.sqrt(Number(padArg.slice(5)))) : 8;
  console.log(`\n${side * side}-pad array (${side} × ${side} pads, ~${(1.25 * side * side).toFixed(0)}k panels in all)  load ${loadavg()[0].toFixed(2)}`);
  const parts = [];
  for (let i = 0; i < side; i++) for (let j = 0; j < side; j++)
    parts.push({ ...plateMesh({ size: [0.008, 0.008], divisions: 25, center: [0.01 * i, 0.01 * j, 0] }), names: [`pad${i}${j}`] });
  const m = concatMeshes(parts);
  const t = performance.now(), cpu0 = process.cpuUsage();
  const r = await extractMesh(m, { solver: "compressed", progress: (phase, f) => { if (f === 1) console.log(`  ${phase} done at ${((performance.now() - t) / 1e3).toFixed(1)} s`); } });
  line(`${side * side} pads`, r, (performance.now() - t) / 1e3);
  const cpu = process.cpuUsage(cpu0);
  console.log(`  process CPU ${((cpu.user + cpu.system) / 1e6).toFixed(1)} s (all threads)  load ${loadavg()[0].toFixed(2)}`);
}
await closeSharedPool();
