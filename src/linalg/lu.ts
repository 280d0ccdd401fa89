/**
 * LU factorisation with partial (row) pivoting, P·A = L·U, of a dense n×n row-major matrix
 * in place: the strictly lower part holds L (unit diagonal implied), the upper part U.
 *
 * Blocked right-looking algorithm (Golub & Van Loan, Matrix Computations, 4th ed., §3.4.7,
 * as in LAPACK dgetrf): factor a column panel (recursively) with row exchanges across whole
 * rows, solve U12 = L11⁻¹·A12, then update A22 ← A22 − L21·U12 with the packed kernel of
 * dense.ts; with a pool the columns of U12 and then the trailing rows are split evenly
 * among the workers. The panel itself stays on the caller, factored in a packed copy.
 * Pivots follow LAPACK's ipiv convention, 0-based: at step c rows c and piv[c] were swapped.
 */
import { type DenseKernel, denseKernelInUse, gemmNT, isShared, packTransposed, rowSplits } from "./dense.js";
import { PANEL_BLOCK, solveLower, solveUnitLowerLeft, solveUpper } from "./triangular.js";
import { type WorkerPool, sharedFloat64 } from "./pool.js";
import { task } from "./task.js";

/** No non-zero finite pivot in column `column` (0-based): singular, or holding NaN/∞. */
export class SingularMatrixError extends Error {
  readonly column: number;
  constructor(column: number, message?: string) {
    super(message ?? `matrix is singular to working precision: no non-zero finite pivot in column ${column}`);
    this.name = "SingularMatrixError";
    this.column = column;
  }
}

export interface LuOptions {
  /** Workers for the trailing updates; serial when absent or of size 1. */
  pool?: WorkerPool;
  /** Columns per block step (default 96). */
  blockSize?: number;
  /** Trailing-update kernel (default "auto": WebAssembly SIMD where available). */
  kernel?: DenseKernel;
}

/**
 * Unblocked LU of columns c0..c0+w of the packed panel T (`rows` rows, stride ld), rows c0
 * and below, swapping whole panel rows; pivots are recorded and reported as `base` + local.
 */
function factorColumns(T: Float64Array, ld: number, rows: number, c0: number, w: number, piv: Int32Array, base: number): void {
  const cEnd = c0 + w;
  for (let c = c0; c < cEnd; c++) {
    let p = c, best = Math.abs(T[c * ld + c]);
    for (let r = c + 1; r < rows; r++) {
      const v = Math.abs(T[r * ld + c]);
      if (v > best) { best = v; p = r; }
    }
    if (!(best > 0) || !Number.isFinite(best)) throw new SingularMatrixError(base + c);
    piv[base + c] = base + p;
    if (p !== c) {
      const a = c * ld, b = p * ld;
      for (let j = 0; j < ld; j++) { const t = T[a + j]; T[a + j] = T[b + j]; T[b + j] = t; }
    }
    const rc = c * ld, inv = 1 / T[rc + c];
    for (let r = c + 1; r < rows; r++) {
      const rr = r * ld;
      const l = (T[rr + c] *= inv);
      if (l === 0) continue;
      for (let q = c + 1; q < cEnd; q++) T[rr + q] -= l * T[rc + q];
    }
  }
}

/**
 * LU of columns c0..c0+w of the packed panel T by recursive halving (Toledo, "Locality of
 * reference in LU decomposition with partial pivoting", SIAM J. Matrix Anal. Appl. 18(4),
 * 1997): the right half is updated through the packed kernel, so the tall panel is swept
 * a few times, not once per column. `S` is scratch for U12ᵀ.
 */
