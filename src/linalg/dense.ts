/**
 * Dense row-major matrices as plain Float64Arrays, and the register-blocked micro-kernel
 * that carries nearly all the flops of the factorisations (the trailing update).
 *
 * Layout: an m×p matrix at offset `off` with row stride `ld` holds entry (i, j) at
 * `off + i*ld + j`. A block of k right-hand sides is an n×k row-major array: row i holds
 * the k values of unknown i, so one pass over a matrix row serves all k columns.
 *
 * The kernel follows the GotoBLAS idea (Goto & van de Geijn, "Anatomy of high-performance
 * matrix multiplication", ACM TOMS 34(3), 2008): pack the panels into contiguous storage,
 * then keep a small tile of C in registers while the inner loop walks k over contiguous
 * memory. Two implementations: the WebAssembly SIMD one of wasm-kernel.ts (f64x2 tiles,
 * about 3–4× faster where V8 supports it) and the plain JavaScript one below (4×4 scalars,
 * V8 has no SIMD in plain loops), which is the fallback and stays tested. `gemmNT` picks.
 */
import { gemmNTSimd, simdAvailable } from "./wasm-kernel.js";
import type { WorkerPool } from "./pool.js";
import { task } from "./task.js";

/**
 * Which implementation of the trailing-update kernel to use: "wasm" (WebAssembly SIMD,
 * an error where unavailable), "js" (plain JavaScript), or "auto" (WebAssembly when this
 * thread supports it and the block is large enough to repay the packing copies).
 */
export type DenseKernel = "auto" | "js" | "wasm";

/** The implementation `gemmNT` runs for `kernel` on a large block in this thread. */
export function denseKernelInUse(kernel: DenseKernel = "auto"): "js" | "wasm" {
  if (kernel === "js") return "js";
  if (kernel === "wasm" || simdAvailable()) return "wasm";
  return "js";
}

/**
 * C ← C + α·A·Bᵀ on an m×p block of C, touching only entries with j ≤ i + diag (see
 * gemmNTScalar for the arguments), through the implementation chosen by `kernel`.
 */
export function gemmNT(
  C: Float64Array, cOff: number, ldc: number,
  A: Float64Array, aOff: number, lda: number,
  B: Float64Array, bOff: number, ldb: number,
  m: number, p: number, kc: number, diag: number, alpha: number,
  kernel: DenseKernel = "auto",
): void {
  if (kernel === "wasm" || (kernel === "auto" && kc >= SIMD_MIN && m >= SIMD_MIN && p >= SIMD_MIN && simdAvailable()))
    gemmNTSimd(C, cOff, ldc, A, aOff, lda, B, bOff, ldb, m, p, kc, diag, alpha);
  else gemmNTScalar(C, cOff, ldc, A, aOff, lda, B, bOff, ldb, m, p, kc, diag, alpha);
}

/**
 * Smallest m, p and kc worth packing for the SIMD kernel. Measured on this project's 2-core
 * Xeon (timing both kernels on single blocks): below about 12 in any dimension the packing
 * copies outweigh the faster tiles (m = 1000, p = kc = 8: JavaScript 1.4× faster); at 16 the
 * SIMD kernel already wins by 1.3×, at p = kc = 48 by 2.6×.
 */
const SIMD_MIN = 12;

/**
 * C ← C + α·A·Bᵀ on an m×p block of C, where A is m×kc (rows `lda` apart) and B is p×kc
 * (rows `ldb` apart): entry (i, j) gains α times the dot product of row i of A and row j of B.
 *
 * Only entries with j ≤ i + diag are touched, so `diag = p` updates the whole block and
 * `diag = r0 − c0` (global row and column of the block's corner) updates the lower triangle
 * of a symmetric trailing matrix (the SYRK case of Cholesky), leaving the upper part alone.
 */
