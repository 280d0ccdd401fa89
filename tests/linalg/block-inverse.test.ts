import { describe, it, expect } from "vitest";
import { Matrix, inverse } from "ml-matrix";
import { choleskyInverseInPlace, luInverseInPlace, applyInverse, invertLower } from "../../src/linalg/block-inverse.js";
import { choleskyFactorSerial, choleskySolve } from "../../src/linalg/cholesky.js";
import { luFactorSerial, luSolve } from "../../src/linalg/lu.js";
import { randomSpd, randomGeneral, randomBlock, relDiff, rows } from "./random.js";

// Reference: ml-matrix `inverse` (general-purpose library from the registry, LU-based).
function referenceInverse(A: Float64Array, n: number): Float64Array {
  return Float64Array.from(inverse(new Matrix(rows(A, n))).to1DArray());
}

// Orders across the recursion's leaves (32) and the 64-row product blocks, odd and even.
const orders = [1, 2, 5, 31, 32, 33, 64, 65, 100, 130, 257];

describe("explicit block inverses", () => {
  for (const m of orders) {
    it(`Cholesky inverse equals ml-matrix's inverse and is exactly symmetric, m = ${m}`, () => {
      const A = randomSpd(m, 7 * m + 1), D = A.slice();
      choleskyFactorSerial(D, m);
      choleskyInverseInPlace(D, m);
      expect(relDiff(D, referenceInverse(A, m))).toBeLessThan(1e-12);
      for (let i = 0; i < m; i++) for (let j = 0; j < i; j++) expect(D[i * m + j]).toBe(D[j * m + i]);
    });

    it(`LU inverse equals ml-matrix's inverse, m = ${m}`, () => {
      const A = randomGeneral(m, 11 * m + 3), D = A.slice();
      const piv = luFactorSerial(D, m);
      luInverseInPlace(D, piv, m);
      expect(relDiff(D, referenceInverse(A, m))).toBeLessThan(1e-11);
    });
  }

  it("triangular inverse: L·X = I, entries above the diagonal left zero, inside a larger stride", () => {
    const n = 150, ld = 170, off = 3 * ld + 7;
    const X = new Float64Array(off + n * ld), L = new Float64Array(n * n);
    const A = randomSpd(n, 5);
    choleskyFactorSerial(A, n);
    for (let i = 0; i < n; i++) for (let j = 0; j <= i; j++) { L[i * n + j] = A[i * n + j]; X[off + i * ld + j] = A[i * n + j]; }
    // Garbage above the diagonal must not be read.
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) X[off + i * ld + j] = 1e300;
    invertLower(X, off, ld, n);
    let worst = 0;
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
      if (j > i) { expect(X[off + i * ld + j]).toBe(0); continue; }
      let s = 0;
      for (let t = j; t <= i; t++) s += L[i * n + t] * X[off + t * ld + j];
      worst = Math.max(worst, Math.abs(s - (i === j ? 1 : 0)));
    }
    expect(worst).toBeLessThan(1e-12);
  });

  for (const k of [1, 2, 3, 4, 5, 8, 36, 64]) {
    it(`D⁻¹·R equals the forward and back substitution to 1e-12, k = ${k} (SPD and LU, m = 256)`, () => {
      const m = 256, R = randomBlock(m, k, k + 17);
      const spd = randomSpd(m, k), L = spd.slice();
      choleskyFactorSerial(L, m);
      const ref = R.slice();
      choleskySolve(L, m, ref, k);
      choleskyInverseInPlace(L, m);
      // D⁻¹ sits at an offset inside a larger buffer, as in the shared factor store.
      const store = new Float64Array(m * m + 40);
      store.set(L, 40);
      const Z = new Float64Array(m * k);
      applyInverse(store, 40, m, R, Z, k);
      expect(relDiff(Z, ref)).toBeLessThan(1e-12);

      const G = randomGeneral(m, k + 1), piv = luFactorSerial(G, m);
      const refG = R.slice();
      luSolve(G, piv, m, refG, k);
      luInverseInPlace(G, piv, m);
      applyInverse(G, 0, m, R, Z, k);
      expect(relDiff(Z, refG)).toBeLessThan(1e-12);
    });
  }
});
