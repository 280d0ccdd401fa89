import { describe, it, expect, afterAll } from "vitest";
import { WorkerPool } from "../../src/linalg/pool.js";
import { blockPcg, orthonormalBasis } from "../../src/linalg/block-cg.js";
import { pcg } from "../../src/linalg/cg.js";
import { blockJacobi, identityPreconditioner } from "../../src/linalg/block-jacobi.js";
import { denseMultiplySerial } from "../../src/linalg/dense.js";
import { choleskyFactorSerial, choleskySolve } from "../../src/linalg/cholesky.js";
import { clusterPoints, leafIndexSets } from "../../src/linalg/cluster.js";
import { clusteredPoints, inverseMultiquadricMatrix } from "./kernel-matrix.js";
import { randomBlock, relDiff } from "./random.js";

function column(X: Float64Array, n: number, k: number, c: number): Float64Array {
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = X[i * k + c];
  return out;
}

/** ‖b_c − A·x_c‖/‖b_c‖ for every column, from a fresh product (0 for a zero column). */
function trueResiduals(A: Float64Array, n: number, X: Float64Array, B: Float64Array, k: number): number[] {
  const Y = new Float64Array(n * k);
  denseMultiplySerial(A, n, X, k, Y);
  return Array.from({ length: k }, (_, c) => {
    let r = 0, b = 0;
    for (let i = 0; i < n; i++) { const d = B[i * k + c] - Y[i * k + c]; r += d * d; b += B[i * k + c] ** 2; }
    return b > 0 ? Math.sqrt(r / b) : Math.sqrt(r);
  });
}

