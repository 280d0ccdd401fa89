/**
 * Low-rank blocks M ≈ U·Vᵀ (U m×r, V n×r) of a hierarchical matrix: storage and products.
 *
 * Layout, both while a block is built (ACA, aca.ts) and once stored: factors term by term
 * (column-major), term q of U at u[q·m .. q·m + m), of V at v[q·n .. q·n + n). The product
 * then runs dot products and updates as long as the block, not as short as the rank.
 * Recompression of the factors: recompression.ts.
 */
import { gemmStridedSimd } from "./wasm-kernel.js";
import { axpy2, dot, rowTimesRows } from "./dense-block.js";

/**
 * Y[rows] += U·(Vᵀ·X[cols]) for a stored low-rank block (U m×r and V n×r column-major at uOff,
 * vOff), X and Y n×k row-major over the whole index range, the block's rows starting at
 * row `r0` of Y and its columns at row `c0` of X. T is scratch of at least r·k.
 */
export function lowRankMultiplyAdd(data: Float64Array, uOff: number, vOff: number, m: number, n: number, r: number,
  X: Float64Array, c0: number, Y: Float64Array, r0: number, k: number, T: Float64Array): void {
  if (k === 1) {
    for (let q = 0; q < r; q++) T[q] = dot(data, vOff + q * n, X, c0, n);
    let q = 0;
    for (; q + 1 < r; q += 2) axpy2(data, uOff + q * m, m, T[q], T[q + 1], Y, r0);
    if (q < r) axpy2(data, uOff + q * m, 0, T[q], 0, Y, r0, m);
    return;
  }
  const rk = r * k;
  for (let i = 0; i < rk; i++) T[i] = 0;
  for (let q = 0; q < r; q++) rowTimesRows(data, vOff + q * n, n, X, c0, k, T, q * k);
  let q = 0;
  for (; q + 1 < r; q += 2) {
    const uo = uOff + q * m, u1 = uo + m, to = q * k, t1 = to + k;
    for (let a = 0; a < m; a++) {
      const p0 = data[uo + a], p1 = data[u1 + a], yo = (r0 + a) * k;
      for (let c = 0; c < k; c++) Y[yo + c] += p0 * T[to + c] + p1 * T[t1 + c];
    }
  }
  if (q < r) {
    const uo = uOff + q * m, to = q * k;
    for (let a = 0; a < m; a++) {
      const p0 = data[uo + a], yo = (r0 + a) * k;
      for (let c = 0; c < k; c++) Y[yo + c] += p0 * T[to + c];
    }
  }
}

/** Smallest rank whose two factor products go through the SIMD kernel (see the bench). */
export const SIMD_MIN_RANK = 4;

/**
 * lowRankMultiplyAdd through the SIMD kernel (same arguments): T = Vᵀ·X[c0..] (r×k), then
 * Y[r0..] += U·T, both as strided products. T is scratch of at least r·k.
 */
export function lowRankMultiplyAddSimd(data: Float64Array, uOff: number, vOff: number, m: number, n: number, r: number,
  X: Float64Array, c0: number, Y: Float64Array, r0: number, k: number, T: Float64Array): void {
  const rk = r * k;
  for (let i = 0; i < rk; i++) T[i] = 0;
  gemmStridedSimd(T, 0, k, data, vOff, n, 1, X, c0 * k, 1, k, r, k, n, 1);
  gemmStridedSimd(Y, r0 * k, k, data, uOff, 1, m, T, 0, 1, k, m, k, r, 1);
}
