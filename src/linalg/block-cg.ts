/**
 * Block preconditioned conjugate gradients for SPD systems A·X = B with k right-hand sides:
 * one Krylov space shared by all columns (O'Leary, "The block conjugate gradient algorithm
 * and related methods", Linear Algebra Appl. 29, 293–322, 1980), where `pcg` (cg.ts) runs k separate
 * recurrences over shared products. Each step minimises the A-norm error of every column over
 * the whole block of search directions, so a column profits from the directions the others
 * found; on the pad arrays this takes fewer products with A than k separate recurrences.
 *
 * Variant: the breakdown-free block CG of Ji & Li ("A breakdown-free block conjugate gradient
 * method", BIT Numer. Math., doi:10.1007/s10543-016-0631-z; title and the orth(·) of the search
 * space checked against the abstract, volume 57 (2017) and the recurrence below from memory): the new search block is an orthonormal basis of Z − P·(PᵀAP)⁻¹·(AP)ᵀZ
 * (Z = M⁻¹R) with the near-dependent directions dropped, so duplicate, dependent or converged
 * columns shrink the block instead of making PᵀAP singular (the breakdown of O'Leary's form).
 * Per step, with P n×s (s ≤ w), Q = A·P, R the n×w residuals of the w columns still moving:
 *   C = PᵀQ (Cholesky), α = C⁻¹·PᵀR, X += P·α, R −= Q·α,
 *   Z = M⁻¹R, W = Z − P·C⁻¹·QᵀZ, P = orth(W).
 * orth is Cholesky QR with diagonal pivoting on the column-normalised Gram matrix WᵀW (scale
 * invariant: a column's size does not decide whether it is dropped, only its dependence on the
 * others); pivots below DEPENDENCE end the factorisation. Rounding leaves P orthonormal to about
 * ε/DEPENDENCE (cond(W_kept)² · ε), which is all the step needs: α and β solve with PᵀAP itself.
 *
 * A column leaves the block when its recursive residual reaches tol·‖b‖; when none is left the
 * true residual B − A·X is formed and the columns above tol restart (as pcg does). All n×s·s×w
 * and s×n·n×w products go through the WebAssembly SIMD kernel (gemmStridedSimd) where it is
 * available; the s×s work is plain JavaScript (k³, negligible beside n·k²).
 *
 * Layout as pcg: n×k row-major blocks in shared memory; `apply` is called with width s,
 * `precondition` with width w. Internally the columns of X sit in "slots" so that the moving
 * ones are the leading w columns of the n×k array (the product writes them with stride k).
 */
import { sharedFloat64, type WorkerPool } from "./pool.js";
import { gemmStridedSimd, simdAvailable } from "./wasm-kernel.js";
import { task } from "./task.js";
import { columnNorms, type BlockOperator, type BlockPreconditioner, type KrylovOptions, type KrylovResult } from "./cg.js";

/**
 * Smallest pivot of the column-normalised Gram matrix kept by orth: a direction whose part
 * independent of the kept ones is below √DEPENDENCE = 1e-6 of its length is dropped.
 */
export const DEPENDENCE = 1e-12;

/** blockPcg's options: pcg's, and the pool that shares the block products. */
export interface BlockKrylovOptions extends KrylovOptions {
  /** Workers for the n×s·s×w and s×n·n×w products (the main thread takes one share); serial when absent. */
  pool?: WorkerPool;
  /** Smallest product (n·s·w multiply-adds) split over the pool (default PARALLEL_MIN_WORK). */
  parallelMinWork?: number;
}

/**
 * Smallest block product split over the pool: below it the message to the worker (about
 * 0.1 ms) costs more than half the product (at ~6 GFLOP/s, 2·10⁶ multiply-adds take ~0.7 ms).
 */
export const PARALLEL_MIN_WORK = 2e6;

