// Krylov tolerance benchmark: what a looser PCG tolerance costs the capacitance (raw b_iᵀx_j and
// with the variational correction, capacitance.ts variationalCorrection), the panel charges, the
// peak fields and the forces, against a tight (1e-10) solve of the same compressed operator
// (--tol 1e-4, so the same compression). Figures are printed, not asserted; the table in
// DEVELOPERS.md comes from here.
//   node tests/bench/krylov.bench.mjs [sphere] [pair] [bars] [pads] [vector]   (no argument: all; pads
// takes ~7 min on the shared 2-core machine: the reference fields are the exact all-pairs sums)
import { loadavg } from "node:os";
import { sphereMesh, plateMesh, barMesh } from "../../dist/src/mesh/primitives/index.js";
import { concatMeshes } from "../../dist/src/mesh/model.js";
import { solveUnitPotentials } from "../../dist/src/extract/solve.js";
import { conductorCharges, capacitanceMatrices } from "../../dist/src/extract/capacitance.js";
import { panelExcitation, peakFields, conductorForces } from "../../dist/src/extract/excitation.js";
import { centroidFieldsParallel } from "../../dist/src/extract/probe.js";
import { sharedPool, closeSharedPool, sharedFloat64 } from "../../dist/src/linalg/pool.js";
import { pcg } from "../../dist/src/linalg/cg.js";
import { EPSILON_0 } from "../../dist/src/extract/constants.js";

const args = process.argv.slice(2);
const want = (s) => args.length === 0 || args.includes(s);
const pool = sharedPool();
const eps = EPSILON_0;
console.log(`load average ${loadavg().map((x) => x.toFixed(2)).join(" ")} (figures on a shared machine scale with it)`);

/** Everything reported downstream of one solve, at the working point (first conductor 1 V, rest 0). */
async function observe(mesh, sol, k, open) {
  const P = sol.panels, n = P.n;
  const names = Array.from({ length: k }, (_, i) => `c${i}`);
  const scale = 4 * Math.PI * eps;
  const raw = conductorCharges(sol.x, mesh.conductor, k).map((v) => v * scale);
  const cor = conductorCharges(sol.x, mesh.conductor, k, sol.chargeCorrection).map((v) => v * scale);
  const working = new Float64Array(k); working[0] = 1;
  const openPanel = new Uint8Array(n);
  for (let p = 0; p < n; p++) openPanel[p] = open[mesh.conductor[p]] ? 1 : 0;
  let ex = panelExcitation(sol.x, k, P, working, eps, openPanel);
  const list = Uint32Array.from({ length: n }, (_, p) => p).filter((p) => openPanel[p]);
  let fieldPv;
  if (list.length > 0) {
    const e = await centroidFieldsParallel(P, ex.charge, eps, list, undefined, pool);
    fieldPv = new Float64Array(3 * n);
    const normalPv = new Float64Array(n);
    for (let a = 0; a < list.length; a++) {
      const p = list[a];
      for (let d = 0; d < 3; d++) fieldPv[3 * p + d] = e[3 * a + d];
      normalPv[p] = e[3 * a] * P.normals[3 * p] + e[3 * a + 1] * P.normals[3 * p + 1] + e[3 * a + 2] * P.normals[3 * p + 2];
    }
    ex = panelExcitation(sol.x, k, P, working, eps, openPanel, normalPv);
  }
  return {
    raw: capacitanceMatrices(raw, k, names).maxwell, cor: capacitanceMatrices(cor, k, names).maxwell,
    charge: ex.charge, field: ex.field, peaks: peakFields(ex.field, mesh.conductor, k, P).map((p) => p.value),
    force: conductorForces(ex.sigma, P, mesh.conductor, k, eps, openPanel, fieldPv).force,
  };
}

const maxAbs = (a) => a.reduce((m, v) => Math.max(m, Math.abs(v)), 0);
/** max |a − b| / max |b|. */
const relMax = (a, b) => { let d = 0; for (let i = 0; i < a.length; i++) d = Math.max(d, Math.abs(a[i] - b[i])); return d / maxAbs(b); };
/** Worst |a_i − b_i| / |b_i| over entries of b at least `floor` of its largest. */
const relEntry = (a, b, floor = 1e-2) => { const m = maxAbs(b); let d = 0; for (let i = 0; i < a.length; i++) if (Math.abs(b[i]) >= floor * m) d = Math.max(d, Math.abs(a[i] - b[i]) / Math.abs(b[i])); return d; };

