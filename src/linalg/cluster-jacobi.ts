/**
 * Block-Jacobi preconditioner from given dense diagonal blocks (Saad, Iterative Methods for
 * Sparse Linear Systems, 2nd ed., §10.2): Z = D⁻¹·R with D block diagonal over disjoint
 * index sets, each block given already gathered (e.g. the near-field diagonal blocks of a
 * hierarchical matrix, which never exists as a whole). Cholesky per block, LU with partial
 * pivoting when Cholesky fails or `lu` is asked for. The workers' version (parallelBlockJacobi)
 * then replaces each factor by the block's explicit inverse, in the same m² numbers
 * (block-inverse.ts), so an application is one SIMD product per block whatever k is.
 */
import { choleskyFactorSerial, choleskySolve, NotPositiveDefiniteError } from "./cholesky.js";
import { luFactorSerial, luSolve } from "./lu.js";
import { applyInverse, blockInverseAvailable, choleskyInverseInPlace, luInverseInPlace } from "./block-inverse.js";
import type { WorkerPool } from "./pool.js";
import { task } from "./task.js";

export type BlockPreconditionerFn = (R: Float64Array, Z: Float64Array, k: number) => void;

/**
 * blocks[b] is |sets[b]|² row-major, entry (a, c) = A[sets[b][a], sets[b][c]]; factored in
 * place. Unknowns in no set pass through unchanged.
 */
export function blockJacobiFromBlocks(blocks: Float64Array[], sets: Uint32Array[], n: number, opts: { lu?: boolean } = {}): BlockPreconditionerFn {
  const piv: (Int32Array | null)[] = [];
  const covered = new Uint8Array(n);
  let maxSize = 0;
  blocks.forEach((D, b) => {
    const I = sets[b], m = I.length;
    if (D.length < m * m) throw new RangeError(`diagonal block ${b} holds ${D.length} values, need ${m}×${m}`);
    for (let a = 0; a < m; a++) {
      if (I[a] >= n || covered[I[a]]) throw new RangeError(`index ${I[a]} of block ${b} is outside 0..${n - 1} or in two blocks`);
      covered[I[a]] = 1;
    }
    if (m > maxSize) maxSize = m;
    if (!opts.lu) {
      const copy = D.slice(0, m * m);
      try { choleskyFactorSerial(D, m); piv.push(null); return; }
      catch (e) { if (!(e instanceof NotPositiveDefiniteError)) throw e; D.set(copy); }
    }
    piv.push(luFactorSerial(D, m));
  });
  const free: number[] = [];
  for (let i = 0; i < n; i++) if (!covered[i]) free.push(i);
  const freeRows = Uint32Array.from(free);
  let W = new Float64Array(0);
  return (R, Z, k) => {
    if (W.length < maxSize * k) W = new Float64Array(maxSize * k);
    for (let a = 0; a < freeRows.length; a++) { const r = freeRows[a] * k; for (let c = 0; c < k; c++) Z[r + c] = R[r + c]; }
    for (let b = 0; b < blocks.length; b++) {
      const I = sets[b], m = I.length, D = blocks[b], p = piv[b];
      for (let a = 0; a < m; a++) { const r = I[a] * k; for (let c = 0; c < k; c++) W[a * k + c] = R[r + c]; }
      // The solves read only the first m·k entries of W.
      if (p === null) choleskySolve(D, m, W, k); else luSolve(D, p, m, W, k);
      for (let a = 0; a < m; a++) { const r = I[a] * k; for (let c = 0; c < k; c++) Z[r + c] = W[a * k + c]; }
    }
  };
}

/** Z = M⁻¹·R for n×k row-major blocks in shared memory, possibly on the workers. */
export type AsyncBlockPreconditionerFn = (R: Float64Array, Z: Float64Array, k: number) => Promise<void>;

/**
 * Block-Jacobi preconditioner stored in shared memory: every block's factor packed in one
 * buffer, factored and applied on the pool's workers, each taking a contiguous share of the
 * blocks of about equal m² (the sets are disjoint, so the workers write disjoint rows of Z).
 */
