/**
 * Worker-side pieces of the parallel factorisations and products. Each export is a task
 * for `WorkerPool.map`: it works in place on SharedArrayBuffer-backed arrays over a range
 * of rows, so the caller splits a step's rows among workers and waits for all of them.
 * The same functions run on the main thread for the serial path.
 */
import { type DenseKernel, denseKernelInUse, gemmNT, multiplyRows, packRows, packTransposed } from "./dense.js";
import { solveRowsLowerTransposedRight, solveUnitLowerLeft } from "./triangular.js";

// Per-thread scratch (each worker is its own isolate), grown on demand.
let l11 = new Float64Array(0);

/**
 * Cholesky panel: rows r0..r1 of column block j0..j0+nb become L21 = A21·L11⁻ᵀ (L11 already
 * factored in place), and are copied into the packed panel P (row r at (r − j0 − nb)·nb).
 */
export function choleskyPanel(A: Float64Array, n: number, j0: number, nb: number, P: Float64Array, r0: number, r1: number, kernel: DenseKernel = "auto"): void {
  if (r1 <= r0) return;
  // L11 packed: in place its rows sit a page or more apart, and every panel row reads all of them.
  if (l11.length < nb * nb) l11 = new Float64Array(nb * nb);
  packRows(l11, 0, A, j0 * n + j0, n, nb, nb);
  const rows = r1 - r0, x = r0 * n + j0;
  // Column blocks of X·L11ᵀ = A21, left-looking (Golub & Van Loan, 4th ed., §3.1.4 block
  // triangular solve): columns c0.. first lose X[:, 0..c0)·L11[c0.., 0..c0)ᵀ through the
  // packed kernel, then a bs-wide triangular solve; only that solve runs as scalar code.
  const bs = denseKernelInUse(kernel) === "wasm" ? PANEL_BLOCK : nb;
  for (let c0 = 0; c0 < nb; c0 += bs) {
    const w = Math.min(bs, nb - c0);
    if (c0 > 0) gemmNT(A, x + c0, n, A, x, n, l11, c0 * nb, nb, rows, w, c0, w, -1, kernel);
    solveRowsLowerTransposedRight(l11, c0 * nb + c0, nb, w, A, x + c0, n, rows);
  }
  packRows(P, (r0 - j0 - nb) * nb, A, x, n, rows, nb);
}

/** Columns per triangular solve in the blocked Cholesky panel (measured: linalg bench). */
const PANEL_BLOCK = 32;

/** Cholesky trailing update of rows r0..r1, lower triangle only: A22 ← A22 − L21·L21ᵀ. */
export function choleskyUpdate(A: Float64Array, n: number, j0: number, nb: number, P: Float64Array, r0: number, r1: number, kernel: DenseKernel = "auto"): void {
  if (r1 <= r0) return;
  const i0 = j0 + nb;
  gemmNT(A, r0 * n + i0, n, P, (r0 - i0) * nb, nb, P, 0, nb, r1 - r0, r1 - i0, nb, r0 - i0, -1, kernel);
}

/**
 * LU block row: columns c0..c1 of U12 = L11⁻¹·A12 for the column block j0..j0+nb (L11 in
 * place), packed transposed into Q (column j as row j − j0 − nb).
 */
export function luBlockRow(A: Float64Array, n: number, j0: number, nb: number, Q: Float64Array, c0: number, c1: number, kernel: DenseKernel = "auto"): void {
  if (c1 <= c0) return;
  const p = c1 - c0, q0 = (c0 - j0 - nb) * nb;
  if (denseKernelInUse(kernel) !== "wasm") {
    solveUnitLowerLeft(A, j0 * n + j0, n, nb, A, j0 * n + c0, n, p);
    packTransposed(Q, q0, A, j0 * n + c0, n, nb, p);
    return;
  }
  // Row blocks of L11·U12 = A12, top down (Golub & Van Loan, 4th ed., §3.1.4): rows r0..
  // first lose L11[r0.., 0..r0)·U12[0..r0, :] through the packed kernel, reading the rows
  // already solved from their transposed copy in Q; then a bs-row unit triangular solve.
  for (let r0 = 0; r0 < nb; r0 += PANEL_BLOCK) {
    const w = Math.min(PANEL_BLOCK, nb - r0), row = (j0 + r0) * n;
    if (r0 > 0) gemmNT(A, row + c0, n, A, row + j0, n, Q, q0, nb, w, p, r0, p, -1, kernel);
    solveUnitLowerLeft(A, row + j0 + r0, n, w, A, row + c0, n, p);
    for (let r = 0; r < w; r++) {
      const a = row + r * n + c0, d = q0 + r0 + r;
      for (let c = 0; c < p; c++) Q[d + c * nb] = A[a + c];
    }
  }
}

/**
 * LU trailing update of rows r0..r1: A22 ← A22 − L21·U12, with U12 packed transposed in Q
 * (column j of U12 as row j − j0 − nb of Q, length nb).
 */
export function luUpdate(A: Float64Array, n: number, j0: number, nb: number, Q: Float64Array, r0: number, r1: number, kernel: DenseKernel = "auto"): void {
  if (r1 <= r0) return;
  const i0 = j0 + nb;
  gemmNT(A, r0 * n + i0, n, A, r0 * n + j0, n, Q, 0, nb, r1 - r0, n - i0, nb, n, -1, kernel);
}

/**
 * Columns c0..c1 (c0 ≥ j0 + nb) of the LU trailing update of rows r0..r1, for the
 * look-ahead of luFactor: the next panel's columns and the rest go to different threads.
 */
export function luUpdateColumns(A: Float64Array, n: number, j0: number, nb: number, Q: Float64Array, r0: number, r1: number, c0: number, c1: number, kernel: DenseKernel = "auto"): void {
  if (r1 <= r0 || c1 <= c0) return;
  const i0 = j0 + nb;
  gemmNT(A, r0 * n + c0, n, A, r0 * n + j0, n, Q, (c0 - i0) * nb, nb, r1 - r0, c1 - c0, nb, c1 - c0, -1, kernel);
}

/** Rows r0..r1 of Y = A·X (A n×n, X and Y n×k, all row-major; Xt = Xᵀ when k > 1). */
export function multiplyRowRange(A: Float64Array, n: number, X: Float64Array, Xt: Float64Array, k: number, Y: Float64Array, r0: number, r1: number): void {
  multiplyRows(A, n, X, Xt, k, Y, r0, r1);
}