export function gemmNTScalar(
  C: Float64Array, cOff: number, ldc: number,
  A: Float64Array, aOff: number, lda: number,
  B: Float64Array, bOff: number, ldb: number,
  m: number, p: number, kc: number, diag: number, alpha: number,
): void {
  const m4 = m - (m % 4);
  // Column blocks of B small enough to stay in L2 while every row of A passes over them
  // (the n_c blocking of Goto & van de Geijn, §6): otherwise each 4-row strip would pull
  // the whole packed panel from memory again.
  const JB = Math.max(4, 4 * Math.floor(COLUMN_BLOCK_BYTES / (32 * Math.max(1, kc))));
  for (let jb = 0; jb < p; jb += JB) {
    const jbEnd = Math.min(p, jb + JB);
    // First 4-row strip that reaches column jb: i + 3 + diag ≥ jb.
    let iStart = jb - diag - 3;
    iStart = iStart <= 0 ? 0 : iStart - (iStart % 4);
    let i = iStart;
    for (; i < m4; i += 4) {
      const a0 = aOff + i * lda, a1 = a0 + lda, a2 = a1 + lda, a3 = a2 + lda;
      // Tiles with every column j ≤ i + diag are full; the next columns straddle the diagonal.
      let jEnd = i + 3 + diag + 1;
      if (jEnd > jbEnd) jEnd = jbEnd;
      let jFull = i + diag + 1;
      if (jFull > jEnd) jFull = jEnd;
      if (jFull < jb) jFull = jb;
      const jFull4 = jb + (jFull - jb) - ((jFull - jb) % 4);
      let j = jb;
      for (; j < jFull4; j += 4) {
        const b0 = bOff + j * ldb, b1 = b0 + ldb, b2 = b1 + ldb, b3 = b2 + ldb;
        let c00 = 0, c01 = 0, c02 = 0, c03 = 0;
        let c10 = 0, c11 = 0, c12 = 0, c13 = 0;
        let c20 = 0, c21 = 0, c22 = 0, c23 = 0;
        let c30 = 0, c31 = 0, c32 = 0, c33 = 0;
        for (let k = 0; k < kc; k++) {
          const x0 = A[a0 + k], x1 = A[a1 + k], x2 = A[a2 + k], x3 = A[a3 + k];
          const y0 = B[b0 + k], y1 = B[b1 + k], y2 = B[b2 + k], y3 = B[b3 + k];
          c00 += x0 * y0; c01 += x0 * y1; c02 += x0 * y2; c03 += x0 * y3;
          c10 += x1 * y0; c11 += x1 * y1; c12 += x1 * y2; c13 += x1 * y3;
          c20 += x2 * y0; c21 += x2 * y1; c22 += x2 * y2; c23 += x2 * y3;
          c30 += x3 * y0; c31 += x3 * y1; c32 += x3 * y2; c33 += x3 * y3;
        }
        const r0 = cOff + i * ldc + j, r1 = r0 + ldc, r2 = r1 + ldc, r3 = r2 + ldc;
        C[r0] += alpha * c00; C[r0 + 1] += alpha * c01; C[r0 + 2] += alpha * c02; C[r0 + 3] += alpha * c03;
        C[r1] += alpha * c10; C[r1 + 1] += alpha * c11; C[r1 + 2] += alpha * c12; C[r1 + 3] += alpha * c13;
        C[r2] += alpha * c20; C[r2 + 1] += alpha * c21; C[r2 + 2] += alpha * c22; C[r2 + 3] += alpha * c23;
        C[r3] += alpha * c30; C[r3 + 1] += alpha * c31; C[r3 + 2] += alpha * c32; C[r3 + 3] += alpha * c33;
      }
      // Remaining columns of these four rows (diagonal straddle and the ragged right edge).
      for (; j < jEnd; j++) {
        const b0 = bOff + j * ldb;
        let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
        for (let k = 0; k < kc; k++) {
          const y = B[b0 + k];
          s0 += A[a0 + k] * y; s1 += A[a1 + k] * y; s2 += A[a2 + k] * y; s3 += A[a3 + k] * y;
        }
        const r0 = cOff + i * ldc + j;
        if (j <= i + diag) C[r0] += alpha * s0;
        if (j <= i + 1 + diag) C[r0 + ldc] += alpha * s1;
        if (j <= i + 2 + diag) C[r0 + 2 * ldc] += alpha * s2;
        if (j <= i + 3 + diag) C[r0 + 3 * ldc] += alpha * s3;
      }
    }
    for (i = Math.max(m4, iStart); i < m; i++) {
      const a0 = aOff + i * lda;
      let jEnd = i + diag + 1;
      if (jEnd > jbEnd) jEnd = jbEnd;
      for (let j = jb; j < jEnd; j++) {
        const b0 = bOff + j * ldb;
        let s = 0;
        for (let k = 0; k < kc; k++) s += A[a0 + k] * B[b0 + k];
        C[cOff + i * ldc + j] += alpha * s;
      }
    }
  }
}

/** Bytes of packed B kept in cache per column block of gemmNT (half a typical 1–2 MiB L2). */
const COLUMN_BLOCK_BYTES = 512 * 1024;

/**
 * Copy an m×kc block (rows `lda` apart) into contiguous rows of length kc: the packed panel
 * the micro-kernel streams.
 */
export function packRows(out: Float64Array, outOff: number, A: Float64Array, aOff: number, lda: number, m: number, kc: number): void {
  for (let i = 0; i < m; i++) {
    const s = aOff + i * lda, d = outOff + i * kc;
    for (let k = 0; k < kc; k++) out[d + k] = A[s + k];
  }
}

/** Copy the transpose of a kc×p block (rows `lda` apart) into p contiguous rows of length kc. */
export function packTransposed(out: Float64Array, outOff: number, A: Float64Array, aOff: number, lda: number, kc: number, p: number): void {
  for (let k = 0; k < kc; k++) {
    const s = aOff + k * lda;
    for (let j = 0; j < p; j++) out[outOff + j * kc + k] = A[s + j];
  }
}

/**
 * Y[r0..r1) ← A[r0..r1)·X for row-major n×n A and n×k X, Y (rows r0 to r1 only, so rows
 * can be split among workers), given Xt = Xᵀ (k×n, from packTransposed) for k > 1.
 * Memory-bound: A is read from memory once per call whatever k is; four rows share each
 * load of X (k = 1) or go through the 4×4 kernel against Xt (k > 1), whose column tiles
 * revisit the four rows while they are still in cache.
 */
