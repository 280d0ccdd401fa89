// Block-Jacobi preconditioner of the compressed solver: forward and back substitution against
// the explicit block inverses (one SIMD product per block), on single blocks and on the
// H-matrix diagonal blocks of a pad array; then PCG iterations and solve time against the
// cluster size. Figures are printed, not asserted; CPU time of the process beside wall time.
//   node tests/bench/jacobi.bench.mjs [blocks] [pads=36] [clusters] [sphere=6] [cpads=16]
// With no argument: every section at its default size.
import { loadavg } from "node:os";
import { plateMesh, sphereMesh } from "../../dist/src/mesh/primitives/index.js";
import { concatMeshes } from "../../dist/src/mesh/model.js";
import { panelSetShared } from "../../dist/src/bem/panels.js";
import { assembleBlockTask } from "../../dist/src/bem/assembly.js";
import { buildHMatrix } from "../../dist/src/linalg/hmatrix.js";
import { parallelBlockJacobi } from "../../dist/src/linalg/cluster-jacobi.js";
import { choleskyFactorSerial, choleskySolve } from "../../dist/src/linalg/cholesky.js";
import { choleskyInverseInPlace, applyInverse } from "../../dist/src/linalg/block-inverse.js";
import { solveUnitPotentials } from "../../dist/src/extract/solve.js";
import { clusterCover } from "../../dist/src/extract/preconditioner.js";
import { sharedPool, sharedFloat64, closeSharedPool } from "../../dist/src/linalg/pool.js";

const args = process.argv.slice(2);
const arg = (name) => { const a = args.find((s) => s.startsWith(`${name}=`)); return a ? Number(a.slice(name.length + 1)) : undefined; };
const all = args.length === 0;
const load = () => loadavg().map((x) => x.toFixed(2)).join(" ");
const cpu = () => { const u = process.cpuUsage(); return (u.user + u.system) / 1e6; };
console.log(`load average ${load()} (figures on a shared machine scale with it)`);

function padMesh(count) {
  const side = Math.round(Math.sqrt(count)), parts = [];
  for (let i = 0; i < side; i++) for (let j = 0; j < side; j++)
    parts.push({ ...plateMesh({ size: [0.008, 0.008], divisions: 25, center: [0.01 * i, 0.01 * j, 0] }), names: [`pad${i}${j}`] });
  return { mesh: concatMeshes(parts), k: side * side };
}

// Best wall time of `reps` (the machine is shared: the minimum is the least disturbed run),
// and the mean CPU time per run of the whole process (all threads: getrusage RUSAGE_SELF).
async function best(reps, f) {
  let t = Infinity;
  const c0 = cpu();
  for (let r = 0; r < reps; r++) { const s = performance.now(); await f(); t = Math.min(t, (performance.now() - s) / 1e3); }
  best.cpu = (cpu() - c0) / reps;
  return t;
}

if (all || args.includes("blocks")) {
  // One block on this thread: SPD (a random Gram matrix + I), the apply's three kernels.
  console.log("\nsingle blocks, this thread: setup (factor, + inverse) and D⁻¹·R by substitution / inverse JS / inverse SIMD");
  for (const m of [256, 512]) {
    const r = (() => { let s = 7; return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 4294967296); })();
    const G = Float64Array.from({ length: m * m }, () => r() - 0.5), A = new Float64Array(m * m);
    for (let i = 0; i < m; i++) for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let q = 0; q < m; q++) s += G[i * m + q] * G[j * m + q];
      A[i * m + j] = A[j * m + i] = s / m + (i === j ? 1 : 0);
    }
    const L = A.slice(), Dinv = A.slice();
    const tf = await best(5, () => { L.set(A); choleskyFactorSerial(L, m); });
    const ti = await best(5, () => { Dinv.set(A); choleskyFactorSerial(Dinv, m); choleskyInverseInPlace(Dinv, m); });
    console.log(`m ${m}: factor ${(tf * 1e3).toFixed(2)} ms, factor + inverse ${(ti * 1e3).toFixed(2)} ms  load ${load()}`);
    for (const k of [1, 2, 3, 4, 8, 16, 36, 64]) {
      const R = Float64Array.from({ length: m * k }, () => r() - 0.5), W = new Float64Array(m * k), Z = new Float64Array(m * k);
      const reps = Math.max(5, Math.ceil(200 / k));
      const ts = await best(reps, () => { W.set(R); choleskySolve(L, m, W, k); });
      const tj = await best(reps, () => applyInverse(Dinv, 0, m, R, Z, k, false));
      const tw = await best(reps, () => applyInverse(Dinv, 0, m, R, Z, k, true));
      const gf = (t) => `${(2 * m * m * k / t / 1e9).toFixed(2)} GFLOP/s`;
      console.log(`  k ${String(k).padStart(2)}: substitution ${(ts * 1e3).toFixed(3)} ms (${gf(ts)}), inverse JS ${(tj * 1e3).toFixed(3)} ms (${gf(tj)}), inverse SIMD ${(tw * 1e3).toFixed(3)} ms (${gf(tw)})`);
    }
  }
}

