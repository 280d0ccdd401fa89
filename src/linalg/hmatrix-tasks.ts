/**
 * Worker-side pieces of the hierarchical matrix (hmatrix.ts): building a chunk of blocks
 * from an entry generator, and the product of a share of the blocks with n×k blocks of
 * vectors. The same functions run on the main thread for the serial path.
 *
 * A worker cannot receive a function, so the build task receives the generator as an
 * `EntrySource`: a module URL and export name, plus arguments placed before and after
 * (rows, cols, out). The linear algebra never imports the module that defines it.
 */
import { compressBlock } from "./aca.js";
import {
  lowRankMultiplyAdd, denseBlockMultiplyAdd, lowRankMultiplyAddSimd, denseBlockMultiplyAddSimd, SIMD_MIN_RHS, SIMD_MIN_RANK,
} from "./low-rank.js";
import { simdAvailable } from "./wasm-kernel.js";
import { compiledUrl } from "./pool.js";

/** out[a·cols.length + b] = M[rows[a], cols[b]]: the entries of any block, row-major. */
export type EntryGenerator = (rows: Uint32Array, cols: Uint32Array, out: Float64Array) => void;

/** An entry generator by name: entry(rows, cols, out) = module[name](...before, rows, cols, out, ...after). */
export interface EntrySource {
  module: string;
  name: string;
  before?: unknown[];
  after?: unknown[];
}

/** Fields per job in a build chunk: row start, row end, column start, column end (tree positions), kind. */
export const JOB_FIELDS = 5;
export const JOB_NEAR = 0;
export const JOB_FAR = 1;

/** What a chunk returns: its data (shared) and, per job, offset into data and rank (−1: stored dense). */
export interface BuiltChunk {
  data: Float64Array;
  offset: Float64Array;
  rank: Int32Array;
}

let u = new Float64Array(0), v = new Float64Array(0);
let store = new Float64Array(0);
const one = new Uint32Array(1);

/** Numbers of ACA scratch per far block (u and v together): 128 MB. */
const ACA_SCRATCH = 16 * 2 ** 20;
/** Least rank cap, above anything smooth kernels need at the tolerances used (ranks ≤ 50 measured). */
const MIN_ACA_RANK = 200;
/** Largest block stored dense when it does not compress (64 M numbers, 512 MB). */
const DENSE_FALLBACK = 64 * 2 ** 20;

/**
 * Build the blocks `jobs` (JOB_FIELDS per job) of the matrix whose entries `gen` yields, in
 * tree positions (original index = order[position]). Far blocks: ACA+ and recompression to
 * tol (relative, Frobenius; aca.ts compressBlock), dense when the rank would not pay.
 */
export function buildChunk(gen: EntryGenerator, order: Uint32Array, jobs: Float64Array, tol: number): BuiltChunk {
  const count = jobs.length / JOB_FIELDS;
  const offset = new Float64Array(count), rank = new Int32Array(count);
  let used = 0;
  const need = (extra: number): void => {
    if (used + extra <= store.length) return;
    const next = new Float64Array(Math.max(used + extra, Math.ceil(store.length * 1.5), 1 << 16));
    next.set(store.subarray(0, used));
    store = next;
  };
  for (let q = 0; q < count; q++) {
    const o = q * JOB_FIELDS;
    const rs = jobs[o], re = jobs[o + 1], cs = jobs[o + 2], ce = jobs[o + 3], kind = jobs[o + 4];
    const m = re - rs, n = ce - cs;
    const rows = order.subarray(rs, re), cols = order.subarray(cs, ce);
    offset[q] = used;
    if (kind === JOB_FAR) {
      // ACA may run past the rank where low rank stops paying (r·(m + n) ≥ m·n): its
      // tolerance is finer than the block's, and recompression takes most of that back.
      // On large blocks the scratch for min(m, n) terms would not fit (an 80k × 80k block of a
      // 1.3M-panel model asks for 51 GB): there the terms are capped at ACA_SCRATCH numbers.
      const acaRank = Math.min(m, n, Math.max(MIN_ACA_RANK, Math.floor(ACA_SCRATCH / (m + n))));
      if (u.length < acaRank * m) u = new Float64Array(acaRank * m);
      if (v.length < acaRank * n) v = new Float64Array(acaRank * n);
      need(acaRank * (m + n));
      const r = compressBlock(m, n,
        (i, out) => { one[0] = order[rs + i]; gen(one, cols, out); },
        (j, out) => { one[0] = order[cs + j]; gen(rows, one, out); },
        tol, acaRank, u, v, store, used);
      if (r >= 0 && r * (m + n) < m * n) {
        rank[q] = r;
        used += r * (m + n);
        continue;
      }
    }
    if (kind === JOB_FAR && m * n > DENSE_FALLBACK) {
      throw new Error(`an admissible ${m} × ${n} block did not compress to rank ${Math.min(m, n, Math.max(MIN_ACA_RANK, Math.floor(ACA_SCRATCH / (m + n))))} at tolerance ${tol.toExponential(1)} and is too large to store dense; loosen --tol or check the mesh for coincident panels`);
    }
    need(m * n);
    gen(rows, cols, store.subarray(used, used + m * n));
    rank[q] = -1;
    used += m * n;
  }
  const data = new Float64Array(new SharedArrayBuffer(8 * Math.max(1, used)));
  data.set(store.subarray(0, used));
  return { data, offset, rank };
}