export function multiplyRows(A: Float64Array, n: number, X: Float64Array, Xt: Float64Array, k: number, Y: Float64Array, r0: number, r1: number): void {
  if (k !== 1) {
    for (let i = r0 * k; i < r1 * k; i++) Y[i] = 0;
    // Memory-bound: packing A for the SIMD kernel would cost as much as reading it.
    gemmNTScalar(Y, r0 * k, k, A, r0 * n, n, Xt, 0, n, r1 - r0, k, n, k, 1);
    return;
  }
  let i = r0;
  for (; i + 3 < r1; i += 4) {
    const a = i * n, b = a + n, c = b + n, d = c + n;
    let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
    for (let j = 0; j < n; j++) {
      const x = X[j];
      s0 += A[a + j] * x; s1 += A[b + j] * x; s2 += A[c + j] * x; s3 += A[d + j] * x;
    }
    Y[i] = s0; Y[i + 1] = s1; Y[i + 2] = s2; Y[i + 3] = s3;
  }
  for (; i < r1; i++) {
    const a = i * n;
    let s = 0;
    for (let j = 0; j < n; j++) s += A[a + j] * X[j];
    Y[i] = s;
  }
}

/**
 * Boundaries splitting rows r0..r1 into `parts` ranges of equal work, aligned to the
 * kernel's 4-row tiles. For a triangular update (row r costs ∝ r − r0 + 1) the boundary t
 * sits at r0 + m·√(t/parts), since the work above it grows with the square of its height.
 */
export function rowSplits(r0: number, r1: number, parts: number, triangular: boolean): number[] {
  const m = r1 - r0, out = [r0];
  for (let t = 1; t < parts; t++) {
    const f = triangular ? Math.sqrt(t / parts) : t / parts;
    let b = r0 + 4 * Math.round((m * f) / 4);
    if (b < out[t - 1]) b = out[t - 1];
    if (b > r1) b = r1;
    out.push(b);
  }
  out.push(r1);
  return out;
}

/** Whether a lives in shared memory, so workers can write it in place. */
export function isShared(a: Float64Array): boolean {
  return a.buffer instanceof SharedArrayBuffer;
}

export const multiplyRowsTask = task(import.meta.url, { multiplyRows });

// Xᵀ scratch for the products, grown on demand so repeated products do not allocate.
let xtLocal = new Float64Array(0);
let xtShared = new Float64Array(new SharedArrayBuffer(8));
let xtBusy = false;

/** Y = A·X for row-major n×n A and n×k X, Y, on the calling thread. */
export function denseMultiplySerial(A: Float64Array, n: number, X: Float64Array, k: number, Y: Float64Array): void {
  if (k !== 1) {
    if (xtLocal.length < n * k) xtLocal = new Float64Array(n * k);
    packTransposed(xtLocal, 0, X, 0, k, n, k);
  }
  multiplyRows(A, n, X, xtLocal, k, Y, 0, n);
}

/**
 * Y = A·X with the rows of Y split among the pool's workers. The product is memory-bound,
 * so all k columns go through one pass over A. Workers need A, X and Y in shared memory:
 * X and Y are staged through shared copies when they are not; an A that is not shared
 * (or no pool) gives the serial product.
 */
export async function denseMultiply(
  A: Float64Array, n: number, X: Float64Array, k: number, Y: Float64Array,
  pool?: WorkerPool,
): Promise<void> {
  if (A.length < n * n || X.length < n * k || Y.length < n * k) throw new RangeError(`denseMultiply: arrays too short for n=${n}, k=${k}`);
  if (!pool || pool.size < 2 || !isShared(A) || n < 64) { denseMultiplySerial(A, n, X, k, Y); return; }
  const Xs = isShared(X) ? X : new Float64Array(new SharedArrayBuffer(8 * n * k));
  if (Xs !== X) Xs.set(X.subarray(0, n * k));
  // The module scratch serves one product at a time; overlapping products get their own.
  let Xt = xtShared;
  const own = xtBusy;
  if (k !== 1) {
    if (own) Xt = new Float64Array(new SharedArrayBuffer(8 * n * k));
    else if (xtShared.length < n * k) Xt = xtShared = new Float64Array(new SharedArrayBuffer(8 * n * k));
    packTransposed(Xt, 0, X, 0, k, n, k);
  }
  const Ys = isShared(Y) ? Y : new Float64Array(new SharedArrayBuffer(8 * n * k));
  const s = rowSplits(0, n, pool.size, false);
  if (!own) xtBusy = true;
  try {
    await pool.map(multiplyRowsTask, s.slice(0, -1).map((r, t) => [A, n, Xs, Xt, k, Ys, r, s[t + 1]]));
  } finally {
    if (!own) xtBusy = false;
  }
  if (Ys !== Y) Y.set(Ys.subarray(0, n * k));
}
