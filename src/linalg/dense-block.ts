/**
 * Products with a dense block of a hierarchical matrix (hmatrix.ts): an m×n row-major block
 * applied to the rows of n×k row-major blocks of vectors, in place, as given or transposed
 * (the symmetric matrix's mirrored blocks); plain loops, or the WebAssembly SIMD kernel
 * (wasm-kernel.ts) for many right-hand sides. The level-1 loops `dot` and `axpy2` serve the
 * low-rank block as well (low-rank-block.ts).
 */
import { gemmStridedSimd } from "./wasm-kernel.js";

/**
 * Σ_b a[ao + b]·x[xo + b] over b < len, in four independent sums: the loop is bound by the
 * add latency otherwise.
 */
export function dot(a: Float64Array, ao: number, x: Float64Array, xo: number, len: number): number {
  let t0 = 0, t1 = 0, t2 = 0, t3 = 0, b = 0;
  const l4 = len & ~3;
  for (; b < l4; b += 4) {
    t0 += a[ao + b] * x[xo + b]; t1 += a[ao + b + 1] * x[xo + b + 1];
    t2 += a[ao + b + 2] * x[xo + b + 2]; t3 += a[ao + b + 3] * x[xo + b + 3];
  }
  for (; b < len; b++) t0 += a[ao + b] * x[xo + b];
  return (t0 + t1) + (t2 + t3);
}

/**
 * y[yo + i] += s·a[ao + i] + t·a[ao + gap + i] for i < len (len defaults to gap): two terms
 * per pass, so y is loaded and stored half as often.
 */
export function axpy2(a: Float64Array, ao: number, gap: number, s: number, t: number, y: Float64Array, yo: number, len = gap): void {
  const a1 = ao + gap;
  for (let i = 0; i < len; i++) y[yo + i] += s * a[ao + i] + t * a[a1 + i];
}

/**
 * y[yo + c] += Σ_b w[wo + b]·X[(c0 + b)·k + c] for c < k, b < n: a row of weights times n rows
 * of an n×k row-major block, two rows of X per pass over y (half its loads and stores;
 * measured 1.5× at k = 64 on 32×32 blocks). Serves the dense block's rows and the low-rank
 * block's Vᵀ·X (low-rank-block.ts).
 */
export function rowTimesRows(w: Float64Array, wo: number, n: number, X: Float64Array, c0: number, k: number, y: Float64Array, yo: number): void {
  let b = 0;
  for (; b + 1 < n; b += 2) {
    const d = w[wo + b], e = w[wo + b + 1], xo = (c0 + b) * k, x1 = xo + k;
    for (let c = 0; c < k; c++) y[yo + c] += d * X[xo + c] + e * X[x1 + c];
  }
  if (b < n) {
    const d = w[wo + b], xo = (c0 + b) * k;
    for (let c = 0; c < k; c++) y[yo + c] += d * X[xo + c];
  }
}

/**
 * Y[rows] += D·X[cols] for a dense m×n row-major block at `off`, or Y[cols] += Dᵀ·X[rows]
 * when `transposed` (then r0 indexes the block's rows in X and c0 its columns in Y).
 */
export function denseBlockMultiplyAdd(data: Float64Array, off: number, m: number, n: number, transposed: boolean,
  X: Float64Array, Y: Float64Array, r0: number, c0: number, k: number): void {
  if (!transposed) {
    if (k === 1) {
      for (let a = 0; a < m; a++) Y[r0 + a] += dot(data, off + a * n, X, c0, n);
      return;
    }
    for (let a = 0; a < m; a++) rowTimesRows(data, off + a * n, n, X, c0, k, Y, (r0 + a) * k);
    return;
  }
  if (k === 1) {
    let a = 0;
    for (; a + 1 < m; a += 2) axpy2(data, off + a * n, n, X[r0 + a], X[r0 + a + 1], Y, c0);
    if (a < m) axpy2(data, off + a * n, 0, X[r0 + a], 0, Y, c0, n);
    return;
  }
  let a = 0;
  for (; a + 1 < m; a += 2) {
    const o = off + a * n, o1 = o + n, xo = (r0 + a) * k, x1 = xo + k;
    for (let b = 0; b < n; b++) {
      const d = data[o + b], e = data[o1 + b], yo = (c0 + b) * k;
      for (let c = 0; c < k; c++) Y[yo + c] += d * X[xo + c] + e * X[x1 + c];
    }
  }
  if (a < m) {
    const o = off + a * n, xo = (r0 + a) * k;
    for (let b = 0; b < n; b++) {
      const d = data[o + b], yo = (c0 + b) * k;
      for (let c = 0; c < k; c++) Y[yo + c] += d * X[xo + c];
    }
  }
}

/**
 * Fewest right-hand sides for which the block products go through the WebAssembly SIMD
 * kernel (gemmStridedSimd): below it the packing copies cost more than the faster tiles.
 */
export const SIMD_MIN_RHS = 8;

/**
 * denseBlockMultiplyAdd through the SIMD kernel, k ≥ 1 (same arguments, same result to
 * rounding): Y[r0..] += D·X[c0..], or Y[c0..] += Dᵀ·X[r0..] when transposed; X is read as
 * Xᵀ through strides, Dᵀ by columns of D.
 */
export function denseBlockMultiplyAddSimd(data: Float64Array, off: number, m: number, n: number, transposed: boolean,
  X: Float64Array, Y: Float64Array, r0: number, c0: number, k: number): void {
  if (!transposed) gemmStridedSimd(Y, r0 * k, k, data, off, n, 1, X, c0 * k, 1, k, m, k, n, 1);
  else gemmStridedSimd(Y, c0 * k, k, data, off, 1, n, X, r0 * k, 1, k, n, k, m, 1);
}