/** C ← C + α·A·Bᵀ with strided operands (gemmStridedSimd's arguments), SIMD where available; also the pool task. */
export function gemm(C: Float64Array, cOff: number, ldc: number,
  A: Float64Array, aOff: number, aRow: number, aCol: number,
  B: Float64Array, bOff: number, bRow: number, bCol: number,
  m: number, p: number, kc: number, alpha: number): void {
  if (m <= 0 || p <= 0 || kc <= 0) return;
  if (simdAvailable()) { gemmStridedSimd(C, cOff, ldc, A, aOff, aRow, aCol, B, bOff, bRow, bCol, m, p, kc, alpha); return; }
  for (let i = 0; i < m; i++) {
    const a0 = aOff + i * aRow, c0 = cOff + i * ldc;
    for (let j = 0; j < p; j++) {
      const b0 = bOff + j * bRow;
      let s = 0;
      for (let t = 0; t < kc; t++) s += A[a0 + t * aCol] * B[b0 + t * bCol];
      C[c0 + j] += alpha * s;
    }
  }
}

export const gemmTask = task(import.meta.url, { gemm });

/** Splits the block products over the main thread and the pool's workers. */
class Products {
  private readonly parts: number;
  private scratch: Float64Array[] = [];
  constructor(private readonly pool: WorkerPool | undefined, private readonly minWork: number, k: number) {
    this.parts = pool ? Math.max(1, pool.size) : 1;
    // Partial sums of the depth-split products, one k×k per worker share.
    if (this.parts > 1) for (let q = 1; q < this.parts; q++) this.scratch.push(sharedFloat64(k * k));
  }

  /** C(m×p) += α·A·Bᵀ split by rows of C (for the n-row products). */
  async rows(C: Float64Array, ldc: number, A: Float64Array, aRow: number, aCol: number, B: Float64Array, bRow: number, bCol: number,
    m: number, p: number, kc: number, alpha: number): Promise<void> {
    const parts = this.parts;
    if (parts === 1 || m * p * kc < this.minWork) { gemm(C, 0, ldc, A, 0, aRow, aCol, B, 0, bRow, bCol, m, p, kc, alpha); return; }
    const step = Math.ceil(m / parts), jobs: Promise<unknown>[] = [];
    for (let q = 1; q < parts; q++) {
      const r0 = q * step, rows = Math.min(m, r0 + step) - r0;
      if (rows > 0) jobs.push(this.pool!.run(gemmTask, q - 1, [C, r0 * ldc, ldc, A, r0 * aRow, aRow, aCol, B, 0, bRow, bCol, rows, p, kc, alpha]));
    }
    gemm(C, 0, ldc, A, 0, aRow, aCol, B, 0, bRow, bCol, Math.min(m, step), p, kc, alpha);
    await Promise.all(jobs);
  }

  /** C(m×p, row stride p) = A·Bᵀ over depth kc split between the threads (C overwritten). */
  async depth(C: Float64Array, A: Float64Array, aRow: number, aCol: number, B: Float64Array, bRow: number, bCol: number,
    m: number, p: number, kc: number): Promise<void> {
    const parts = this.parts;
    C.fill(0, 0, m * p);
    if (parts === 1 || m * p * kc < this.minWork) { gemm(C, 0, p, A, 0, aRow, aCol, B, 0, bRow, bCol, m, p, kc, 1); return; }
    const step = Math.ceil(kc / parts), jobs: Promise<unknown>[] = [], used: Float64Array[] = [];
    for (let q = 1; q < parts; q++) {
      const t0 = q * step, depth = Math.min(kc, t0 + step) - t0;
      if (depth <= 0) continue;
      const S = this.scratch[q - 1];
      S.fill(0, 0, m * p);
      used.push(S);
      jobs.push(this.pool!.run(gemmTask, q - 1, [S, 0, p, A, t0 * aCol, aRow, aCol, B, t0 * bCol, bRow, bCol, m, p, depth, 1]));
    }
    gemm(C, 0, p, A, 0, aRow, aCol, B, 0, bRow, bCol, m, p, Math.min(kc, step), 1);
    await Promise.all(jobs);
    for (const S of used) for (let i = 0; i < m * p; i++) C[i] += S[i];
  }
}

