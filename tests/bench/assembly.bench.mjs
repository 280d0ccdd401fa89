// Galerkin assembly of an icosphere (20·4^L panels): serial and on 2 workers, seconds and entries/s.
// Usage: node tests/bench/assembly.bench.mjs [levels=4]   (needs `npx tsc -p tsconfig.json` first)
import { panelSet, panelSetShared } from "../../dist/src/bem/panels.js";
import { assembleRows, assembleDense } from "../../dist/src/bem/assembly.js";
import { WorkerPool } from "../../dist/src/linalg/pool.js";
import { RHO_FAR, RHO_MID, galerkinEntry, outerRuleSplit, doubleQuadrature, sharedCorner } from "../../dist/src/bem/galerkin.js";
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
await pool.close();
