/**
 * One product y = M·x with a matrix known only through an entry generator, never stored:
 * the blocks of an H-matrix block tree (block-tree.ts) are evaluated one at a time and applied
 * at once, near blocks dense, admissible blocks through their ACA+ cross approximation
 * (aca.ts; Bebendorf & Rjasanow, Computing 70, 2003) of the block to the tolerance. For a
 * single vector this costs what building the H-matrix costs (rank·(m + n) entries per
 * admissible block) without its memory, and replaces a sum over all n² entries.
 *
 * The generator may yield several matrices over the same index sets at once (`components`
 * c, e.g. the three components of a vector kernel): gen(rows, cols, out) fills
 * out[(comp·rows.length + a)·cols.length + b] = M_comp[rows[a], cols[b]]. The stacked
 * c·m × n block is approximated as one matrix; the c rows of one index come from one call
 * and are cached for the pivots that ask for them.
 *
 * Rows may be masked (`rows`: only those indices are wanted); masked-out rows are never
 * evaluated. Blocks run on the worker pool in chunks of about equal work; each worker sums
 * into its own shared copy of y, added afterwards.
 */
import { clusterPoints } from "./cluster.js";
import { blockTree } from "./block-tree.js";
import { aca } from "./aca.js";
import { sharedFloat64, type WorkerPool } from "./pool.js";
import { loadGenerator, type EntryGenerator, type EntrySource, type EntrySourceData } from "./entry-generator.js";
import { task } from "./task.js";

export interface ApplyOnceOptions {
  /** Relative accuracy of each admissible block (ACA stopping rule, Frobenius). */
  tolerance: number;
  /** Matrices the generator yields at once (default 1). */
  components?: number;
  /** Most points per leaf cluster (default 32). */
  leafSize?: number;
  /** Admissibility η (default 2). */
  eta?: number;
  /** Per point half-width widening the cluster boxes (see block-tree.ts). */
  pad?: Float64Array;
  /** Only these rows are wanted (flag per index, 1 = wanted); all when absent. */
  rows?: Uint8Array;
  pool?: WorkerPool;
}

/** Fields per job: row start, row end, column start, column end (tree positions), kind (0 near, 1 far). */
const JOB = 5;
/** Numbers of ACA scratch per admissible block (u and v together). */
const ACA_SCRATCH = 8 * 2 ** 20;
/** Least rank cap (ranks of smooth kernels at the tolerances used stay far below). */
const MIN_ACA_RANK = 150;
/** Entries evaluated per dense pass (near blocks and admissible blocks that did not compress). */
const DENSE_CHUNK = 2 ** 20;

/**
 * y = M·x for the n×n matrices the generator yields (points: 3 per index, which the trees
 * cluster). Returns y as n×c row-major (index i, component comp at i·c + comp); rows not
 * wanted are 0.
 */