describe("block preconditioned conjugate gradients", () => {
  const n = 400, pts = clusteredPoints(n, 8, 0.05, 1), A = inverseMultiquadricMatrix(pts, 0.01);
  const apply = (X: Float64Array, Y: Float64Array, k: number) => denseMultiplySerial(A, n, X, k, Y);
  const M = blockJacobi(A, n, leafIndexSets(clusterPoints(pts, 32)));
  const L = A.slice();
  choleskyFactorSerial(L, n);
  const direct = (B: Float64Array, k: number): Float64Array => { const X = B.slice(); choleskySolve(L, n, X, k); return X; };

  for (const k of [1, 3, 16]) {
    it(`k = ${k}: the Cholesky solution to the tolerance, in no more iterations than pcg`, async () => {
      const B = randomBlock(n, k, 10 + k), tol = 1e-9;
      const ref = direct(B, k);
      for (const pc of [identityPreconditioner, M]) {
        const blk = await blockPcg(apply, pc, B, k, { tol, maxIter: 3000 });
        const one = await pcg(apply, pc, B, k, { tol, maxIter: 3000 });
        expect(blk.converged).toBe(true);
        // At k = 1 the two are one method in exact arithmetic; over the 256 unpreconditioned
        // steps of this matrix rounding moves the count by one (measured: 257 against 256).
        expect(blk.iterations).toBeLessThanOrEqual(k === 1 ? Math.ceil(1.01 * one.iterations) : one.iterations);
        if (k >= 3) expect(blk.iterations).toBeLessThan(one.iterations);
        const tr = trueResiduals(A, n, blk.X, B, k);
        for (let c = 0; c < k; c++) {
          expect(blk.residuals[c]).toBeLessThanOrEqual(tol);
          expect(tr[c]).toBeLessThanOrEqual(tol);
          // Reported residual is the fresh one (to rounding of the product).
          expect(Math.abs(tr[c] - blk.residuals[c])).toBeLessThan(1e-3 * tol);
          // Forward error ≤ κ·(relative residual); κ of this matrix is below 1e4 (cg.test.ts).
          expect(relDiff(column(blk.X, n, k, c), column(ref, n, k, c))).toBeLessThan(1e-4);
          expect(relDiff(column(blk.X, n, k, c), column(one.X, n, k, c))).toBeLessThan(1e-4);
        }
        // `residual` is B − A·X of the returned X.
        const Y = new Float64Array(n * k);
        denseMultiplySerial(A, n, blk.X, k, Y);
        let worst = 0;
        for (let i = 0; i < n * k; i++) worst = Math.max(worst, Math.abs(B[i] - Y[i] - blk.residual![i]));
        expect(worst).toBeLessThan(1e-12);
      }
    });
  }

  it("duplicate, linearly dependent and zero right-hand sides neither break it nor cost iterations", async () => {
    const k = 6, base = randomBlock(n, 2, 21), B = new Float64Array(n * k);
    for (let i = 0; i < n; i++) {
      const a = base[2 * i], b = base[2 * i + 1];
      B[i * k] = a; B[i * k + 1] = b;
      B[i * k + 2] = a;               // duplicate of column 0
      B[i * k + 3] = 2 * a - 3 * b;   // dependent on 0 and 1
      B[i * k + 4] = 0;               // zero column
      B[i * k + 5] = 1e-8 * b;        // tiny but a multiple of 1
    }
    const tol = 1e-9, ref = direct(B, k);
    const blk = await blockPcg(apply, M, B, k, { tol, maxIter: 3000 });
    const two = await blockPcg(apply, M, base, 2, { tol, maxIter: 3000 });
    const one = await pcg(apply, M, B, k, { tol, maxIter: 3000 });
    expect(blk.converged).toBe(true);
    expect(blk.iterations).toBeLessThanOrEqual(one.iterations);
    // The dependent columns add nothing to the Krylov space: the same count as the two independent ones.
    expect(blk.iterations).toBeLessThanOrEqual(two.iterations + 1);
    const tr = trueResiduals(A, n, blk.X, B, k);
    for (let c = 0; c < k; c++) expect(tr[c]).toBeLessThanOrEqual(tol);
    expect(Array.from(column(blk.X, n, k, 4)).every((v) => v === 0)).toBe(true);
    expect(blk.residuals[4]).toBe(0);
    for (const c of [0, 1, 2, 3, 5]) expect(relDiff(column(blk.X, n, k, c), column(ref, n, k, c))).toBeLessThan(1e-4);
  });

  it("starts from a guess, keeps converged columns with compact: false, and reports the monitor", async () => {
    const k = 3, B = randomBlock(n, k, 31), tol = 1e-8;
    const first = await blockPcg(apply, M, B, k, { tol, maxIter: 3000 });
    const again = await blockPcg(apply, M, B, k, { tol, maxIter: 3000, x0: first.X });
    expect(again.iterations).toBe(0);
    expect(again.converged).toBe(true);
    // Column 0 starts at the answer, the others from zero.
    const x0 = new Float64Array(n * k);
    for (let i = 0; i < n; i++) x0[i * k] = first.X[i * k];
    let seen = 0;
    for (const compact of [true, false]) {
      const r = await blockPcg(apply, M, B, k, { tol, maxIter: 3000, x0, compact, monitor: (it, res) => { seen = it; expect(res.length).toBe(k); } });
      expect(r.converged).toBe(true);
      expect(seen).toBe(r.iterations);
      for (const v of trueResiduals(A, n, r.X, B, k)) expect(v).toBeLessThanOrEqual(tol);
    }
  });

  it("stops without converging when the iterations run out, with the true residual", async () => {
    const k = 4, B = randomBlock(n, k, 41);
    const r = await blockPcg(apply, identityPreconditioner, B, k, { tol: 1e-12, maxIter: 3 });
    expect(r.iterations).toBe(3);
    expect(r.converged).toBe(false);
    const tr = trueResiduals(A, n, r.X, B, k);
    for (let c = 0; c < k; c++) expect(Math.abs(tr[c] - r.residuals[c])).toBeLessThan(1e-10);
  });

  it("orthonormalBasis drops dependent and zero columns and spans the rest", async () => {
    const m = 50, w = 5, W = new Float64Array(m * w), P = new Float64Array(m * w);
    const g = randomBlock(m, 2, 51);
    for (let i = 0; i < m; i++) {
      const a = g[2 * i], b = g[2 * i + 1];
      W[i * w] = a; W[i * w + 1] = 0; W[i * w + 2] = 1e-20 * b; W[i * w + 3] = a + b; W[i * w + 4] = -4 * a;
    }
    const s = await orthonormalBasis(W, m, w, P);
    expect(s).toBe(2);
    for (let x = 0; x < s; x++)
      for (let y = 0; y < s; y++) {
        let d = 0;
        for (let i = 0; i < m; i++) d += P[i * s + x] * P[i * s + y];
        expect(Math.abs(d - (x === y ? 1 : 0))).toBeLessThan(1e-12);
      }
    // Both generators lie in span(P): their residual after projection is at rounding level.
    for (let c = 0; c < 2; c++) {
      const v = column(g, m, 2, c), coef = new Float64Array(s);
      for (let x = 0; x < s; x++) for (let i = 0; i < m; i++) coef[x] += P[i * s + x] * v[i];
      let r = 0, nv = 0;
      for (let i = 0; i < m; i++) { let p = 0; for (let x = 0; x < s; x++) p += P[i * s + x] * coef[x]; r += (v[i] - p) ** 2; nv += v[i] ** 2; }
      expect(Math.sqrt(r / nv)).toBeLessThan(1e-12);
    }
  });

  it("rejects a k that does not divide the right-hand sides", async () => {
    await expect(blockPcg(apply, M, new Float64Array(10), 3, { tol: 1e-6, maxIter: 10 })).rejects.toThrow(/not a multiple of k=3/);
  });
});

describe("block PCG with the products split over workers", () => {
  const pool = new WorkerPool(2);
  afterAll(() => pool.close());
  const n = 300, pts = clusteredPoints(n, 6, 0.05, 2), A = inverseMultiquadricMatrix(pts, 0.01);
  const apply = (X: Float64Array, Y: Float64Array, k: number) => denseMultiplySerial(A, n, X, k, Y);
  const M = blockJacobi(A, n, leafIndexSets(clusterPoints(pts, 32)));

  it("gives the serial iterates to rounding (every product split: parallelMinWork 0)", async () => {
    const k = 5, B = randomBlock(n, k, 61), tol = 1e-9;
    const serial = await blockPcg(apply, M, B, k, { tol, maxIter: 500 });
    const split = await blockPcg(apply, M, B, k, { tol, maxIter: 500, pool, parallelMinWork: 0 });
    expect(split.converged).toBe(true);
    // Different summation order: the recursive residual crosses tol a step or two apart
    // (measured 35 against 37), the iterates agree far below tol.
    expect(Math.abs(split.iterations - serial.iterations)).toBeLessThanOrEqual(Math.ceil(0.1 * serial.iterations));
    expect(relDiff(split.X, serial.X)).toBeLessThan(1e-6);
    for (const v of trueResiduals(A, n, split.X, B, k)) expect(v).toBeLessThanOrEqual(tol);
  });
});
