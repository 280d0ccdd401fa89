// Galerkin assembly of an icosphere (20·4^L panels): serial and on 2 workers, seconds and entries/s;
// then the graded and box meshes whose near pairs used to dominate (CPU time per rung, 2-worker speed).
// Usage: node tests/bench/assembly.bench.mjs [levels=4]   (needs `npx tsc -p tsconfig.json` first)
import { panelSet, panelSetShared } from "../../dist/src/bem/panels.js";
import { assembleRows, assembleDense } from "../../dist/src/bem/assembly.js";
import { WorkerPool } from "../../dist/src/linalg/pool.js";
import { RHO_FAR, RHO_MID, RHO_NEAR, RHO_QQ3, RHO_QUADRUPOLE, galerkinEntry, outerRuleSplit, doubleQuadrature, sharedCorner } from "../../dist/src/bem/galerkin.js";
import { plateMesh, boxMesh } from "../../dist/src/mesh/primitives/index.js";
import { dunavantRule } from "../../dist/src/bem/dunavant.js";

function icosphere(levels) {
  const t = (1 + Math.sqrt(5)) / 2;
  const pts = [[-1, t, 0], [1, t, 0], [-1, -t, 0], [1, -t, 0], [0, -1, t], [0, 1, t], [0, -1, -t], [0, 1, -t],
    [t, 0, -1], [t, 0, 1], [-t, 0, -1], [-t, 0, 1]].map((p) => { const l = Math.hypot(...p); return p.map((x) => x / l); });
  let faces = [[0, 11, 5], [0, 5, 1], [0, 1, 7], [0, 7, 10], [0, 10, 11], [1, 5, 9], [5, 11, 4], [11, 10, 2], [10, 7, 6], [7, 1, 8],
    [3, 9, 4], [3, 4, 2], [3, 2, 6], [3, 6, 8], [3, 8, 9], [4, 9, 5], [2, 4, 11], [6, 2, 10], [8, 6, 7], [9, 8, 1]];
  for (let l = 0; l < levels; l++) {
    const mid = new Map();
    const m = (a, b) => { const key = a < b ? `${a},${b}` : `${b},${a}`; let k = mid.get(key);
      if (k === undefined) { const p = pts[a].map((x, q) => (x + pts[b][q]) / 2); const len = Math.hypot(...p); k = pts.push(p.map((x) => x / len)) - 1; mid.set(key, k); }
      return k; };
    const next = [];
    for (const [a, b, c] of faces) { const ab = m(a, b), bc = m(b, c), ca = m(c, a); next.push([a, ab, ca], [b, bc, ab], [c, ca, bc], [ab, bc, ca]); }
    faces = next;
  }
  return { positions: Float64Array.from(pts.flat()), triangles: Uint32Array.from(faces.flat()) };
}

const levels = Number(process.argv[2] ?? 4);
const s = icosphere(levels);
const P = panelSetShared(s.positions, s.triangles);
const n = P.n, unique = (n * (n + 1)) / 2;
let far = 0, mid = 0;
for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) {
  const d = Math.hypot(P.centroids[3 * i] - P.centroids[3 * j], P.centroids[3 * i + 1] - P.centroids[3 * j + 1], P.centroids[3 * i + 2] - P.centroids[3 * j + 2]) / (P.radii[i] + P.radii[j]);
  if (d >= RHO_FAR) far++; else if (d >= RHO_MID) mid++;
}
console.log(`icosphere ${n} panels, ${unique} unique Galerkin entries: ${(100 * far / unique).toFixed(1)} % far-expansion, ${(100 * mid / unique).toFixed(1)} % double-quadrature, ${(100 * (unique - far - mid) / unique).toFixed(2)} % near/touching/self`);

// Accuracy ladder on this mesh: worst relative error of galerkinEntry per ρ band against a
// reference with the analytic inner integral (ρ < 2.5: adaptively split degree-10 outer rule;
// beyond: degree-10 rule on both panels, itself ≤ 1e-10 there). Touching pairs: see the tests.
{
  const bands = [[1, 1.5], [1.5, 2.5], [2.5, 4], [4, 5], [5, 8], [8, 12], [12, 20], [20, 1e9]];
  const worst = bands.map(() => 0), count = bands.map(() => 0);
  const R10 = dunavantRule(10);
  for (let i = 0; i < n; i += 53) for (let j = 0; j < n; j += 3) {
    if (i === j || sharedCorner(P, i, j) >= 0) continue;
    const rho = Math.hypot(P.centroids[3 * i] - P.centroids[3 * j], P.centroids[3 * i + 1] - P.centroids[3 * j + 1], P.centroids[3 * i + 2] - P.centroids[3 * j + 2]) / (P.radii[i] + P.radii[j]);
    const b = bands.findIndex(([lo, hi]) => rho >= lo && rho < hi);
    if (b < 0) continue;
    const lo = Math.min(i, j), hi = Math.max(i, j);
    const ref = rho < 2.5 ? outerRuleSplit(P, lo, hi, R10) : doubleQuadrature(P, lo, hi, R10);
    worst[b] = Math.max(worst[b], Math.abs(galerkinEntry(P, i, j) - ref) / ref);
    count[b]++;
  }
  console.log("accuracy ladder (worst relative error vs reference, pairs sampled):");
  bands.forEach(([lo, hi], b) => console.log(`  rho ${lo}-${hi === 1e9 ? "inf" : hi}: ${worst[b].toExponential(1)} (${count[b]} pairs)`));
}