function factorPanel(T: Float64Array, ld: number, rows: number, c0: number, w: number, piv: Int32Array, base: number, S: Float64Array, kernel: DenseKernel): void {
  if (w <= 8) { factorColumns(T, ld, rows, c0, w, piv, base); return; }
  const h = w >> 1, c1 = c0 + h, w2 = w - h;
  factorPanel(T, ld, rows, c0, h, piv, base, S, kernel);
  solveUnitLowerLeft(T, c0 * ld + c0, ld, h, T, c0 * ld + c1, ld, w2);
  packTransposed(S, 0, T, c0 * ld + c1, ld, h, w2);
  gemmNT(T, c1 * ld + c1, ld, T, c1 * ld + c0, ld, S, 0, h, rows - c1, w2, h, w2, -1, kernel);
  factorPanel(T, ld, rows, c1, w2, piv, base, S, kernel);
}

/**
 * LU of the panel of columns j0..j0+w over rows j0..n. The panel is factored in a packed
 * copy T (rows w doubles apart, so the tall panel sits in L2 and each pivot search walks
 * contiguous memory, not one page per row), copied back, and its row exchanges are then
 * applied to the columns outside it in order, as LAPACK's dlaswp does — the same result
 * as exchanging whole rows at every pivot, since the panel's arithmetic never reads them.
 */
function luPanel(A: Float64Array, n: number, j0: number, w: number, piv: Int32Array, T: Float64Array, S: Float64Array, kernel: DenseKernel): void {
  factorPanelPacked(A, n, j0, w, piv, T, S, kernel);
  exchangeRowsOutside(A, n, j0, w, piv);
}

/** The panel part of luPanel: columns j0..j0+w only, through the packed copy T. */
function factorPanelPacked(A: Float64Array, n: number, j0: number, w: number, piv: Int32Array, T: Float64Array, S: Float64Array, kernel: DenseKernel): void {
  const rows = n - j0;
  for (let r = 0; r < rows; r++) {
    const a = (j0 + r) * n + j0, t = r * w;
    for (let q = 0; q < w; q++) T[t + q] = A[a + q];
  }
  try {
    factorPanel(T, w, rows, 0, w, piv, j0, S, kernel);
  } finally {
    // Copied back even on failure, so a singular matrix is left as the in-place elimination left it.
    for (let r = 0; r < rows; r++) {
      const a = (j0 + r) * n + j0, t = r * w;
      for (let q = 0; q < w; q++) A[a + q] = T[t + q];
    }
  }
}

/** The panel's row exchanges piv[j0..j0+w), in order, on the columns outside it. */
function exchangeRowsOutside(A: Float64Array, n: number, j0: number, w: number, piv: Int32Array): void {
  const jEnd = j0 + w;
  for (let c = j0; c < jEnd; c++) {
    const p = piv[c];
    if (p === c) continue;
    const a = c * n, b = p * n;
    for (let j = 0; j < j0; j++) { const t = A[a + j]; A[a + j] = A[b + j]; A[b + j] = t; }
    for (let j = jEnd; j < n; j++) { const t = A[a + j]; A[a + j] = A[b + j]; A[b + j] = t; }
  }
}

/** Serial blocked LU in place; returns the pivots. Throws SingularMatrixError. */
export function luFactorSerial(A: Float64Array, n: number, blockSize: number = 96, kernel: DenseKernel = "auto"): Int32Array {
  checkSize(A, n);
  const nb = Math.max(1, Math.floor(blockSize));
  const piv = new Int32Array(n);
  const Q = new Float64Array(Math.max(n * Math.min(nb, n), 64));
  const T = new Float64Array(n * Math.min(nb, n));
  for (let j0 = 0; j0 < n; j0 += nb) {
    const w = Math.min(nb, n - j0);
    luPanel(A, n, j0, w, piv, T, Q, kernel);
    if (j0 + w >= n) break;
    luBlockRow(A, n, j0, w, Q, j0 + w, n, kernel);
    luUpdate(A, n, j0, w, Q, j0 + w, n, kernel);
  }
  return piv;
}

