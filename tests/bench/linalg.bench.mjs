// Dense linear algebra figures: the trailing-update kernel alone, Cholesky and LU GFLOP/s
// on the calling thread and on a pool of two workers, each with the JavaScript and the
// WebAssembly SIMD kernel (ratios matter more than absolutes on a shared machine), and
// dense multiply GB/s. Run: npm run bench -- linalg  (or, after a build,
// node tests/bench/linalg.bench.mjs [quick]).
import { cpus, loadavg } from "node:os";
import { choleskyFactor, choleskyFactorSerial, choleskySolve } from "../../dist/src/linalg/cholesky.js";
import { luFactor, luFactorSerial, luSolve } from "../../dist/src/linalg/lu.js";
import { denseMultiply, denseMultiplySerial, gemmNT, denseKernelInUse } from "../../dist/src/linalg/dense.js";
import { WorkerPool, sharedFloat64 } from "../../dist/src/linalg/pool.js";

const quick = process.argv.includes("quick");
console.log(`linalg bench on ${cpus().length} x ${cpus()[0]?.model}, Node ${process.version}, load average ${loadavg().map((x) => x.toFixed(1)).join(" ")}`);
// The machine may be shared: "cpu" is the process's CPU time (all threads) for the best run,
// so cpu ≈ wall on one thread and ≈ 2·wall on two workers when the cores were really ours.
// "per cpu-s" divides the flops by that CPU time: a figure less disturbed by other load, and
// for two workers the CPU the parallel run spends beyond the serial one (its overhead).

// Kac–Murdock–Szegő matrix ρ^|i−j| (SPD for |ρ| < 1; Kac, Murdock & Szegő, J. Rat. Mech.
// Anal. 2, 1953), plus a small shift: cheap to build, known to be positive definite.
function kms(n, rho) {
  const A = sharedFloat64(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) A[i * n + j] = rho ** Math.abs(i - j) + (i === j ? 0.1 : 0);
  return A;
}
function general(n) {
  const A = sharedFloat64(n * n);
  let s = 12345;
  for (let i = 0; i < n * n; i++) { s = (Math.imul(s, 1664525) + 1013904223) >>> 0; A[i] = s / 4294967296 - 0.5; }
  for (let i = 0; i < n; i++) A[i * n + ((i * 7 + 3) % n)] += 4;
  return A;
}
// ‖b − A·x‖∞/‖b‖∞ for b = A·1, to show the factor is right as well as fast.
function residual(A0, n, solveInPlace) {
  const one = new Float64Array(n).fill(1), b = new Float64Array(n);
  denseMultiplySerial(A0, n, one, 1, b);
  const x = b.slice();
  solveInPlace(x);
  const r = new Float64Array(n);
  denseMultiplySerial(A0, n, x, 1, r);
  let e = 0, m = 0;
  for (let i = 0; i < n; i++) { e = Math.max(e, Math.abs(r[i] - b[i])); m = Math.max(m, Math.abs(b[i])); }
  return e / m;
}
let lastCpu = 0;
async function time(fn) {
  const c = process.cpuUsage(), t = performance.now();
  await fn();
  const wall = (performance.now() - t) / 1e3, u = process.cpuUsage(c);
  lastCpu = (u.user + u.system) / 1e6;
  return wall;
}
// Best of the runs, with the CPU time of that run.
async function best(reps, fn) {
  let w = Infinity, cpu = 0;
  for (let r = 0; r < reps; r++) { const t = await fn(); if (t < w) { w = t; cpu = lastCpu; } }
  return { w, cpu };
}

const pool = new WorkerPool(2);
const kernels = denseKernelInUse("auto") === "wasm" ? ["js", "wasm"] : ["js"];
if (kernels.length === 1) console.log("WebAssembly SIMD is not available here: JavaScript kernel only");
const rate = {}, cpuRate = {};
const ratio = (key) => (rate[`${key} wasm`] && rate[`${key} js`] ? ` (wasm/js ${(rate[`${key} wasm`] / rate[`${key} js`]).toFixed(2)}x)` : "");

// The kernel alone: C ← C − A·Bᵀ, m = p = 2000, kc = 96 (one Cholesky block step's shape).
{
  const m = quick ? 1000 : 2000, p = m, kc = 96;
  const G = general(m), A = G.slice(0, m * kc), B = G.slice(m * kc, (m + p) * kc), C = new Float64Array(m * p);
  for (const k of kernels) {
    for (let r = 0; r < 2; r++) gemmNT(C, 0, p, A, 0, kc, B, 0, kc, m, p, kc, p, -1, k);
    const { w, cpu } = await best(4, () => time(() => gemmNT(C, 0, p, A, 0, kc, B, 0, kc, m, p, kc, p, -1, k)));
    rate[`kernel ${k}`] = (2 * m * p * kc) / w / 1e9;
    console.log(`kernel   ${m}x${p}x${kc} ${k.padEnd(4)} 1 thread : ${rate[`kernel ${k}`].toFixed(2)} GFLOP/s (${(w * 1e3).toFixed(0)} ms wall, ${(cpu * 1e3).toFixed(0)} ms cpu)${ratio("kernel")}`);
  }
}

