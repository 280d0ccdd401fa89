import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { solveLower, solveLowerTransposed, solveUpper, solveRowsLowerTransposedRight, solveUnitLowerLeft } from "../../src/linalg/triangular.js";
import { randomBlock, relDiff } from "./random.js";

/** A random triangle with a strong diagonal (so errors stay near rounding), stride ld. */
function triangle(n: number, ld: number, lower: boolean, seed: number): Float64Array {
  const T = randomBlock(n, ld, seed);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) if (lower ? j > i : j < i) T[i * ld + j] = 0;
    T[i * ld + i] = 2 + Math.abs(T[i * ld + i]);
  }
  return T;
}
/** B = op(T)·X by the definition, T n×n at stride ld, X n×k. */
function times(T: Float64Array, ld: number, n: number, X: Float64Array, k: number, transpose: boolean, unit: boolean): Float64Array {
  const B = new Float64Array(n * k);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let t = transpose ? T[j * ld + i] : T[i * ld + j];
      if (i === j && unit) t = 1;
      for (let c = 0; c < k; c++) B[i * k + c] += t * X[j * k + c];
    }
  return B;
}

describe("triangular solves", () => {
  it("solveLower, solveLowerTransposed and solveUpper invert their triangle for k columns", () => {
    fc.assert(fc.property(fc.integer({ min: 1, max: 30 }), fc.integer({ min: 1, max: 5 }), fc.integer({ min: 0, max: 3 }), fc.integer(), (n, k, pad, seed) => {
      const ld = n + pad, X = randomBlock(n, k, seed + 1);
      const L = triangle(n, ld, true, seed), U = triangle(n, ld, false, seed + 2);
      const cases: Array<[Float64Array, (B: Float64Array) => void]> = [
        [times(L, ld, n, X, k, false, false), (B) => solveLower(L, 0, ld, n, B, k, false)],
        [times(L, ld, n, X, k, false, true), (B) => solveLower(L, 0, ld, n, B, k, true)],
        [times(L, ld, n, X, k, true, false), (B) => solveLowerTransposed(L, 0, ld, n, B, k)],
        [times(U, ld, n, X, k, false, false), (B) => solveUpper(U, 0, ld, n, B, k)],
      ];
      return cases.every(([B, solve]) => { solve(B); return relDiff(B, X) < 1e-12; });
    }), { numRuns: 100 });
  });

  it("panel solves: X·Lᵀ = A by rows and L⁻¹·A by columns", () => {
    for (const [nb, rows] of [[1, 3], [5, 9], [12, 4], [16, 33]]) {
      const L = triangle(nb, nb, true, nb), X = randomBlock(rows, nb, rows);
      // A = X·Lᵀ: row r of A is L·(row r of X).
      const A = new Float64Array(rows * nb);
      for (let r = 0; r < rows; r++) for (let c = 0; c < nb; c++) { let s = 0; for (let q = 0; q <= c; q++) s += L[c * nb + q] * X[r * nb + q]; A[r * nb + c] = s; }
      solveRowsLowerTransposedRight(L, 0, nb, nb, A, 0, nb, rows);
      expect(relDiff(A, X)).toBeLessThan(1e-12);
      // Unit lower: B = L₁·Y, then L₁⁻¹·B = Y for an nb×rows block.
      const Y = randomBlock(nb, rows, nb + 1), B = times(L, nb, nb, Y, rows, false, true);
      solveUnitLowerLeft(L, 0, nb, nb, B, 0, rows, rows);
      expect(relDiff(B, Y)).toBeLessThan(1e-12);
    }
  });
});