/**
 * Blocked LU in place on the pool's workers when one is given (A not in shared memory is
 * copied there and back); returns the pivots. Throws SingularMatrixError.
 */
export async function luFactor(A: Float64Array, n: number, opts: LuOptions = {}): Promise<Int32Array> {
  checkSize(A, n);
  const nb = Math.max(4, Math.floor(opts.blockSize ?? 96));
  const pool = opts.pool, kernel = opts.kernel ?? "auto";
  if (!pool || pool.size < 2 || n <= 2 * nb) return luFactorSerial(A, n, nb, kernel);
  const S = isShared(A) ? A : sharedFloat64(n * n);
  if (S !== A) S.set(A.subarray(0, n * n));
  const piv = new Int32Array(n);
  const Q = sharedFloat64(n * nb);
  // The caller's panel scratch is its own: Q is being read by the workers meanwhile.
  const T = new Float64Array(n * nb), R = new Float64Array(nb * nb);
  luPanel(S, n, 0, Math.min(nb, n), piv, T, R, kernel);
  for (let j0 = 0; j0 < n; j0 += nb) {
    const w = Math.min(nb, n - j0), i0 = j0 + w;
    if (i0 >= n) break;
    const w2 = Math.min(nb, n - i0);
    // Small trailing blocks are not worth a round trip to the workers.
    if (n - i0 < 2 * nb) {
      luBlockRow(S, n, j0, w, Q, i0, n, kernel);
      luUpdate(S, n, j0, w, Q, i0, n, kernel);
      luPanel(S, n, i0, w2, piv, T, R, kernel);
      continue;
    }
    const s = rowSplits(i0, n, pool.size, false);
    await pool.map(luBlockRowTask, s.slice(0, -1).map((c, t) => [S, n, j0, w, Q, c, s[t + 1], kernel]));
    // Look-ahead (Kurzak & Dongarra, "Implementing linear algebra routines on multi-core
    // processors with pipelining and a look ahead", PARA 2006): the caller updates and
    // factors the next panel while the workers update the columns right of it. The
    // panel's row exchanges wait for the workers, who read L21 in the columns left of it;
    // exchanging rows after a row-wise update equals exchanging them before.
    const c1 = i0 + w2;
    const rest = pool.map(luUpdateColumnsTask, s.slice(0, -1).map((r, t) => [S, n, j0, w, Q, r, s[t + 1], c1, n, kernel]));
    let failure: unknown;
    try {
      luUpdateColumns(S, n, j0, w, Q, i0, n, i0, c1, kernel);
      factorPanelPacked(S, n, i0, w2, piv, T, R, kernel);
    } catch (e) {
      failure = e;
    }
    await rest;
    if (failure) throw failure;
    exchangeRowsOutside(S, n, i0, w2, piv);
  }
  if (S !== A) A.set(S);
  return piv;
}

/** Solve A·X = B for k right-hand sides (B n×k row-major, overwritten by X) from luFactor. */
export function luSolve(LU: Float64Array, piv: Int32Array, n: number, B: Float64Array, k: number): void {
  if (B.length < n * k) throw new RangeError(`right-hand sides hold ${B.length} values, need ${n}×${k}`);
  for (let c = 0; c < n; c++) {
    const p = piv[c];
    if (p === c) continue;
    const a = c * k, b = p * k;
    for (let j = 0; j < k; j++) { const t = B[a + j]; B[a + j] = B[b + j]; B[b + j] = t; }
  }
  solveLower(LU, 0, n, n, B, k, true);
  solveUpper(LU, 0, n, n, B, k);
}

function checkSize(A: Float64Array, n: number): void {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`matrix order ${n} is not a non-negative integer`);
  if (A.length < n * n) throw new RangeError(`matrix holds ${A.length} values, need ${n}×${n}`);
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

export const luBlockRowTask = task(import.meta.url, { luBlockRow });
export const luUpdateColumnsTask = task(import.meta.url, { luUpdateColumns });