const sizes = quick ? [1000] : [1000, 2000, 4000];
for (const n of sizes) {
  const A0 = kms(n, 0.9);
  const reps = n >= 4000 ? 1 : 2;
  for (const k of kernels)
    for (const [label, run] of [["1 thread ", (A) => choleskyFactorSerial(A, n, undefined, k)], ["2 workers", (A) => choleskyFactor(A, n, { pool, kernel: k })]]) {
      let L;
      const { w, cpu } = await best(reps, () => { L = sharedFloat64(n * n); L.set(A0); return time(() => run(L)); });
      const res = residual(A0, n, (x) => choleskySolve(L, n, x, 1));
      const key = `cholesky ${n} ${label}`;
      rate[`${key} ${k}`] = n ** 3 / 3 / w / 1e9;
      cpuRate[`${key} ${k}`] = n ** 3 / 3 / cpu / 1e9;
      console.log(`cholesky n=${n} ${k.padEnd(4)} ${label}: ${rate[`${key} ${k}`].toFixed(2)} GFLOP/s, ${cpuRate[`${key} ${k}`].toFixed(2)} per cpu-s (${w.toFixed(2)} s wall, ${cpu.toFixed(2)} s cpu, residual ${res.toExponential(1)})${ratio(key)}`);
    }
}

for (const n of sizes) {
  const A0 = general(n);
  const reps = n >= 4000 ? 1 : 2;
  for (const k of kernels)
    for (const [label, run] of [["1 thread ", (A) => luFactorSerial(A, n, undefined, k)], ["2 workers", (A) => luFactor(A, n, { pool, kernel: k })]]) {
      let LU, piv;
      const { w, cpu } = await best(reps, () => { LU = sharedFloat64(n * n); LU.set(A0); return time(async () => { piv = await run(LU); }); });
      const res = residual(A0, n, (x) => luSolve(LU, piv, n, x, 1));
      const key = `lu ${n} ${label}`;
      rate[`${key} ${k}`] = (2 * n ** 3) / 3 / w / 1e9;
      cpuRate[`${key} ${k}`] = (2 * n ** 3) / 3 / cpu / 1e9;
      console.log(`lu       n=${n} ${k.padEnd(4)} ${label}: ${rate[`${key} ${k}`].toFixed(2)} GFLOP/s, ${cpuRate[`${key} ${k}`].toFixed(2)} per cpu-s (${w.toFixed(2)} s wall, ${cpu.toFixed(2)} s cpu, residual ${res.toExponential(1)})${ratio(key)}`);
    }
}
for (const f of ["cholesky", "lu"])
  for (const k of kernels)
    for (const n of sizes) {
      const one = rate[`${f} ${n} 1 thread  ${k}`], two = rate[`${f} ${n} 2 workers ${k}`];
      const cpuOne = cpuRate[`${f} ${n} 1 thread  ${k}`], cpuTwo = cpuRate[`${f} ${n} 2 workers ${k}`];
      if (one && two) console.log(`speed-up on 2 workers, ${f} n=${n} ${k}: ${(two / one).toFixed(2)}x wall; parallel CPU overhead ${(100 * (cpuOne / cpuTwo - 1)).toFixed(0)}%`);
    }

{
  const n = quick ? 2000 : 5000, A = general(n);
  for (const k of [1, 8]) {
    const X = sharedFloat64(n * k).fill(1), Y = sharedFloat64(n * k);
    for (const [label, run] of [["1 thread ", () => denseMultiplySerial(A, n, X, k, Y)], ["2 workers", () => denseMultiply(A, n, X, k, Y, pool)]]) {
      // Warm-up: each worker is its own V8 isolate and optimises the kernel separately.
      for (let r = 0; r < 4; r++) await run();
      const { w, cpu } = await best(5, () => time(run));
      console.log(`multiply n=${n} k=${k} ${label}: ${(8 * n * n / w / 1e9).toFixed(2)} GB/s of A, ${(2 * n * n * k / w / 1e9).toFixed(2)} GFLOP/s (${(w * 1e3).toFixed(1)} ms wall, ${(cpu * 1e3).toFixed(1)} ms cpu)`);
    }
  }
}
console.log(`load average at the end ${loadavg().map((x) => x.toFixed(1)).join(" ")}`);
await pool.close();
