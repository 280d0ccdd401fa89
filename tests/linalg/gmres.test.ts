import { describe, it, expect } from "vitest";
import { Matrix, solve } from "ml-matrix";
import { gmres } from "../../src/linalg/gmres.js";
import { blockJacobi, identityPreconditioner } from "../../src/linalg/block-jacobi.js";
import { denseMultiplySerial } from "../../src/linalg/dense.js";
import { clusterPoints, leafIndexSets } from "../../src/linalg/cluster.js";
import { clusteredPoints, inverseMultiquadricMatrix } from "./kernel-matrix.js";
import { randomBlock, randomGeneral, relDiff, rows } from "./random.js";

function column(X: Float64Array, n: number, k: number, c: number): Float64Array {
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = X[i * k + c];
  return out;
}

describe("restarted right-preconditioned GMRES", () => {
  // Non-symmetric and clustered, like a collocation matrix: kernel times column weights.
  const n = 300, pts = clusteredPoints(n, 6, 0.05, 2), A = inverseMultiquadricMatrix(pts, 0.01);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) A[i * n + j] *= 0.5 + ((j * 37) % 11) / 10;
  const apply = (X: Float64Array, Y: Float64Array, k: number) => denseMultiplySerial(A, n, X, k, Y);
  const M = blockJacobi(A, n, leafIndexSets(clusterPoints(pts, 25)), { lu: true });

  it("solves a random non-symmetric system like ml-matrix solve", async () => {
    const m = 120, G = randomGeneral(m, 3);
    for (let i = 0; i < m; i++) G[i * m + i] += 6;
    const B = randomBlock(m, 2, 4);
    // Reference: ml-matrix solve (LU), a general-purpose library from the registry.
    const ref = Float64Array.from(solve(new Matrix(rows(G, m)), new Matrix(rows(B, m, 2))).to1DArray());
    const r = await gmres((X, Y, k) => denseMultiplySerial(G, m, X, k, Y), identityPreconditioner, B, 2, { tol: 1e-12, maxIter: 1000, restart: 20 });
    expect(r.converged).toBe(true);
    expect(relDiff(r.X, ref)).toBeLessThan(1e-9);
  });

  it("block-Jacobi cuts the iterations on the clustered non-symmetric matrix", async () => {
    const B = randomBlock(n, 1, 5);
    const history: number[] = [];
    const plain = await gmres(apply, identityPreconditioner, B, 1, { tol: 1e-8, maxIter: 5000, monitor: (it, r) => { history[it - 1] = r[0]; } });
    // GMRES minimises the residual over a growing space: non-increasing within a cycle.
    expect(history.length).toBe(plain.iterations);
    for (let i = 1; i < Math.min(30, history.length); i++) expect(history[i]).toBeLessThanOrEqual(history[i - 1] * (1 + 1e-12));
    expect(history[history.length - 1]).toBeLessThan(1e-8);
    const pre = await gmres(apply, M, B, 1, { tol: 1e-8, maxIter: 5000 });
    expect(plain.converged && pre.converged).toBe(true);
    expect(pre.residuals[0]).toBeLessThan(1e-8);
    expect(pre.iterations).toBeLessThan(plain.iterations / 2);
  });

  it("k right-hand sides at once equal k separate solves; zero column and x0 handled", async () => {
    const k = 3, B = randomBlock(n, k, 6);
    for (let i = 0; i < n; i++) B[i * k + 2] = 0;
    const all = await gmres(apply, M, B, k, { tol: 1e-10, maxIter: 2000, restart: 10 });
    expect(all.converged).toBe(true);
    for (let c = 0; c < 2; c++) {
      const one = await gmres(apply, M, column(B, n, k, c), 1, { tol: 1e-10, maxIter: 2000, restart: 10 });
      expect(relDiff(column(all.X, n, k, c), one.X)).toBeLessThan(1e-9);
    }
    expect(column(all.X, n, k, 2).every((v) => v === 0)).toBe(true);
    const again = await gmres(apply, M, B, k, { tol: 1e-9, maxIter: 10, x0: all.X });
    expect(again.iterations).toBe(0);
  });

  it("says so when it runs out of iterations", async () => {
    const r = await gmres(apply, identityPreconditioner, randomBlock(n, 1, 7), 1, { tol: 1e-12, maxIter: 4, restart: 3 });
    expect(r.converged).toBe(false);
    expect(r.iterations).toBe(4);
  });
});