/** Worker task: import the generator named by `source` and build a chunk. */
export async function hmatrixBuildTask(source: EntrySource, order: Uint32Array, jobs: Float64Array, tol: number): Promise<BuiltChunk> {
  return buildChunk(await loadGenerator(source), order, jobs, tol);
}

/** The generator an EntrySource names (the module loads once per thread: import() caches it). */
export async function loadGenerator(source: EntrySource): Promise<EntryGenerator> {
  const mod = (await import(compiledUrl(source.module))) as Record<string, unknown>;
  const fn = mod[source.name];
  if (typeof fn !== "function") throw new Error(`no entry generator ${source.name} in ${source.module}`);
  const before = source.before ?? [], after = source.after ?? [];
  const f = fn as (...a: unknown[]) => void;
  const gen: EntryGenerator = (rows, cols, out) => { f(...before, rows, cols, out, ...after); };
  return gen;
}

/**
 * Stored layout shared with the workers. Per block (BLOCK_FIELDS): row start, row end,
 * column start, column end (tree positions), buffer index, offset, rank (−1 dense).
 */
export const BLOCK_FIELDS = 7;
export interface HMatrixLayout {
  blocks: Float64Array;
  buffers: Float64Array[];
  /** Per part (worker): block uses, 2·block + 1 for the transposed use. */
  uses: Int32Array[];
  maxRank: number;
}

const installed = new Map<number, HMatrixLayout>();
let T = new Float64Array(0);

/** Worker task: keep a layout for later products. */
export function hmatrixInstallTask(id: number, layout: HMatrixLayout): number {
  installed.set(id, layout);
  return layout.blocks.length / BLOCK_FIELDS;
}

export function hmatrixReleaseTask(id: number): boolean {
  return installed.delete(id);
}

/** Worker task: Y = (part `part` of the blocks)·X, n×k row-major in tree positions. */
export function hmatrixProductTask(id: number, part: number, X: Float64Array, Y: Float64Array, k: number, kernel: ProductKernel = "auto"): number {
  const layout = installed.get(id);
  if (!layout) throw new Error(`hierarchical matrix ${id} is not installed in this worker`);
  partProduct(layout, layout.uses[part], X, Y, k, kernel);
  return part;
}

/**
 * Which code runs the block products: "js" (plain loops), or "auto" (the WebAssembly SIMD
 * kernel of wasm-kernel.ts for k ≥ SIMD_MIN_RHS where this thread supports it).
 */
export type ProductKernel = "auto" | "js";

/** Y = Σ over the uses of block·X (Y zeroed first). */
export function partProduct(layout: HMatrixLayout, uses: Int32Array, X: Float64Array, Y: Float64Array, k: number, kernel: ProductKernel = "auto"): void {
  Y.fill(0);
  const simd = kernel === "auto" && k >= SIMD_MIN_RHS && simdAvailable();
  if (T.length < layout.maxRank * k) T = new Float64Array(Math.max(1, layout.maxRank * k));
  const B = layout.blocks, bufs = layout.buffers;
  for (let a = 0; a < uses.length; a++) {
    const use = uses[a], b = use >> 1, t = (use & 1) === 1;
    const o = b * BLOCK_FIELDS;
    const rs = B[o], re = B[o + 1], cs = B[o + 2], ce = B[o + 3], data = bufs[B[o + 4]], off = B[o + 5], r = B[o + 6];
    const m = re - rs, n = ce - cs;
    if (r < 0) {
      if (simd) denseBlockMultiplyAddSimd(data, off, m, n, t, X, Y, rs, cs, k);
      else denseBlockMultiplyAdd(data, off, m, n, t, X, Y, rs, cs, k);
      continue;
    }
    if (r === 0) continue;
    if (simd && r >= SIMD_MIN_RANK) {
      if (!t) lowRankMultiplyAddSimd(data, off, off + m * r, m, n, r, X, cs, Y, rs, k, T);
      else lowRankMultiplyAddSimd(data, off + m * r, off, n, m, r, X, rs, Y, cs, k, T);
    } else if (!t) lowRankMultiplyAdd(data, off, off + m * r, m, n, r, X, cs, Y, rs, k, T);
    else lowRankMultiplyAdd(data, off + m * r, off, n, m, r, X, rs, Y, cs, k, T);
  }
}
