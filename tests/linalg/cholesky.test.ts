import { describe, it, expect, afterAll } from "vitest";
import { Matrix, CholeskyDecomposition } from "ml-matrix";
import { choleskyFactor, choleskyFactorSerial, choleskySolve, NotPositiveDefiniteError } from "../../src/linalg/cholesky.js";
import { WorkerPool, sharedFloat64 } from "../../src/linalg/pool.js";
import { randomSpd, randomBlock, relDiff, rows } from "./random.js";

// Reference: ml-matrix CholeskyDecomposition (general-purpose library from the registry).
function reference(A: Float64Array, n: number, B: Float64Array, k: number): Float64Array {
  const X = new CholeskyDecomposition(new Matrix(rows(A, n))).solve(new Matrix(rows(B, n, k)));
  return Float64Array.from(X.to1DArray());
}

describe("Cholesky", () => {
  const pool = new WorkerPool(2);
  afterAll(() => pool.close());

  for (const kernel of ["js", "wasm"] as const)
  for (const [n, nb, k] of [[1, 8, 1], [3, 8, 2], [7, 16, 1], [50, 16, 3], [97, 32, 4], [130, 64, 1], [300, 64, 5], [200, 200, 2], [64, 128, 3], [263, 100, 2]]) {
    it(`solves like ml-matrix, n=${n}, block ${nb}, ${k} rhs, ${kernel} kernel`, () => {
      const A = randomSpd(n, n * 31 + nb), B = randomBlock(n, k, n + 5);
      const ref = reference(A, n, B, k);
      const L = A.slice();
      choleskyFactorSerial(L, n, nb, kernel);
      const X = B.slice();
      choleskySolve(L, n, X, k);
      expect(relDiff(X, ref)).toBeLessThan(1e-11);
    });
  }

  for (const kernel of ["js", "wasm"] as const) it(`factor matches L·Lᵀ = A and leaves the upper triangle alone, ${kernel} kernel`, () => {
    const n = 145, A = randomSpd(n, 9), L = A.slice();
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) L[i * n + j] = 12345;
    choleskyFactorSerial(L, n, 40, kernel);
    let err = 0;
    for (let i = 0; i < n; i++)
      for (let j = 0; j <= i; j++) {
        let s = 0;
        for (let q = 0; q <= j; q++) s += L[i * n + q] * L[j * n + q];
        err = Math.max(err, Math.abs(s - A[i * n + j]));
        if (j < i) expect(L[j * n + i]).toBe(12345);
      }
    expect(err).toBeLessThan(1e-13);
  });

  for (const kernel of ["js", "wasm"] as const) it(`parallel factor on two workers equals the serial one, ${kernel} kernel`, async () => {
    for (const [n, nb] of [[300, 32], [261, 24], [97, 16], [400, 96]]) {
      const A = randomSpd(n, n), S = sharedFloat64(n * n);
      S.set(A);
      const L = A.slice();
      choleskyFactorSerial(L, n, nb, kernel);
      await choleskyFactor(S, n, { pool, blockSize: nb, kernel });
      // Same kernel, same row-independent arithmetic: bit for bit.
      expect(relDiff(S, L)).toBe(0);
      // Not shared: copied there and back.
      const U = A.slice();
      await choleskyFactor(U, n, { pool, blockSize: nb, kernel });
      expect(relDiff(U, L)).toBe(0);
    }
  });

  it("the two kernels give the same factor to rounding", () => {
    const n = 333, A = randomSpd(n, 77), L1 = A.slice(), L2 = A.slice();
    choleskyFactorSerial(L1, n, 64, "js");
    choleskyFactorSerial(L2, n, 64, "wasm");
    expect(relDiff(L2, L1)).toBeLessThan(1e-13);
  });

  it("names the failing pivot of a matrix that is not positive definite", async () => {
    const n = 120, A = randomSpd(n, 3);
    // Leading minors stay positive up to order 70; the 71st is negative.
    A[70 * n + 70] = -0.5;
    for (const run of [() => choleskyFactorSerial(A.slice(), n, 16), () => choleskyFactor(A.slice(), n, { pool, blockSize: 16 })]) {
      let caught: unknown;
      try { await run(); } catch (e) { caught = e; }
      expect(caught).toBeInstanceOf(NotPositiveDefiniteError);
      expect((caught as NotPositiveDefiniteError).pivot).toBe(70);
    }
    const neg = new Float64Array([4, 0, 0, -1]);
    expect(() => choleskyFactorSerial(neg, 2)).toThrow(/pivot 1/);
  });
});