export async function applyOnce<const B extends unknown[] = [], const A extends unknown[] = []>(points: Float64Array,
  entries: { source?: EntrySource<B, A>; generator?: EntryGenerator }, x: Float64Array, opts: ApplyOnceOptions): Promise<Float64Array> {
  const source: EntrySourceData | undefined = entries.source;
  const n = points.length / 3, c = opts.components ?? 1;
  if (x.length !== n) throw new RangeError(`applyOnce: x holds ${x.length} values for ${n} points`);
  if (!(opts.tolerance > 0 && opts.tolerance < 1)) throw new RangeError(`tolerance must be in (0, 1), got ${opts.tolerance}`);
  const tree = clusterPoints(points, opts.leafSize ?? 32);
  const bt = blockTree(tree, { eta: opts.eta ?? 2, pad: opts.pad });
  const order = new Uint32Array(new SharedArrayBuffer(4 * Math.max(1, n)));
  order.set(tree.order);
  // Wanted rows in tree positions: a prefix count lets a job know its wanted rows without a scan.
  const wantedBefore = new Uint32Array(n + 1);
  for (let p = 0; p < n; p++) wantedBefore[p + 1] = wantedBefore[p] + (!opts.rows || opts.rows[order[p]] ? 1 : 0);
  const mask = new Uint8Array(new SharedArrayBuffer(Math.max(1, n)));
  for (let i = 0; i < n; i++) mask[i] = !opts.rows || opts.rows[i] ? 1 : 0;

  const jobs: number[] = [], cost: number[] = [];
  const add = (s: number, t: number, kind: number): void => {
    const m = wantedBefore[tree.end[s]] - wantedBefore[tree.start[s]];
    if (m === 0) return;
    const w = tree.end[t] - tree.start[t];
    jobs.push(tree.start[s], tree.end[s], tree.start[t], tree.end[t], kind);
    cost.push(kind === 0 ? c * m * w : 20 * (c * m + w));
  };
  for (let q = 0; q < bt.near.length; q += 2) add(bt.near[q], bt.near[q + 1], 0);
  for (let q = 0; q < bt.far.length; q += 2) add(bt.far[q], bt.far[q + 1], 1);

  const xs = sharedFloat64(n);
  xs.set(x);
  const threads = opts.pool && source ? opts.pool.size : 1;
  const chunks = split(cost, Math.max(1, Math.min(cost.length, 16 * threads)));
  const chunkJobs = (list: number[]): Float64Array => {
    const out = new Float64Array(new SharedArrayBuffer(8 * Math.max(1, list.length * JOB)));
    list.forEach((q, a) => { for (let f = 0; f < JOB; f++) out[a * JOB + f] = jobs[q * JOB + f]; });
    return out.subarray(0, list.length * JOB);
  };
  const ys = Array.from({ length: threads }, () => sharedFloat64(n * c));
  if (opts.pool && source && threads > 1) {
    const pool = opts.pool;
    let next = 0;
    await Promise.all(Array.from({ length: threads }, async (_, w) => {
      while (next < chunks.length) {
        const q = next++;
        await pool.run(applyOnceTask, w, [source, order, mask, chunkJobs(chunks[q]), opts.tolerance, c, xs, ys[w]]);
      }
    }));
  } else {
    const gen = entries.generator ?? (source ? await loadGenerator(source) : undefined);
    if (!gen) throw new Error("applyOnce needs an entry source or a generator");
    for (const list of chunks) applyChunk(gen, order, mask, chunkJobs(list), opts.tolerance, c, xs, ys[0]);
  }
  const y = new Float64Array(n * c);
  for (const yw of ys) for (let i = 0; i < n * c; i++) y[i] += yw[i];
  return y;
}

/** Load the generator `source` names (once per thread) and apply a chunk of jobs into y. */
export async function applyChunkFromSource(source: EntrySourceData, order: Uint32Array, mask: Uint8Array, jobs: Float64Array, tol: number,
  c: number, x: Float64Array, y: Float64Array): Promise<number> {
  applyChunk(await loadGenerator(source), order, mask, jobs, tol, c, x, y);
  return jobs.length / JOB;
}

export const applyOnceTask = task(import.meta.url, { applyChunkFromSource });

// Per-thread scratch, grown on demand.
let rowsBuf = new Uint32Array(0), u = new Float64Array(0), v = new Float64Array(0), dense = new Float64Array(0);
let cache = new Float64Array(0), rowTmp = new Float64Array(0), slotOf = new Int32Array(0), xb = new Float64Array(0), tq = new Float64Array(0);
const one = new Uint32Array(1);

/** y (n×c, original indices) += the jobs' blocks times x. */
export function applyChunk(gen: EntryGenerator, order: Uint32Array, mask: Uint8Array, jobs: Float64Array, tol: number,
  c: number, x: Float64Array, y: Float64Array): void {
  for (let q = 0; q < jobs.length; q += JOB) {
    const rs = jobs[q], re = jobs[q + 1], cs = jobs[q + 2], ce = jobs[q + 3], far = jobs[q + 4] === 1;
    if (rowsBuf.length < re - rs) rowsBuf = new Uint32Array(re - rs);
    let m = 0;
    for (let p = rs; p < re; p++) if (mask[order[p]]) rowsBuf[m++] = order[p];
    if (m === 0) continue;
    const rows = rowsBuf.subarray(0, m), cols = order.subarray(cs, ce), w = ce - cs;
    if (xb.length < w) xb = new Float64Array(w);
    for (let b = 0; b < w; b++) xb[b] = x[cols[b]];
    if (far && farBlock(gen, rows, cols, m, w, tol, c, y)) continue;
    denseBlock(gen, rows, cols, m, w, c, y);
  }
}

