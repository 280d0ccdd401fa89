import { describe, it, expect, afterAll } from "vitest";
import fc from "fast-check";
import { Matrix } from "ml-matrix";
import { gemmNT, denseMultiply, denseMultiplySerial, rowSplits } from "../../src/linalg/dense.js";
import { WorkerPool, sharedFloat64 } from "../../src/linalg/pool.js";
import { randomBlock, relDiff, rows } from "./random.js";

describe("dense kernels", () => {
  const pool = new WorkerPool(2);
  afterAll(() => pool.close());

  for (const kernel of ["auto", "js", "wasm"] as const) it(`gemmNT (${kernel}) equals C + α·A·Bᵀ by the definition, full and lower-triangle forms`, () => {
    fc.assert(fc.property(fc.integer({ min: 1, max: 23 }), fc.integer({ min: 1, max: 23 }), fc.integer({ min: 1, max: 19 }), fc.integer({ min: -25, max: 25 }), fc.integer(), fc.constantFrom(-1, 1, 0.5),
      (m, p, kc, diag, seed, alpha) => {
        const lda = kc + 3, ldb = kc + 1, ldc = p + 2;
        const A = randomBlock(m, lda, seed), B = randomBlock(p, ldb, seed + 1), C = randomBlock(m, ldc, seed + 2);
        const out = C.slice();
        gemmNT(out, 0, ldc, A, 0, lda, B, 0, ldb, m, p, kc, diag, alpha, kernel);
        for (let i = 0; i < m; i++)
          for (let j = 0; j < ldc; j++) {
            let want = C[i * ldc + j];
            if (j < p && j <= i + diag) { let d = 0; for (let q = 0; q < kc; q++) d += A[i * lda + q] * B[j * ldb + q]; want += alpha * d; }
            if (Math.abs(out[i * ldc + j] - want) > 1e-13) return false;
          }
        return true;
      }), { numRuns: 200 });
  });

  for (const kernel of ["js", "wasm"] as const) it(`gemmNT (${kernel}) is right across its cache blocks (long k makes the column blocks narrow)`, () => {
    const m = 37, p = 70, kc = 3000, lda = kc, ldb = kc + 2, ldc = p;
    const A = randomBlock(m, lda, 1), B = randomBlock(p, ldb, 2), C = randomBlock(m, ldc, 3);
    for (const diag of [-40, -3, 0, 5, 30, 70]) {
      const out = C.slice();
      gemmNT(out, 0, ldc, A, 0, lda, B, 0, ldb, m, p, kc, diag, -1, kernel);
      let err = 0;
      for (let i = 0; i < m; i++)
        for (let j = 0; j < p; j++) {
          let want = C[i * ldc + j];
          if (j <= i + diag) for (let q = 0; q < kc; q++) want -= A[i * lda + q] * B[j * ldb + q];
          err = Math.max(err, Math.abs(out[i * ldc + j] - want));
        }
      expect(err).toBeLessThan(1e-10);
    }
  });

  it("rowSplits covers the range in order, aligned to 4, balanced for the triangle", () => {
    const s = rowSplits(100, 1100, 2, true);
    expect(s[0]).toBe(100);
    expect(s[2]).toBe(1100);
    expect((s[1] - 100) % 4).toBe(0);
    // Work below each boundary of a lower triangle: rows r cost (r − 100 + 1).
    const work = (a: number, b: number) => { let w = 0; for (let r = a; r < b; r++) w += r - 99; return w; };
    expect(Math.abs(work(100, s[1]) - work(s[1], 1100)) / work(100, 1100)).toBeLessThan(0.01);
  });

  it("overlapping parallel products do not share scratch", async () => {
    const n = 150, k = 5, A = sharedFloat64(n * n);
    A.set(randomBlock(n, n, 1));
    const Xs = [0, 1, 2].map((s) => randomBlock(n, k, 10 + s));
    const want = Xs.map((X) => { const Y = new Float64Array(n * k); denseMultiplySerial(A, n, X, k, Y); return Y; });
    const got = Xs.map(() => sharedFloat64(n * k));
    await Promise.all(Xs.map((X, i) => denseMultiply(A, n, X, k, got[i], pool)));
    for (let i = 0; i < 3; i++) expect(relDiff(got[i], want[i])).toBe(0);
  });

  for (const k of [1, 3, 8]) {
    it(`denseMultiply equals ml-matrix mmul, k=${k}, serial and on two workers`, async () => {
      const n = 203, A = sharedFloat64(n * n);
      A.set(randomBlock(n, n, 7));
      const X = randomBlock(n, k, 8);
      // Reference: ml-matrix Matrix.mmul.
      const ref = Float64Array.from(new Matrix(rows(A, n)).mmul(new Matrix(rows(X, n, k))).to1DArray());
      const Y1 = new Float64Array(n * k), Y2 = new Float64Array(n * k), Y3 = sharedFloat64(n * k);
      denseMultiplySerial(A, n, X, k, Y1);
      await denseMultiply(A, n, X, k, Y2, pool);
      const Xs = sharedFloat64(n * k); Xs.set(X);
      await denseMultiply(A, n, Xs, k, Y3, pool);
      expect(relDiff(Y1, ref)).toBeLessThan(1e-13);
      expect(relDiff(Y2, ref)).toBeLessThan(1e-13);
      expect(relDiff(Y3, ref)).toBeLessThan(1e-13);
    });
  }
});