/** Cholesky of the s×s SPD matrix C (row-major, lower triangle overwritten by L); false when not positive definite. */
function cholesky(C: Float64Array, s: number): boolean {
  for (let j = 0; j < s; j++) {
    let d = C[j * s + j];
    for (let t = 0; t < j; t++) d -= C[j * s + t] * C[j * s + t];
    if (!(d > 0)) return false;
    d = Math.sqrt(d);
    C[j * s + j] = d;
    for (let i = j + 1; i < s; i++) {
      let v = C[i * s + j];
      for (let t = 0; t < j; t++) v -= C[i * s + t] * C[j * s + t];
      C[i * s + j] = v / d;
    }
  }
  return true;
}

/** F ← (L·Lᵀ)⁻¹·F for the s×w row-major F. */
function choleskySolveSmall(L: Float64Array, s: number, F: Float64Array, w: number): void {
  for (let i = 0; i < s; i++) {
    const fi = i * w;
    for (let t = 0; t < i; t++) {
      const l = L[i * s + t], ft = t * w;
      for (let c = 0; c < w; c++) F[fi + c] -= l * F[ft + c];
    }
    const d = 1 / L[i * s + i];
    for (let c = 0; c < w; c++) F[fi + c] *= d;
  }
  for (let i = s - 1; i >= 0; i--) {
    const fi = i * w;
    for (let t = i + 1; t < s; t++) {
      const l = L[t * s + i], ft = t * w;
      for (let c = 0; c < w; c++) F[fi + c] -= l * F[ft + c];
    }
    const d = 1 / L[i * s + i];
    for (let c = 0; c < w; c++) F[fi + c] *= d;
  }
}

/** Per-solve workspace for orth: the w×w Gram matrix, its pivots and scales, the w×s map T. */
interface OrthSpace { G: Float64Array; T: Float64Array; Li: Float64Array; piv: Int32Array; d: Float64Array }

/**
 * P (n×s, leading n·s entries) ← an orthonormal basis of the columns of W (n×w) with the
 * near-dependent and zero ones dropped; returns s. W is not changed; P must not alias W.
 */
export async function orthonormalBasis(W: Float64Array, n: number, w: number, P: Float64Array, ws?: OrthSpace, products?: Products): Promise<number> {
  const sp = ws ?? orthSpace(w), mul = products ?? new Products(undefined, 0, w);
  const { G, T, Li, piv, d } = sp;
  await mul.depth(G, W, 1, w, W, 1, w, w, w, n);
  for (let j = 0; j < w; j++) { d[j] = Math.sqrt(G[j * w + j]); piv[j] = j; }
  // Column-normalised Gram matrix (zero columns: zero rows and columns, never chosen).
  for (let i = 0; i < w; i++)
    for (let j = 0; j < w; j++) G[i * w + j] = d[i] > 0 && d[j] > 0 ? G[i * w + j] / (d[i] * d[j]) : 0;
  // Cholesky with diagonal pivoting, full symmetric storage (rows and columns swapped).
  let s = 0;
  for (let r = 0; r < w; r++) {
    let q = r;
    for (let j = r + 1; j < w; j++) if (G[j * w + j] > G[q * w + q]) q = j;
    if (!(G[q * w + q] > DEPENDENCE)) break;
    if (q !== r) {
      for (let j = 0; j < w; j++) { const t = G[r * w + j]; G[r * w + j] = G[q * w + j]; G[q * w + j] = t; }
      for (let i = 0; i < w; i++) { const t = G[i * w + r]; G[i * w + r] = G[i * w + q]; G[i * w + q] = t; }
      const t = piv[r]; piv[r] = piv[q]; piv[q] = t;
    }
    const l = Math.sqrt(G[r * w + r]);
    G[r * w + r] = l;
    for (let i = r + 1; i < w; i++) G[i * w + r] /= l;
    for (let i = r + 1; i < w; i++) {
      const gi = G[i * w + r];
      for (let j = r + 1; j <= i; j++) { const v = G[i * w + j] - gi * G[j * w + r]; G[i * w + j] = v; G[j * w + i] = v; }
    }
    s = r + 1;
  }
  if (s === 0) return 0;
  // Li = L⁻¹ (s×s lower, L in G's leading lower triangle, row stride w).
  for (let i = 0; i < s; i++) {
    for (let j = 0; j < i; j++) {
      let v = 0;
      for (let t = j; t < i; t++) v += G[i * w + t] * Li[t * s + j];
      Li[i * s + j] = -v / G[i * w + i];
    }
    Li[i * s + i] = 1 / G[i * w + i];
    for (let j = i + 1; j < s; j++) Li[i * s + j] = 0;
  }
  // P = W·T, T (w×s) = rows piv[a] of D⁻¹·L⁻ᵀ: T[piv[a]][b] = Li[b][a] / d[piv[a]].
  T.fill(0, 0, w * s);
  for (let a = 0; a < s; a++) {
    const row = piv[a] * s, inv = 1 / d[piv[a]];
    for (let b = a; b < s; b++) T[row + b] = Li[b * s + a] * inv;
  }
  P.fill(0, 0, n * s);
  await mul.rows(P, s, W, w, 1, T, 1, s, n, s, w, 1);
  return s;
}