export interface SharedBlockJacobi {
  /** Factors or inverses, block b at offsets[b] (m_b² numbers). */
  factors: Float64Array;
  offsets: Float64Array;
  /** Unknowns of block b: index[istart[b] .. istart[b + 1]). */
  index: Uint32Array;
  istart: Float64Array;
  /** LU pivots of block b at istart[b] (LU blocks only); kind 0 = Cholesky factor, 1 = LU factor, 2 = explicit inverse. */
  pivots: Int32Array;
  kind: Uint8Array;
  /** Worker w applies blocks parts[w] .. parts[w + 1]. */
  parts: Float64Array;
  lu: boolean;
  /** Replace the factors by the inverses (where this thread has the SIMD kernel). */
  inverse: boolean;
}

/** Kind of a stored block. */
export const BLOCK_CHOLESKY = 0, BLOCK_LU = 1, BLOCK_INVERSE = 2;

let nextJacobiId = 1;
const installedJacobi = new Map<number, SharedBlockJacobi>();

/**
 * As blockJacobiFromBlocks, but the factorisation and every application run on `pool`'s
 * workers. `blocks` are moved into shared memory (each entry of the list is replaced by an
 * empty array once copied), or, given as a function, write each block straight into its
 * place (`into[b]`, m_b² row-major), so no second copy is ever held. Call `release` when done.
 * `inverse: false` keeps the factors and applies forward and back substitution (the
 * reference, and what a thread without WebAssembly SIMD does anyway).
 */
export async function parallelBlockJacobi(blocks: Float64Array[] | ((into: Float64Array[]) => void), sets: Uint32Array[], n: number,
  pool: Pick<WorkerPool, "size" | "run">,
  opts: { lu?: boolean; inverse?: boolean } = {}): Promise<{ apply: AsyncBlockPreconditionerFn; release: () => Promise<void>; kind: Uint8Array }> {
  const nb = sets.length;
  if (Array.isArray(blocks) && blocks.length !== nb) throw new RangeError(`${blocks.length} diagonal blocks for ${nb} index sets`);
  const offsets = new Float64Array(new SharedArrayBuffer(8 * (nb + 1)));
  const istart = new Float64Array(new SharedArrayBuffer(8 * (nb + 1)));
  const covered = new Uint8Array(n);
  let total = 0, count = 0;
  for (let b = 0; b < nb; b++) {
    const I = sets[b], m = I.length;
    if (Array.isArray(blocks) && blocks[b].length < m * m) throw new RangeError(`diagonal block ${b} holds ${blocks[b].length} values, need ${m}×${m}`);
    for (let a = 0; a < m; a++) {
      if (I[a] >= n || covered[I[a]]) throw new RangeError(`index ${I[a]} of block ${b} is outside 0..${n - 1} or in two blocks`);
      covered[I[a]] = 1;
    }
    offsets[b] = total; istart[b] = count;
    total += m * m; count += m;
  }
  offsets[nb] = total; istart[nb] = count;
  const factors = new Float64Array(new SharedArrayBuffer(8 * Math.max(1, total)));
  const index = new Uint32Array(new SharedArrayBuffer(4 * Math.max(1, count)));
  for (let b = 0; b < nb; b++) index.set(sets[b], istart[b]);
  if (Array.isArray(blocks)) {
    // Each block is dropped from the caller's list once copied, so the two copies never coexist whole.
    for (let b = 0; b < nb; b++) { factors.set(blocks[b].subarray(0, sets[b].length ** 2), offsets[b]); blocks[b] = new Float64Array(0); }
  } else blocks(Array.from({ length: nb }, (_, b) => factors.subarray(offsets[b], offsets[b + 1])));
  const pivots = new Int32Array(new SharedArrayBuffer(4 * Math.max(1, count)));
  const kind = new Uint8Array(new SharedArrayBuffer(Math.max(1, nb)));
  // Contiguous shares of about equal m² (the cost of both the solve and, as m³, roughly the factorisation).
  const threads = Math.max(1, pool.size);
  const parts = new Float64Array(new SharedArrayBuffer(8 * (threads + 1)));
  for (let w = 1, b = 0, acc = 0; w < threads; w++) {
    while (b < nb && acc < (total * w) / threads) { acc += offsets[b + 1] - offsets[b]; b++; }
    parts[w] = b;
  }
  parts[threads] = nb;
  const layout: SharedBlockJacobi = { factors, offsets, index, istart, pivots, kind, parts, lu: !!opts.lu, inverse: opts.inverse ?? true };
  const id = nextJacobiId++;
  await Promise.all(Array.from({ length: threads }, (_, w) => pool.run(clusterJacobiInstallTask, w, [id, w, layout])));
  const free: number[] = [];
  for (let i = 0; i < n; i++) if (!covered[i]) free.push(i);
  const freeRows = Uint32Array.from(free);
  return {
    apply: async (R, Z, k) => {
      for (let a = 0; a < freeRows.length; a++) { const r = freeRows[a] * k; for (let c = 0; c < k; c++) Z[r + c] = R[r + c]; }
      await Promise.all(Array.from({ length: threads }, (_, w) => pool.run(clusterJacobiApplyTask, w, [id, w, R, Z, k])));
    },
    release: async () => {
      await Promise.all(Array.from({ length: threads }, (_, w) => pool.run(clusterJacobiReleaseTask, w, [id])));
    },
    kind,
  };
}

