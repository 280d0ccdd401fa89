import { describe, it, expect, afterAll } from "vitest";
import { pcg } from "../../src/linalg/cg.js";
import { blockJacobi, identityPreconditioner } from "../../src/linalg/block-jacobi.js";
import { denseMultiply, denseMultiplySerial } from "../../src/linalg/dense.js";
import { choleskyFactorSerial, choleskySolve } from "../../src/linalg/cholesky.js";
import { clusterPoints, leafIndexSets } from "../../src/linalg/cluster.js";
import { WorkerPool } from "../../src/linalg/pool.js";
import { clusteredPoints, inverseMultiquadricMatrix } from "./kernel-matrix.js";
import { randomBlock, randomSpd, relDiff } from "./random.js";

function column(X: Float64Array, n: number, k: number, c: number): Float64Array {
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = X[i * k + c];
  return out;
}

describe("preconditioned conjugate gradients", () => {
  const pool = new WorkerPool(2);
  afterAll(() => pool.close());
  const n = 400, pts = clusteredPoints(n, 8, 0.05, 1), A = inverseMultiquadricMatrix(pts, 0.01);
  const apply = (X: Float64Array, Y: Float64Array, k: number) => denseMultiplySerial(A, n, X, k, Y);
  const blocks = leafIndexSets(clusterPoints(pts, 32));

  it("converges to the Cholesky solution, with and without block-Jacobi", async () => {
    const k = 3, B = randomBlock(n, k, 3);
    const L = A.slice();
    choleskyFactorSerial(L, n);
    const direct = B.slice();
    choleskySolve(L, n, direct, k);
    for (const M of [identityPreconditioner, blockJacobi(A, n, blocks)]) {
      const r = await pcg(apply, M, B, k, { tol: 1e-10, maxIter: 3000 });
      expect(r.converged).toBe(true);
      for (let c = 0; c < k; c++) expect(r.residuals[c]).toBeLessThan(1e-10);
      // Forward error ≤ κ·(relative residual); κ of this matrix is below 1e4.
      expect(relDiff(r.X, direct)).toBeLessThan(1e-5);
    }
  });

  it("block-Jacobi over the cluster leaves cuts the iterations on a clustered kernel matrix", async () => {
    const B = randomBlock(n, 1, 4);
    let seen = 0, last = 1;
    const plain = await pcg(apply, identityPreconditioner, B, 1, { tol: 1e-8, maxIter: 3000, monitor: (it, r) => { seen = it; last = r[0]; } });
    expect(seen).toBe(plain.iterations);
    expect(last).toBeLessThan(1e-8);
    const pre = await pcg(apply, blockJacobi(A, n, blocks), B, 1, { tol: 1e-8, maxIter: 3000 });
    expect(plain.converged && pre.converged).toBe(true);
    expect(pre.iterations).toBeLessThan(plain.iterations / 2);
  });

  it("k right-hand sides at once equal k separate solves", async () => {
    const k = 4, B = randomBlock(n, k, 5), M = blockJacobi(A, n, blocks);
    const all = await pcg(apply, M, B, k, { tol: 1e-9, maxIter: 3000 });
    for (let c = 0; c < k; c++) {
      const one = await pcg(apply, M, column(B, n, k, c), 1, { tol: 1e-9, maxIter: 3000 });
      // Same recurrence per column; only the product's summation order differs (k = 1 has
      // its own four-way unrolled dot product), so agreement is to rounding, well below tol.
      expect(one.iterations).toBeLessThanOrEqual(all.iterations);
      expect(relDiff(column(all.X, n, k, c), one.X)).toBeLessThan(1e-10);
    }
  });

  it("handles a zero right-hand side, a starting guess and an asynchronous parallel product", async () => {
    const m = 150, S = new Float64Array(new SharedArrayBuffer(8 * m * m));
    randomSpd(m, 6, S);
    const B = randomBlock(m, 2, 7);
    for (let i = 0; i < m; i++) B[i * 2 + 1] = 0;
    const par = (X: Float64Array, Y: Float64Array, k: number) => denseMultiply(S, m, X, k, Y, pool);
    const r = await pcg(par, identityPreconditioner, B, 2, { tol: 1e-12, maxIter: 500 });
    expect(r.converged).toBe(true);
    expect(Array.from(column(r.X, m, 2, 1)).every((v) => v === 0)).toBe(true);
    // Starting from the answer: no iteration needed.
    const again = await pcg(par, identityPreconditioner, B, 2, { tol: 1e-10, maxIter: 500, x0: r.X });
    expect(again.iterations).toBe(0);
    expect(again.converged).toBe(true);
  });

  it("drops converged columns from the products and agrees with the full-width iteration", async () => {
    // Column 0 starts at the answer, column 1 is a smooth right-hand side (few iterations),
    // column 2 a rough one (many): the operator sees widths 2 then 1.
    const k = 3, B = randomBlock(n, k, 9), M = blockJacobi(A, n, blocks);
    const L = A.slice();
    choleskyFactorSerial(L, n);
    const x0 = new Float64Array(n * k);
    for (let i = 0; i < n; i++) { B[i * k + 1] = 1; x0[i * k] = B[i * k]; }
    const one = column(B, n, k, 0);
    choleskySolve(L, n, one, 1);
    for (let i = 0; i < n; i++) x0[i * k] = one[i];
    const widths: number[] = [];
    const counted = (X: Float64Array, Y: Float64Array, kk: number) => { widths.push(kk); apply(X, Y, kk); };
    const compact = await pcg(counted, M, B, k, { tol: 1e-9, maxIter: 3000, x0 });
    const full = await pcg(apply, M, B, k, { tol: 1e-9, maxIter: 3000, x0, compact: false });
    expect(compact.converged && full.converged).toBe(true);
    // First product: the true residual of all 3; last: the final check of all 3; between, at most 2 and at the end 1.
    expect(widths[0]).toBe(3);
    expect(widths[widths.length - 1]).toBe(3);
    const inner = widths.slice(1, -1).filter((w) => w !== 3);
    expect(Math.max(...inner)).toBe(2);
    expect(inner).toContain(1);
    for (let a = 1; a < inner.length; a++) expect(inner[a]).toBeLessThanOrEqual(inner[a - 1]);
    expect(compact.iterations).toBe(full.iterations);
    // Same recurrences on the same numbers, only gathered: the same iterates to rounding.
    expect(relDiff(compact.X, full.X)).toBeLessThan(1e-12);
    // The returned residual block is B − A·X.
    const R = new Float64Array(n * k);
    apply(compact.X, R, k);
    for (let i = 0; i < n * k; i++) R[i] = B[i] - R[i];
    expect(relDiff(compact.residual!, R)).toBeLessThan(1e-12);
  });

  it("says so when it runs out of iterations", async () => {
    const r = await pcg(apply, identityPreconditioner, randomBlock(n, 1, 8), 1, { tol: 1e-12, maxIter: 5 });
    expect(r.converged).toBe(false);
    expect(r.iterations).toBe(5);
    expect(r.residuals[0]).toBeGreaterThan(1e-12);
  });
});
