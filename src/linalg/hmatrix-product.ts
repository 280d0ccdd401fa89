/**
 * The stored form of a hierarchical matrix (hmatrix.ts) and its product with n×k blocks of
 * vectors, a share of the blocks at a time: each worker keeps the layout once installed
 * and accumulates its share into its own Y. The same functions run on the main thread for
 * the serial path.
 */
import { denseBlockMultiplyAdd, denseBlockMultiplyAddSimd, SIMD_MIN_RHS } from "./dense-block.js";
import { lowRankMultiplyAdd, lowRankMultiplyAddSimd, SIMD_MIN_RANK } from "./low-rank-block.js";
import { simdAvailable } from "./wasm-kernel.js";
import { task } from "./task.js";

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

/** In a worker: keep a layout for later products. */
export function installLayout(id: number, layout: HMatrixLayout): number {
  installed.set(id, layout);
  return layout.blocks.length / BLOCK_FIELDS;
}

export function releaseLayout(id: number): boolean {
  return installed.delete(id);
}

/** In a worker: Y = (part `part` of the installed layout's blocks)·X, n×k row-major in tree positions. */
export function installedPartProduct(id: number, part: number, X: Float64Array, Y: Float64Array, k: number, kernel: ProductKernel = "auto"): number {
  const layout = installed.get(id);
  if (!layout) throw new Error(`hierarchical matrix ${id} is not installed in this worker`);
  partProduct(layout, layout.uses[part], X, Y, k, kernel);
  return part;
}

export const hmatrixInstallTask = task(import.meta.url, { installLayout });
export const hmatrixReleaseTask = task(import.meta.url, { releaseLayout });
export const hmatrixProductTask = task(import.meta.url, { installedPartProduct });

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