const pads = arg("pads") ?? (all ? 36 : undefined);
if (pads) {
  const { mesh } = padMesh(pads);
  const P = panelSetShared(mesh.positions, mesh.triangles);
  const pool = sharedPool();
  let t = performance.now();
  const H = await buildHMatrix(P.centroids, { source: { task: assembleBlockTask, before: [P], after: ["galerkin", undefined] } },
    { tolerance: 1e-5, leafSize: 32, eta: 2, symmetric: true, pad: P.radii, pool });
  const n = P.n;
  console.log(`\n${pads} pads, ${n} panels (the compressed bench's geometry, Galerkin, tol 1e-5): H built in ${((performance.now() - t) / 1e3).toFixed(1)} s, 2 workers  load ${load()}`);
  for (const cluster of [256, 512]) {
    const nodes = clusterCover(H.tree, cluster);
    const sets = nodes.map((v) => H.tree.order.slice(H.tree.start[v], H.tree.end[v]));
    const J = {};
    for (const inverse of [false, true]) {
      const w0 = performance.now(), c0 = cpu();
      J[inverse] = await parallelBlockJacobi((into) => { H.diagonalBlocks(nodes, into); }, sets, n, pool, { inverse });
      console.log(`cluster ${cluster} (${sets.length} blocks), ${inverse ? "inverse     " : "substitution"}: setup ${((performance.now() - w0) / 1e3).toFixed(2)} s wall, ${(cpu() - c0).toFixed(2)} s CPU (all threads; the diagonal blocks are gathered on the main thread)  load ${load()}`);
    }
    for (const k of [1, 8, 36, 64]) {
      const X = sharedFloat64(n * k), Y = sharedFloat64(n * k), Z0 = sharedFloat64(n * k), Z1 = sharedFloat64(n * k);
      for (let i = 0; i < X.length; i++) X[i] = Math.sin(i);
      const th = cluster === 256 ? await best(2, () => H.apply(X, Y, k)) : NaN, ch = best.cpu;
      const ts = await best(5, () => J[false].apply(X, Z0, k)), cs = best.cpu;
      const ti = await best(5, () => J[true].apply(X, Z1, k)), ci = best.cpu;
      let d = 0, s = 0;
      for (let i = 0; i < Z0.length; i++) { d = Math.max(d, Math.abs(Z1[i] - Z0[i])); s = Math.max(s, Math.abs(Z0[i])); }
      console.log(`  k ${String(k).padStart(2)}: apply substitution ${ts.toFixed(3)} s (CPU ${cs.toFixed(3)} s), inverse ${ti.toFixed(3)} s (CPU ${ci.toFixed(3)} s), ×${(ts / ti).toFixed(1)} wall, ×${(cs / ci).toFixed(1)} CPU${cluster === 256 ? `; H.apply ${th.toFixed(3)} s (CPU ${ch.toFixed(3)} s)` : ""}; max difference ${(d / s).toExponential(1)} relative  load ${load()}`);
    }
    await J[false].release(); await J[true].release();
  }
  await H.release();
}

// Whole compressed solves (the faster apply is the default) against the cluster size.
const sphere = arg("sphere") ?? (all || args.includes("clusters") ? 6 : undefined);
const cpads = arg("cpads") ?? (all || args.includes("clusters") ? 16 : undefined);
const cases = [];
if (cpads) { const { mesh, k } = padMesh(cpads); cases.push([`${cpads} pads`, mesh, k]); }
if (sphere) cases.push([`sphere level ${sphere}`, sphereMesh({ radius: 1, level: sphere }), 1]);
if (cases.length) console.log("\ncompressed solves (Galerkin PCG, --tol 1e-4), block-Jacobi cluster size");
for (const [label, m, k] of cases) {
  for (const cluster of [256, 512]) {
    const t = performance.now(), c0 = cpu();
    // CPU time of the solve phase (preconditioner setup + PCG), all threads: from progress("solve", 0) to the end.
    let cs = NaN;
    const progress = (phase, f) => { if (phase === "solve" && f === 0) cs = cpu(); };
    const s = await solveUnitPotentials(m.positions, m.triangles, m.conductor, k, { method: "galerkin", solver: "compressed", tolerance: 1e-4, pool: sharedPool(), preconditionerCluster: cluster, coarseCluster: 0, progress });
    const i = s.info, c1 = cpu();
    console.log(`${label} (${i.panels} panels, k ${k}) cluster ${cluster}: ${i.iterations} iterations, setup ${i.preconditionerSeconds.toFixed(2)} s, solve ${i.solveSeconds.toFixed(2)} s wall (incl. setup), ${(c1 - cs).toFixed(1)} s CPU; whole call ${((performance.now() - t) / 1e3).toFixed(1)} s wall, ${(c1 - c0).toFixed(1)} s CPU (all threads)  load ${load()}`);
  }
}
await closeSharedPool();
