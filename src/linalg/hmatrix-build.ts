/**
 * The blocks of a hierarchical matrix built from an entry generator (the worker side of
 * buildHMatrix, hmatrix.ts): a chunk of jobs, each a near block stored dense or an admissible
 * block compressed by ACA+ and recompression (aca.ts), into one shared buffer per chunk. The
 * same function runs on the main thread for the serial path.
 */
import { compressBlock } from "./aca.js";
import { loadGenerator, type EntryGenerator, type EntrySourceData } from "./entry-generator.js";
import { task } from "./task.js";

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

/** Import the generator `source` names (once per thread) and build a chunk. */
export async function buildChunkFromSource(source: EntrySourceData, order: Uint32Array, jobs: Float64Array, tol: number): Promise<BuiltChunk> {
  return buildChunk(await loadGenerator(source), order, jobs, tol);
}

export const hmatrixBuildTask = task(import.meta.url, { buildChunkFromSource });
