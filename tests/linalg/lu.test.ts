import { describe, it, expect, afterAll } from "vitest";
import { Matrix, LuDecomposition } from "ml-matrix";
import { luFactor, luFactorSerial, luSolve, SingularMatrixError } from "../../src/linalg/lu.js";
import { WorkerPool } from "../../src/linalg/pool.js";
import { randomGeneral, randomBlock, relDiff, rows } from "./random.js";

// Reference: ml-matrix LuDecomposition (general-purpose library from the registry).
function reference(A: Float64Array, n: number, B: Float64Array, k: number): Float64Array {
  return Float64Array.from(new LuDecomposition(new Matrix(rows(A, n))).solve(new Matrix(rows(B, n, k))).to1DArray());
}

describe("LU with partial pivoting", () => {
  const pool = new WorkerPool(2);
  afterAll(() => pool.close());

  for (const kernel of ["js", "wasm"] as const)
  for (const [n, nb, k] of [[1, 8, 1], [2, 8, 1], [9, 4, 2], [50, 16, 3], [131, 32, 2], [300, 64, 4], [40, 128, 1], [257, 96, 2]]) {
    it(`solves like ml-matrix, n=${n}, block ${nb}, ${k} rhs, ${kernel} kernel`, () => {
      const A = randomGeneral(n, 17 * n + nb), B = randomBlock(n, k, n);
      const ref = reference(A, n, B, k);
      const LU = A.slice();
      const piv = luFactorSerial(LU, n, nb, kernel);
      const X = B.slice();
      luSolve(LU, piv, n, X, k);
      expect(relDiff(X, ref)).toBeLessThan(1e-10);
    });
  }

  it("pivots: a zero leading entry needs a row exchange", () => {
    const A = new Float64Array([0, 1, 2, 3]), piv = luFactorSerial(A, 2);
    expect(piv[0]).toBe(1);
    const x = new Float64Array([5, 13]);
    luSolve(A, piv, 2, x, 1);
    // [0 1; 2 3]·x = [5, 13] by hand: x1 = 5, 2·x0 + 15 = 13.
    expect(x[0]).toBeCloseTo(-1, 14);
    expect(x[1]).toBeCloseTo(5, 14);
  });

  for (const kernel of ["js", "wasm"] as const) it(`parallel factor on two workers equals the serial one, ${kernel} kernel`, async () => {
    for (const [n, nb] of [[300, 32], [203, 24], [400, 96]]) {
      const A = randomGeneral(n, n), S = A.slice();
      const p1 = luFactorSerial(S, n, nb, kernel);
      const P = A.slice();
      const p2 = await luFactor(P, n, { pool, blockSize: nb, kernel });
      expect(Array.from(p2)).toEqual(Array.from(p1));
      // Same kernel, same row-independent arithmetic: bit for bit.
      expect(relDiff(P, S)).toBe(0);
    }
  });

  it("reports the column of a singular matrix, serial and parallel", async () => {
    // A zero column stays exactly zero through the elimination, so its pivot is exactly 0.
    const n = 60, Z = randomGeneral(n, 5);
    for (let i = 0; i < n; i++) Z[i * n + 20] = 0;
    let caught: unknown;
    try { luFactorSerial(Z.slice(), n, 8); } catch (e) { caught = e; }
    expect(caught).toBeInstanceOf(SingularMatrixError);
    expect((caught as SingularMatrixError).column).toBe(20);
    const copy = Z.slice();
    await expect(luFactor(copy, n, { pool, blockSize: 8 })).rejects.toThrow(/column 20/);
    // The input that was not in shared memory is left as it was.
    expect(relDiff(copy, Z)).toBe(0);
  });
});