/**
 * In a worker: keep the layout and factor this worker's share of the blocks in place, then
 * (L.inverse) overwrite each factor with the block's inverse.
 */
export function installAndFactorShare(id: number, part: number, L: SharedBlockJacobi): number {
  installedJacobi.set(id, L);
  const b0 = L.parts[part], b1 = L.parts[part + 1];
  const invert = L.inverse && blockInverseAvailable();
  for (let b = b0; b < b1; b++) {
    const o = L.offsets[b], s = L.istart[b], m = L.istart[b + 1] - s;
    const D = L.factors.subarray(o, o + m * m);
    if (!L.lu) {
      const copy = D.slice();
      try {
        choleskyFactorSerial(D, m);
        if (invert) { choleskyInverseInPlace(D, m); L.kind[b] = BLOCK_INVERSE; } else L.kind[b] = BLOCK_CHOLESKY;
        continue;
      } catch (e) { if (!(e instanceof NotPositiveDefiniteError)) throw e; D.set(copy); }
    }
    const piv = luFactorSerial(D, m);
    if (invert) { luInverseInPlace(D, piv, m); L.kind[b] = BLOCK_INVERSE; }
    else { L.pivots.set(piv, s); L.kind[b] = BLOCK_LU; }
  }
  return b1 - b0;
}

export function releaseShare(id: number): boolean {
  return installedJacobi.delete(id);
}

let Wj = new Float64Array(0), Wz = new Float64Array(0);

/** In a worker: Z rows of this worker's blocks = D_b⁻¹·R rows. */
export function applyShare(id: number, part: number, R: Float64Array, Z: Float64Array, k: number): number {
  const L = installedJacobi.get(id);
  if (!L) throw new Error(`block-Jacobi preconditioner ${id} is not installed in this worker`);
  const b0 = L.parts[part], b1 = L.parts[part + 1];
  for (let b = b0; b < b1; b++) {
    const s = L.istart[b], m = L.istart[b + 1] - s, o = L.offsets[b];
    if (Wj.length < m * k) { Wj = new Float64Array(m * k); Wz = new Float64Array(m * k); }
    for (let a = 0; a < m; a++) { const r = L.index[s + a] * k; for (let c = 0; c < k; c++) Wj[a * k + c] = R[r + c]; }
    const kind = L.kind[b];
    let out = Wj;
    if (kind === BLOCK_INVERSE) { applyInverse(L.factors, o, m, Wj, Wz, k); out = Wz; }
    else {
      const D = L.factors.subarray(o, o + m * m);
      if (kind === BLOCK_CHOLESKY) choleskySolve(D, m, Wj, k); else luSolve(D, L.pivots.subarray(s, s + m), m, Wj, k);
    }
    for (let a = 0; a < m; a++) { const r = L.index[s + a] * k; for (let c = 0; c < k; c++) Z[r + c] = out[a * k + c]; }
  }
  return b1 - b0;
}

export const clusterJacobiInstallTask = task(import.meta.url, { installAndFactorShare });
export const clusterJacobiApplyTask = task(import.meta.url, { applyShare });
export const clusterJacobiReleaseTask = task(import.meta.url, { releaseShare });