function orthSpace(k: number): OrthSpace {
  return { G: sharedFloat64(k * k), T: sharedFloat64(k * k), Li: new Float64Array(k * k), piv: new Int32Array(k), d: new Float64Array(k) };
}

/**
 * Solve A·X = B (B n×k row-major) by block PCG; same options and result as pcg (X, the
 * iteration count, each column's relative true residual, the true residual B − A·X itself).
 * `compact: false` keeps converged columns in the block (they keep moving, harmlessly) instead
 * of dropping them. A non-positive PᵀAP (A or M not SPD) stops the iteration.
 */
export async function blockPcg(apply: BlockOperator, precondition: BlockPreconditioner, B: Float64Array, k: number, opts: BlockKrylovOptions): Promise<KrylovResult> {
  if (!Number.isInteger(k) || k < 1) throw new RangeError(`number of right-hand sides ${k} is not a positive integer`);
  const n = B.length / k;
  if (!Number.isInteger(n)) throw new RangeError(`right-hand sides hold ${B.length} values, not a multiple of k=${k}`);
  // X and E (the true residual) are n×k in slot order; R, Z, P, Q compact n×w / n×s.
  const X = sharedFloat64(n * k), E = sharedFloat64(n * k);
  const R = sharedFloat64(n * k), Z = sharedFloat64(n * k), P = sharedFloat64(n * k), Q = sharedFloat64(n * k);
  const bnorm = new Float64Array(k), rr = new Float64Array(k), est = new Float64Array(k), tolc = new Float64Array(k);
  const rn = new Float64Array(k), tmp = new Float64Array(k);
  const slot = new Int32Array(k), order = new Int32Array(k), keep = new Int32Array(k);
  const C = sharedFloat64(k * k), F = sharedFloat64(k * k);
  const ws = orthSpace(k), mul = new Products(opts.pool, opts.parallelMinWork ?? PARALLEL_MIN_WORK, k);
  if (opts.x0) X.set(opts.x0.subarray(0, n * k));
  columnNorms(B, n, k, bnorm);
  for (let c = 0; c < k; c++) {
    slot[c] = c;
    tolc[c] = opts.tol * bnorm[c];
    if (bnorm[c] === 0) for (let i = 0; i < n; i++) X[i * k + c] = 0;
  }
  let w = 0, s = 0, fresh = false;

  // Reorder the leading `width` slots of X and E: new slot j is old slot order[j].
  const permute = (width: number): void => {
    for (const V of [X, E]) {
      for (let i = 0; i < n; i++) {
        const o = i * k;
        for (let j = 0; j < width; j++) tmp[j] = V[o + order[j]];
        for (let j = 0; j < width; j++) V[o + j] = tmp[j];
      }
    }
    for (let j = 0; j < width; j++) tmp[j] = slot[order[j]];
    for (let j = 0; j < width; j++) slot[j] = tmp[j];
  };
  // E = B − A·X (slot order), rr its column norms (by original column).
  const trueResidual = async (): Promise<void> => {
    await apply(X, E, k);
    for (let i = 0; i < n; i++) {
      const o = i * k;
      for (let j = 0; j < k; j++) E[o + j] = B[o + slot[j]] - E[o + j];
    }
    columnNorms(E, n, k, rn);
    for (let j = 0; j < k; j++) rr[slot[j]] = rn[j];
    fresh = true;
  };
  // From the true residual: the columns above tol move to the leading slots, R gathers them,
  // P = orth(M⁻¹R). False when nothing is left to do (all converged, or M⁻¹R spans nothing).
  const restart = async (): Promise<boolean> => {
    await trueResidual();
    w = 0;
    for (let j = 0; j < k; j++) if (bnorm[slot[j]] > 0 && rr[slot[j]] > tolc[slot[j]]) order[w++] = j;
    let a = w;
    for (let j = 0; j < k; j++) if (!(bnorm[slot[j]] > 0 && rr[slot[j]] > tolc[slot[j]])) order[a++] = j;
    if (w === 0) return false;
    permute(k);
    for (let i = 0; i < n; i++) {
      const o = i * k, d = i * w;
      for (let j = 0; j < w; j++) R[d + j] = E[o + j];
    }
    await precondition(R.subarray(0, n * w), Z.subarray(0, n * w), w);
    s = await orthonormalBasis(Z, n, w, P, ws, mul);
    return s > 0;
  };

  let iterations = 0, moving = await restart();
  while (moving && iterations < opts.maxIter) {
    await apply(P.subarray(0, n * s), Q.subarray(0, n * s), s);
    iterations++;
    fresh = false;
    // C = PᵀQ, symmetrised (the product's rounding is not symmetric), then its Cholesky.
    await mul.depth(C, P, 1, s, Q, 1, s, s, s, n);
    for (let i = 0; i < s; i++) for (let j = 0; j < i; j++) { const v = 0.5 * (C[i * s + j] + C[j * s + i]); C[i * s + j] = v; C[j * s + i] = v; }
    if (!cholesky(C, s)) break;
    // α = C⁻¹·PᵀR; X += P·α (leading w slots, stride k); R −= Q·α.
    await mul.depth(F, P, 1, s, R, 1, w, s, w, n);
    choleskySolveSmall(C, s, F, w);
    await mul.rows(X, k, P, s, 1, F, 1, w, n, w, s, 1);
    await mul.rows(R, w, Q, s, 1, F, 1, w, n, w, s, -1);
    columnNorms(R, n, w, rn);
    let still = 0;
    for (let j = 0; j < w; j++) {
      rr[slot[j]] = rn[j];
      if (rn[j] > tolc[slot[j]]) keep[still++] = j;
    }
    if (opts.monitor) {
      for (let c = 0; c < k; c++) est[c] = bnorm[c] > 0 ? rr[c] / bnorm[c] : 0;
      opts.monitor(iterations, est);
    }
    if (still === 0) { moving = await restart(); continue; }
    if (still < w && opts.compact !== false) {
      // The converged columns leave: R closes up in place (forward pass, offsets only fall),
      // their slots move behind the moving ones.
      for (let i = 0; i < n; i++) {
        const o = i * w, d = i * still;
        for (let a = 0; a < still; a++) R[d + a] = R[o + keep[a]];
      }
      let a = 0;
      for (let j = 0; j < still; j++) order[a++] = keep[j];
      for (let j = 0, b = 0; j < w; j++) { if (b < still && keep[b] === j) { b++; continue; } order[a++] = j; }
      permute(w);
      w = still;
    }
    await precondition(R.subarray(0, n * w), Z.subarray(0, n * w), w);
    // W = Z − P·C⁻¹·QᵀZ (in Z), A-orthogonal to P; then P = orth(W).
    await mul.depth(F, Q, 1, s, Z, 1, w, s, w, n);
    choleskySolveSmall(C, s, F, w);
    await mul.rows(Z, w, P, s, 1, F, 1, w, n, w, s, -1);
    s = await orthonormalBasis(Z, n, w, P, ws, mul);
    if (s === 0) moving = await restart();
  }
  if (!fresh) await trueResidual();
  // Back to the original column order.
  for (let j = 0; j < k; j++) order[slot[j]] = j;
  permute(k);
  const residuals = new Float64Array(k);
  let converged = true;
  for (let c = 0; c < k; c++) {
    residuals[c] = bnorm[c] > 0 ? rr[c] / bnorm[c] : 0;
    if (!(residuals[c] <= opts.tol)) converged = false;
  }
  return { X, iterations, residuals, residual: E, converged };
}
