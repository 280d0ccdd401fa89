/**
 * Worker-side pieces of the parallel factorisations and products. Each export is a task
 * for `WorkerPool.map`: it works in place on SharedArrayBuffer-backed arrays over a range
 * of rows, so the caller splits a step's rows among workers and waits for all of them.
 * The same functions run on the main thread for the serial path.
 */
import { gemmNT, multiplyRows, packRows, packTransposed } from "./dense.js";
import { solveRowsLowerTransposedRight, solveUnitLowerLeft } from "./triangular.js";

// Per-thread scratch (each worker is its own isolate), grown on demand.
let l11 = new Float64Array(0);

/**
 * Cholesky panel: rows r0..r1 of column block j0..j0+nb become L21 = A21·L11⁻ᵀ (L11 already
 * factored in place), and are copied into the packed panel P (row r at (r − j0 − nb)·nb).
 */
export function choleskyPanel(A: Float64Array, n: number, j0: number, nb: number, P: Float64Array, r0: number, r1: number): void {
  if (r1 <= r0) return;
  // L11 packed: in place its rows sit a page or more apart, and every panel row reads all of them.
  if (l11.length < nb * nb) l11 = new Float64Array(nb * nb);
  packRows(l11, 0, A, j0 * n + j0, n, nb, nb);
  solveRowsLowerTransposedRight(l11, 0, nb, nb, A, r0 * n + j0, n, r1 - r0);
  packRows(P, (r0 - j0 - nb) * nb, A, r0 * n + j0, n, r1 - r0, nb);
}

/** Cholesky trailing update of rows r0..r1, lower triangle only: A22 ← A22 − L21·L21ᵀ. */
export function choleskyUpdate(A: Float64Array, n: number, j0: number, nb: number, P: Float64Array, r0: number, r1: number): void {
  if (r1 <= r0) return;
  const i0 = j0 + nb;
  gemmNT(A, r0 * n + i0, n, P, (r0 - i0) * nb, nb, P, 0, nb, r1 - r0, r1 - i0, nb, r0 - i0, -1);
}

/**
 * LU block row: columns c0..c1 of U12 = L11⁻¹·A12 for the column block j0..j0+nb (L11 in
 * place), packed transposed into Q (column j as row j − j0 − nb).
 */
export function luBlockRow(A: Float64Array, n: number, j0: number, nb: number, Q: Float64Array, c0: number, c1: number): void {
  if (c1 <= c0) return;
  solveUnitLowerLeft(A, j0 * n + j0, n, nb, A, j0 * n + c0, n, c1 - c0);
  packTransposed(Q, (c0 - j0 - nb) * nb, A, j0 * n + c0, n, nb, c1 - c0);
}

/**
 * LU trailing update of rows r0..r1: A22 ← A22 − L21·U12, with U12 packed transposed in Q
 * (column j of U12 as row j − j0 − nb of Q, length nb).
 */
export function luUpdate(A: Float64Array, n: number, j0: number, nb: number, Q: Float64Array, r0: number, r1: number): void {
  if (r1 <= r0) return;
  const i0 = j0 + nb;
  gemmNT(A, r0 * n + i0, n, A, r0 * n + j0, n, Q, 0, nb, r1 - r0, n - i0, nb, n, -1);
}

/** Rows r0..r1 of Y = A·X (A n×n, X and Y n×k, all row-major; Xt = Xᵀ when k > 1). */
export function multiplyRowRange(A: Float64Array, n: number, X: Float64Array, Xt: Float64Array, k: number, Y: Float64Array, r0: number, r1: number): void {
  multiplyRows(A, n, X, Xt, k, Y, r0, r1);
}