const out = new Float64Array(new SharedArrayBuffer(8 * n * n));
// CPU seconds as well as wall seconds: the machine is shared, and wall time alone misleads.
let t0, t;
for (let rep = 0; rep < 3; rep++) {
  const c0 = process.cpuUsage();
  t0 = performance.now();
  assembleRows(P, "galerkin", 0, n, out);
  const cu = process.cpuUsage(c0);
  t = (performance.now() - t0) / 1000;
  const cpu = (cu.user + cu.system) / 1e6;
  console.log(`serial   : ${t.toFixed(3)} s wall, ${cpu.toFixed(3)} s CPU, ${(unique / cpu / 1e6).toFixed(1)} M unique entries per CPU second`);
}

const pool = new WorkerPool(2);
await assembleDense(P, "galerkin", pool); // warm-up: workers load and JIT the module
for (let rep = 0; rep < 3; rep++) {
  t0 = performance.now();
  await assembleDense(P, "galerkin", pool);
  t = (performance.now() - t0) / 1000;
  console.log(`2 workers: ${t.toFixed(3)} s, ${(unique / t / 1e6).toFixed(1)} M unique entries/s (incl. ${(8 * n * n / 2 ** 20).toFixed(0)} MiB shared matrix allocation)`);
}
for (let rep = 0; rep < 2; rep++) {
  t0 = performance.now();
  await assembleDense(P, "galerkin", pool, out);
  t = (performance.now() - t0) / 1000;
  console.log(`2 workers: ${t.toFixed(3)} s, ${(unique / t / 1e6).toFixed(1)} M unique entries/s (into a reused matrix)`);
}

// Meshes with graded and elongated panels: entries per rung, CPU seconds per rung (serial,
// best of 3), and the 2-worker figure. "mid" includes the pairs the clearance test sends on
// to the near rung.
const meshes = [
  ["box 1 m, 16 divisions", boxMesh({ size: [1, 1, 1], divisions: 16 })],
  ["plate 1 m, 24 divisions", plateMesh({ size: [1, 1], divisions: 24 })],
  ["plate 1 m, 24 divisions, grading 3", plateMesh({ size: [1, 1], divisions: 24, grading: 3 })],
  ["plate 10 m, 12 divisions, grading 3", plateMesh({ size: [10, 10], divisions: 12, grading: 3 })],
];
const rungs = ["self", "touching", "near", "mid", "qq", "qq3", "far", "quadrupole"];
for (const [label, m] of meshes) {
  const Q = panelSetShared(m.positions, m.triangles), nq = Q.n, uq = (nq * (nq + 1)) / 2;
  const lists = rungs.map(() => []);
  for (let i = 0; i < nq; i++) for (let j = i; j < nq; j++) {
    if (i === j) { lists[0].push(i, j); continue; }
    const c = Q.centroids;
    const rho = Math.hypot(c[3 * i] - c[3 * j], c[3 * i + 1] - c[3 * j + 1], c[3 * i + 2] - c[3 * j + 2]) / (Q.radii[i] + Q.radii[j]);
    const k = rho >= RHO_QUADRUPOLE ? 7 : rho >= RHO_FAR ? 6 : rho >= RHO_QQ3 ? 5 : rho >= RHO_MID ? 4
      : sharedCorner(Q, i, j) >= 0 ? 1 : rho >= RHO_NEAR ? 3 : 2;
    lists[k].push(i, j);
  }
  const parts = [];
  for (let k = 0; k < rungs.length; k++) {
    const L = lists[k];
    let best = Infinity, sink = 0;
    for (let rep = 0; rep < 3; rep++) {
      const c0 = process.cpuUsage();
      for (let r = 0; r < L.length; r += 2) sink += galerkinEntry(Q, L[r], L[r + 1]);
      const cu = process.cpuUsage(c0);
      best = Math.min(best, (cu.user + cu.system) / 1e6);
    }
    if (!(sink > 0)) throw new Error("non-positive entries");
    parts.push(`${rungs[k]} ${L.length / 2} ${(best * 1e3).toFixed(1)} ms (${L.length ? (best / (L.length / 2) * 1e6).toFixed(2) : "-"} µs)`);
  }
  const mq = new Float64Array(new SharedArrayBuffer(8 * nq * nq));
  await assembleDense(Q, "galerkin", pool, mq);
  let bestWall = Infinity;
  for (let rep = 0; rep < 5; rep++) {
    t0 = performance.now();
    await assembleDense(Q, "galerkin", pool, mq);
    bestWall = Math.min(bestWall, (performance.now() - t0) / 1000);
  }
  console.log(`${label}: ${nq} panels, 2 workers best of 5 ${bestWall.toFixed(4)} s, ${(uq / bestWall / 1e6).toFixed(2)} M unique entries/s`);
  console.log(`  per rung (entries, serial CPU, per entry): ${parts.join("; ")}`);
}
await pool.close();