async function sweep(label, mesh, k, open) {
  const n = mesh.triangles.length / 3;
  console.log(`\n${label}: ${n} panels, ${k} conductors, compressed Galerkin, --tol 1e-4  load ${loadavg()[0].toFixed(2)}`);
  console.log("  Krylov tol  it   solve s   C raw: max|ΔC|/max|C|  worst entry   C corrected: max     worst entry   charge max|Δq|/max|q|   peak field worst   force max|ΔF|/max|F|");
  let ref;
  for (const kt of [1e-10, 1e-6, 1e-5, 1e-4, 1e-3]) {
    const sol = await solveUnitPotentials(mesh.positions, mesh.triangles, mesh.conductor, k, { method: "galerkin", solver: "compressed", tolerance: 1e-4, pool, krylovTolerance: kt });
    const o = await observe(mesh, sol, k, open);
    if (!ref) ref = o;
    const peak = o.peaks.reduce((m, v, i) => Math.max(m, Math.abs(v - ref.peaks[i]) / ref.peaks[i]), 0);
    const e = (v) => v.toExponential(1).padStart(9);
    console.log(`  ${kt.toExponential(0).padEnd(9)} ${String(sol.info.iterations).padStart(3)} ${sol.info.solveSeconds.toFixed(1).padStart(8)}   ${e(relMax(o.raw, ref.cor))}              ${e(relEntry(o.raw, ref.cor))}     ${e(relMax(o.cor, ref.cor))}     ${e(relEntry(o.cor, ref.cor))}     ${e(relMax(o.charge, ref.charge))}               ${e(peak)}          ${e(relMax(o.force, ref.force))}`);
  }
}

if (want("sphere")) await sweep("sphere R = 1 m", sphereMesh({ radius: 1, level: 4 }), 1, [false]);
if (want("pair")) {
  const a = sphereMesh({ radius: 1, level: 4, center: [0, 0, 0] }), b = sphereMesh({ radius: 1, level: 4, center: [2.2, 0, 0] });
  await sweep("sphere pair R = 1 m, gap 0.2 m", concatMeshes([{ ...a, names: ["a"] }, { ...b, names: ["b"] }]), 2, [false, false]);
}
if (want("bars")) {
  const a = barMesh({ length: 10, width: 1, thickness: 1, divisions: [60, 8, 8], center: [0, 0, 0] });
  const b = barMesh({ length: 10, width: 1, thickness: 1, divisions: [60, 8, 8], axis: "y", center: [0, 0, 1.5] });
  await sweep("crossing bars 10×1×1, 0.5 apart", concatMeshes([{ ...a, names: ["a"] }, { ...b, names: ["b"] }]), 2, [false, false]);
}
if (want("pads")) {
  const parts = [];
  for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++)
    parts.push({ ...plateMesh({ size: [0.008, 0.008], divisions: 25, center: [0.01 * i, 0.01 * j, 0] }), names: [`pad${i}${j}`] });
  await sweep("16-pad array (open 8 mm pads, 10 mm pitch)", concatMeshes(parts), 16, new Array(16).fill(true));
}

if (want("vector")) {
  // PCG's own vector work at n·k = 5M (k = 36): a diagonal operator and the identity
  // preconditioner, each one pass, timed apart from the rest of the iteration.
  const k = 36, n = Math.round(5e6 / k);
  const d = new Float64Array(n);
  for (let i = 0; i < n; i++) d[i] = 1 + ((i * 7919) % 1000) / 10;
  let tCb = 0;
  const apply = (X, Y, kk) => { const t = performance.now(); for (let i = 0; i < n; i++) { const a = d[i], o = i * kk; for (let c = 0; c < kk; c++) Y[o + c] = a * X[o + c]; } tCb += performance.now() - t; };
  const prec = (R, Z, kk) => { const t = performance.now(); Z.set(R.subarray(0, n * kk)); tCb += performance.now() - t; };
  const B = sharedFloat64(n * k);
  for (let i = 0; i < n; i++) for (let c = 0; c < k; c++) B[i * k + c] = Math.sin(i + 0.37 * c) * (1 + c / k);
  console.log(`\nPCG vector work, n = ${n}, k = ${k} (n·k = 5M), diagonal operator`);
  for (let rep = 0; rep < 2; rep++) {
    tCb = 0;
    const t = performance.now();
    const r = await pcg(apply, prec, B, k, { tol: 1e-6, maxIter: 400 });
    const total = performance.now() - t;
    console.log(`  ${r.iterations} iterations, ${(total / 1e3).toFixed(2)} s, in apply/precondition ${(tCb / 1e3).toFixed(2)} s, the rest ${((total - tCb) / r.iterations).toFixed(1)} ms per iteration  load ${loadavg()[0].toFixed(2)}`);
  }
}
await closeSharedPool();