/** y += block·x by dense passes of at most DENSE_CHUNK entries. */
function denseBlock(gen: EntryGenerator, rows: Uint32Array, cols: Uint32Array, m: number, w: number, c: number, y: Float64Array): void {
  const step = Math.max(1, Math.floor(DENSE_CHUNK / (c * w)));
  if (dense.length < c * Math.min(m, step) * w) dense = new Float64Array(c * Math.min(m, step) * w);
  for (let a0 = 0; a0 < m; a0 += step) {
    const a1 = Math.min(m, a0 + step), mm = a1 - a0;
    gen(rows.subarray(a0, a1), cols, dense);
    for (let comp = 0; comp < c; comp++) {
      for (let a = 0; a < mm; a++) {
        const o = (comp * mm + a) * w;
        let s = 0;
        for (let b = 0; b < w; b++) s += dense[o + b] * xb[b];
        y[rows[a0 + a] * c + comp] += s;
      }
    }
  }
}

/**
 * y += (stacked c·m × w block)·x through ACA+; false when the block does not compress below
 * the cost of a dense pass (the caller then goes dense).
 */
function farBlock(gen: EntryGenerator, rows: Uint32Array, cols: Uint32Array, m: number, w: number, tol: number, c: number, y: Float64Array): boolean {
  const M = c * m;
  const maxRank = Math.min(M, w, Math.max(MIN_ACA_RANK, Math.floor(ACA_SCRATCH / (M + w))));
  if (u.length < maxRank * M) u = new Float64Array(maxRank * M);
  if (v.length < maxRank * w) v = new Float64Array(maxRank * w);
  // Row cache: the c rows of one index from one generator call.
  const slots = Math.min(m, maxRank + 16);
  if (cache.length < slots * c * w) cache = new Float64Array(slots * c * w);
  if (slotOf.length < m) slotOf = new Int32Array(m);
  slotOf.fill(-1, 0, m);
  let used = 0;
  const rowOf = (i: number, out: Float64Array): void => {
    const a = i % m, comp = (i - a) / m;
    let s = slotOf[a];
    if (s < 0 && used < slots) {
      s = used++; slotOf[a] = s;
      one[0] = rows[a];
      gen(one, cols, cache.subarray(s * c * w, (s + 1) * c * w));
    }
    if (s < 0) {
      // Cache full: evaluate this index's rows without keeping them.
      if (rowTmp.length < c * w) rowTmp = new Float64Array(c * w);
      one[0] = rows[a];
      gen(one, cols, rowTmp);
      for (let b = 0; b < w; b++) out[b] = rowTmp[comp * w + b];
      return;
    }
    const o = s * c * w + comp * w;
    for (let b = 0; b < w; b++) out[b] = cache[o + b];
  };
  const colOf = (j: number, out: Float64Array): void => { one[0] = cols[j]; gen(rows, one, out); };
  const r = aca(M, w, rowOf, colOf, tol, maxRank, u, v);
  if (r < 0 || r * (M + w) >= M * w) return false;
  if (tq.length < r) tq = new Float64Array(r);
  for (let t = 0; t < r; t++) {
    let s = 0;
    const o = t * w;
    for (let b = 0; b < w; b++) s += v[o + b] * xb[b];
    tq[t] = s;
  }
  for (let i = 0; i < M; i++) {
    let s = 0;
    for (let t = 0; t < r; t++) s += u[t * M + i] * tq[t];
    const a = i % m, comp = (i - a) / m;
    y[rows[a] * c + comp] += s;
  }
  return true;
}

/** Contiguous runs of about equal cost (many more than threads, taken one at a time). */
function split(cost: number[], parts: number): number[][] {
  let total = 0;
  for (const x of cost) total += x;
  const out: number[][] = [];
  let cur: number[] = [], acc = 0;
  for (let q = 0; q < cost.length; q++) {
    cur.push(q); acc += cost[q];
    if (acc >= total / parts && out.length < parts - 1) { out.push(cur); cur = []; acc = 0; }
  }
  if (cur.length > 0) out.push(cur);
  return out;
}
