/**
 * Cholesky factorisation A = L·Lᵀ of a dense symmetric positive definite matrix, in place.
 *
 * Blocked right-looking algorithm (Golub & Van Loan, Matrix Computations, 4th ed., §4.2.9,
 * "block Cholesky"): for each column block, factor the diagonal block (Cholesky–Crout,
 * unblocked), solve the panel L21 = A21·L11⁻ᵀ, then update the trailing lower triangle
 * A22 ← A22 − L21·L21ᵀ with the packed register-blocked kernel of dense.ts. With a pool,
 * the panel rows and the trailing rows of each step are split among the workers (the
 * trailing split balanced for the triangle); the small diagonal block stays on the caller.
 *
 * Only the lower triangle of A is read; on return it holds L. The strictly upper triangle
 * is left as it was.
 */
import { type DenseKernel, denseKernelInUse, gemmNT, isShared, packRows, rowSplits } from "./dense.js";
import { PANEL_BLOCK, solveLower, solveLowerTransposed, solveRowsLowerTransposedRight } from "./triangular.js";
import { type WorkerPool, sharedFloat64 } from "./pool.js";
import { task } from "./task.js";

/** A is not (numerically) positive definite: the pivot of row `pivot` (0-based) was ≤ 0. */
export class NotPositiveDefiniteError extends Error {
  readonly pivot: number;
  readonly value: number;
  constructor(pivot: number, value: number) {
    super(`matrix is not positive definite: pivot ${pivot} is ${value}`);
    this.name = "NotPositiveDefiniteError";
    this.pivot = pivot;
    this.value = value;
  }
}

export interface CholeskyOptions {
  /** Workers for the panel and trailing updates; serial when absent or of size 1. */
  pool?: WorkerPool;
  /** Columns per block step (default 96). */
  blockSize?: number;
  /** Trailing-update kernel (default "auto": WebAssembly SIMD where available). */
  kernel?: DenseKernel;
}

export const DEFAULT_BLOCK = 96;

// Per-thread scratch (each worker is its own isolate), grown on demand.
let l11 = new Float64Array(0);

/**
 * Unblocked Cholesky–Crout on the nb×nb block at `off` (stride ld), row-oriented so every
 * inner product runs over two contiguous rows. `base` numbers the pivots in error messages.
 */
export function factorDiagonalBlock(A: Float64Array, off: number, ld: number, nb: number, base: number): void {
  for (let i = 0; i < nb; i++) {
    const ri = off + i * ld;
    for (let j = 0; j <= i; j++) {
      const rj = off + j * ld;
      let s = A[ri + j];
      for (let q = 0; q < j; q++) s -= A[ri + q] * A[rj + q];
      if (j < i) A[ri + j] = s / A[rj + j];
      else {
        if (!(s > 0) || !Number.isFinite(s)) throw new NotPositiveDefiniteError(base + i, s);
        A[ri + i] = Math.sqrt(s);
      }
    }
  }
}

/** Serial blocked Cholesky of the n×n row-major A, in place (lower factor). */
export function choleskyFactorSerial(A: Float64Array, n: number, blockSize: number = DEFAULT_BLOCK, kernel: DenseKernel = "auto"): void {
  checkSize(A, n);
  const nb = Math.max(1, Math.floor(blockSize));
  if (n <= nb) { factorDiagonalBlock(A, 0, n, n, 0); return; }
  const P = new Float64Array(n * nb);
  for (let j0 = 0; j0 < n; j0 += nb) {
    const w = Math.min(nb, n - j0);
    factorDiagonalBlock(A, j0 * n + j0, n, w, j0);
    if (j0 + w < n) {
      choleskyPanel(A, n, j0, w, P, j0 + w, n, kernel);
      choleskyUpdate(A, n, j0, w, P, j0 + w, n, kernel);
    }
  }
}

/**
 * Blocked Cholesky of the n×n row-major A, in place (lower factor), on the pool's workers
 * when one is given. A not in shared memory is copied there and back. Throws
 * NotPositiveDefiniteError naming the failing pivot.
 */
export async function choleskyFactor(A: Float64Array, n: number, opts: CholeskyOptions = {}): Promise<void> {
  checkSize(A, n);
  const nb = Math.max(4, Math.floor(opts.blockSize ?? DEFAULT_BLOCK));
  const pool = opts.pool, kernel = opts.kernel ?? "auto";
  if (!pool || pool.size < 2 || n <= 2 * nb) { choleskyFactorSerial(A, n, nb, kernel); return; }
  const S = isShared(A) ? A : sharedFloat64(n * n);
  if (S !== A) S.set(A.subarray(0, n * n));
  const P = sharedFloat64(n * nb);
  const parts = pool.size;
  for (let j0 = 0; j0 < n; j0 += nb) {
    const w = Math.min(nb, n - j0);
    factorDiagonalBlock(S, j0 * n + j0, n, w, j0);
    const i0 = j0 + w;
    if (i0 >= n) break;
    // Small trailing blocks are not worth a round trip to the workers.
    if ((n - i0) < 2 * nb) {
      choleskyPanel(S, n, j0, w, P, i0, n, kernel);
      choleskyUpdate(S, n, j0, w, P, i0, n, kernel);
      continue;
    }
    const even = rowSplits(i0, n, parts, false);
    await pool.map(choleskyPanelTask, even.slice(0, -1).map((r, t) => [S, n, j0, w, P, r, even[t + 1], kernel]));
    const tri = rowSplits(i0, n, parts, true);
    await pool.map(choleskyUpdateTask, tri.slice(0, -1).map((r, t) => [S, n, j0, w, P, r, tri[t + 1], kernel]));
  }
  if (S !== A) A.set(S);
}

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

/** Cholesky trailing update of rows r0..r1, lower triangle only: A22 ← A22 − L21·L21ᵀ. */
export function choleskyUpdate(A: Float64Array, n: number, j0: number, nb: number, P: Float64Array, r0: number, r1: number, kernel: DenseKernel = "auto"): void {
  if (r1 <= r0) return;
  const i0 = j0 + nb;
  gemmNT(A, r0 * n + i0, n, P, (r0 - i0) * nb, nb, P, 0, nb, r1 - r0, r1 - i0, nb, r0 - i0, -1, kernel);
}

export const choleskyPanelTask = task(import.meta.url, { choleskyPanel });
export const choleskyUpdateTask = task(import.meta.url, { choleskyUpdate });

/**
 * Solve A·X = B for all k right-hand sides at once, given the lower factor L of A
 * (choleskyFactor). B is n×k row-major and is overwritten by X.
 */
export function choleskySolve(L: Float64Array, n: number, B: Float64Array, k: number): void {
  if (B.length < n * k) throw new RangeError(`right-hand sides hold ${B.length} values, need ${n}×${k}`);
  solveLower(L, 0, n, n, B, k, false);
  solveLowerTransposed(L, 0, n, n, B, k);
}

function checkSize(A: Float64Array, n: number): void {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`matrix order ${n} is not a non-negative integer`);
  if (A.length < n * n) throw new RangeError(`matrix holds ${A.length} values, need ${n}×${n}`);
}
