/**
 * Hierarchical matrix (H-matrix): a square matrix over points in space, stored as the
 * leaves of a block cluster tree (block-tree.ts): admissible blocks as low-rank factors
 * (low-rank-block.ts) from ACA+ with recompression (aca.ts, recompression.ts), the rest
 * dense (dense-block.ts) (Hackbusch, Hierarchical Matrices, Springer 2015, ch. 6;
 * Bebendorf, Hierarchical Matrices, Springer 2008, ch. 3). Storage and product cost grow
 * like N log N for asymptotically smooth kernels.
 *
 * The matrix is known only through an entry generator (entry-generator.ts); nothing here
 * knows what the entries mean. The build is split into chunks of independent blocks that
 * run on the worker pool (hmatrix-build.ts: each worker imports the generator its
 * EntrySource names); the product splits the block uses over the workers
 * (hmatrix-product.ts), each accumulating its own copy of Y in shared memory, summed
 * afterwards, so no two threads write the same entry.
 *
 * Vectors passed to `apply` are in the caller's index order, n×k row-major; internally
 * everything is in tree order (every cluster a contiguous range).
 */
import { clusterPoints, type ClusterTree } from "./cluster.js";
import { blockTree, type BlockTree } from "./block-tree.js";
import { sharedFloat64, type WorkerPool } from "./pool.js";
import { loadGenerator, type EntryGenerator, type EntrySource, type EntrySourceData } from "./entry-generator.js";
import { buildChunk, hmatrixBuildTask, JOB_FAR, JOB_FIELDS, JOB_NEAR, type BuiltChunk } from "./hmatrix-build.js";
import {
  BLOCK_FIELDS, hmatrixInstallTask, hmatrixProductTask, hmatrixReleaseTask, partProduct, type HMatrixLayout, type ProductKernel,
} from "./hmatrix-product.js";

export type { EntryGenerator, EntrySource } from "./entry-generator.js";

export interface HMatrixOptions {
  /** Relative accuracy of each admissible block (Frobenius); e.g. 1e-5. */
  tolerance: number;
  /** Most points per leaf cluster (default 32). */
  leafSize?: number;
  /** Admissibility η (default 2). */
  eta?: number;
  /** The matrix is symmetric: build only blocks on or above the diagonal, use each twice. */
  symmetric?: boolean;
  /** Per point half-width widening the cluster boxes (see block-tree.ts). */
  pad?: Float64Array;
  /** Worker pool for build and product; without one everything runs on this thread. */
  pool?: WorkerPool;
  /** Called as the work advances: phase "tree" (cluster and block trees), then "near field" and
   *  "far field" (dense and low-rank blocks, as their chunks finish), fraction of the phase done. */
  progress?: (phase: string, fraction: number) => void;
}

export interface HMatrixStats {
  n: number;
  leafSize: number;
  eta: number;
  nearBlocks: number;
  farBlocks: number;
  /** Admissible blocks that did not compress and were stored dense. */
  farDense: number;
  /** Numbers stored (near + far factors). */
  storedEntries: number;
  /** storedEntries / n². */
  compressionRatio: number;
  /** Bytes held by the stored numbers and the block table. */
  bytes: number;
  maxRank: number;
  /** Mean rank of the low-rank blocks. */
  meanRank: number;
  buildSeconds: number;
}

let nextId = 1;

export class HMatrix {
  readonly n: number;
  readonly tree: ClusterTree;
  readonly blockTree: BlockTree;
  readonly layout: HMatrixLayout;
  readonly stats: HMatrixStats;
  private readonly id = nextId++;
  private readonly pool?: WorkerPool;
  private installed = false;
  private Xp: Float64Array = new Float64Array(0);
  private Yp: Float64Array[] = [];

  constructor(n: number, tree: ClusterTree, bt: BlockTree, layout: HMatrixLayout, stats: HMatrixStats, pool?: WorkerPool) {
    this.n = n; this.tree = tree; this.blockTree = bt; this.layout = layout; this.stats = stats; this.pool = pool;
  }

  /**
   * Y = H·X, n×k row-major in the caller's order (X and Y distinct); `kernel` picks the block
   * product code (hmatrix-product.ts ProductKernel: "js" only to check or time the SIMD path).
   */
  async apply(X: Float64Array, Y: Float64Array, k: number, kernel: ProductKernel = "auto"): Promise<void> {
    const n = this.n, nk = n * k, order = this.tree.order;
    const parts = this.layout.uses.length;
    if (this.Xp.length !== nk) {
      this.Xp = sharedFloat64(nk);
      this.Yp = [];
      for (let p = 0; p < parts; p++) this.Yp.push(sharedFloat64(nk));
    }
    const Xp = this.Xp, Yp = this.Yp;
    for (let p = 0; p < n; p++) {
      const src = order[p] * k, dst = p * k;
      for (let c = 0; c < k; c++) Xp[dst + c] = X[src + c];
    }
    if (this.pool && parts > 1) {
      if (!this.installed) {
        await Promise.all(Array.from({ length: this.pool.size }, (_, w) =>
          this.pool!.run(hmatrixInstallTask, w, [this.id, this.layout])));
        this.installed = true;
      }
      await Promise.all(Yp.map((Yw, part) => this.pool!.run(hmatrixProductTask, part, [this.id, part, Xp, Yw, k, kernel])));
    } else {
      for (let part = 0; part < parts; part++) partProduct(this.layout, this.layout.uses[part], Xp, Yp[part], k, kernel);
    }
    for (let p = 0; p < n; p++) {
      const dst = order[p] * k, src = p * k;
      for (let c = 0; c < k; c++) {
        let s = 0;
        for (let w = 0; w < parts; w++) s += Yp[w][src + c];
        Y[dst + c] = s;
      }
    }
  }

  /**
   * Dense diagonal blocks over the given disjoint tree nodes (each |node|² row-major, rows
   * and columns in tree order, i.e. original indices order[start..end)), expanded from the
   * stored blocks that lie inside them; written into `into` when given (every entry is set).
   */
  diagonalBlocks(nodes: ArrayLike<number>, into?: Float64Array[]): Float64Array[] {
    const t = this.tree, n = this.n;
    const owner = new Int32Array(n).fill(-1);
    const out: Float64Array[] = [];
    for (let a = 0; a < nodes.length; a++) {
      const v = nodes[a], s = t.start[v], e = t.end[v], size = (e - s) * (e - s);
      for (let p = s; p < e; p++) owner[p] = a;
      if (into && into[a].length < size) throw new RangeError(`diagonalBlocks: output ${a} holds ${into[a].length} values, need ${size}`);
      out.push(into ? into[a] : new Float64Array(size));
    }
    const B = this.layout.blocks, bufs = this.layout.buffers, sym = this.blockTree.symmetric;
    for (let b = 0; b < B.length / BLOCK_FIELDS; b++) {
      const o = b * BLOCK_FIELDS;
      const rs = B[o], re = B[o + 1], cs = B[o + 2], ce = B[o + 3], data = bufs[B[o + 4]], off = B[o + 5], r = B[o + 6];
      const a = owner[rs];
      if (a < 0 || owner[re - 1] !== a || owner[cs] !== a || owner[ce - 1] !== a) continue;
      const v = nodes[a], s = t.start[v], w = t.end[v] - s, D = out[a];
      const m = re - rs, nc = ce - cs;
      const mirror = sym && rs !== cs;
      for (let i = 0; i < m; i++)
        for (let j = 0; j < nc; j++) {
          let x: number;
          if (r < 0) x = data[off + i * nc + j];
          else {
            x = 0;
            const uo = off + i, vo = off + m * r + j;
            for (let q = 0; q < r; q++) x += data[uo + q * m] * data[vo + q * nc];
          }
          D[(rs - s + i) * w + (cs - s + j)] = x;
          if (mirror) D[(cs - s + j) * w + (rs - s + i)] = x;
        }
    }
    return out;
  }

  /**
   * Galerkin coarse matrix Pᵀ·H·P for P the indicator columns of the given disjoint tree nodes
   * covering all points (nc×nc row-major, nc = nodes.length): entry (a, b) is the sum of H over
   * the rows of node a and the columns of node b. One pass over the stored blocks; a low-rank
   * block contributes (1ᵀU)(Vᵀ1) per pair of nodes it spans.
   */
  coarseMatrix(nodes: ArrayLike<number>): Float64Array {
    const t = this.tree, n = this.n, nc = nodes.length;
    const owner = new Int32Array(n).fill(-1);
    for (let a = 0; a < nc; a++) for (let p = t.start[nodes[a]]; p < t.end[nodes[a]]; p++) owner[p] = a;
    for (let p = 0; p < n; p++) if (owner[p] < 0) throw new RangeError(`coarseMatrix: position ${p} is in none of the nodes`);
    const C = new Float64Array(nc * nc);
    const B = this.layout.blocks, bufs = this.layout.buffers, sym = this.blockTree.symmetric;
    const maxRank = Math.max(1, this.layout.maxRank);
    // Per block: the nodes its rows (columns) meet, in order, with their range ends.
    let su = new Float64Array(16 * maxRank), sv = new Float64Array(16 * maxRank);
    const rowNodes: number[] = [], colNodes: number[] = [];
    const spans = (s0: number, e0: number, out: number[]): void => {
      out.length = 0;
      for (let p = s0; p < e0;) { const a = owner[p]; out.push(a); p = t.end[nodes[a]] < e0 ? t.end[nodes[a]] : e0; }
    };
    const add = (a: number, b: number, x: number, mirror: boolean): void => {
      C[a * nc + b] += x;
      if (mirror) C[b * nc + a] += x;
    };
    for (let blk = 0; blk < B.length / BLOCK_FIELDS; blk++) {
      const o = blk * BLOCK_FIELDS;
      const rs = B[o], re = B[o + 1], cs = B[o + 2], ce = B[o + 3], data = bufs[B[o + 4]], off = B[o + 5], r = B[o + 6];
      const m = re - rs, w = ce - cs, mirror = sym && rs !== cs;
      spans(rs, re, rowNodes); spans(cs, ce, colNodes);
      if (r < 0) {
        if (rowNodes.length === 1 && colNodes.length === 1) {
          let x = 0;
          for (let i = 0; i < m * w; i++) x += data[off + i];
          add(rowNodes[0], colNodes[0], x, mirror);
          continue;
        }
        for (let i = 0; i < m; i++) {
          const a = owner[rs + i];
          for (let j = 0; j < w; j++) add(a, owner[cs + j], data[off + i * w + j], mirror);
        }
        continue;
      }
      if (r === 0) continue;
      const nr = rowNodes.length, ncl = colNodes.length;
      if (su.length < nr * r) su = new Float64Array(nr * r);
      if (sv.length < ncl * r) sv = new Float64Array(ncl * r);
      su.fill(0, 0, nr * r); sv.fill(0, 0, ncl * r);
      for (let q = 0; q < r; q++) {
        let ai = 0;
        for (let i = 0; i < m; i++) { if (owner[rs + i] !== rowNodes[ai]) ai++; su[ai * r + q] += data[off + q * m + i]; }
        let bj = 0;
        for (let j = 0; j < w; j++) { if (owner[cs + j] !== colNodes[bj]) bj++; sv[bj * r + q] += data[off + m * r + q * w + j]; }
      }
      for (let ai = 0; ai < nr; ai++)
        for (let bj = 0; bj < ncl; bj++) {
          let x = 0;
          for (let q = 0; q < r; q++) x += su[ai * r + q] * sv[bj * r + q];
          add(rowNodes[ai], colNodes[bj], x, mirror);
        }
    }
    return C;
  }

  /** Forget the copies installed in the workers (the shared data is freed with this object). */
  async release(): Promise<void> {
    if (!this.installed || !this.pool) return;
    await Promise.all(Array.from({ length: this.pool.size }, (_, w) => this.pool!.run(hmatrixReleaseTask, w, [this.id])));
    this.installed = false;
  }
}

/**
 * Build the H-matrix of the n×n matrix over `points` (x, y, z per index) whose entries come
 * from `source` (run in the workers; see EntrySource) or, with no pool, from `generator`
 * on this thread.
 */
export async function buildHMatrix<const B extends unknown[] = [], const A extends unknown[] = []>(points: Float64Array,
  entries: { source?: EntrySource<B, A> | EntrySourceData; generator?: EntryGenerator }, opts: HMatrixOptions): Promise<HMatrix> {
  const source: EntrySourceData | undefined = entries.source;
  const t0 = performance.now();
  const n = points.length / 3;
  const leafSize = opts.leafSize ?? 32, eta = opts.eta ?? 2;
  if (!(opts.tolerance > 0 && opts.tolerance < 1)) throw new RangeError(`compression tolerance must be in (0, 1), got ${opts.tolerance}`);
  opts.progress?.("tree", 0);
  const tree = clusterPoints(points, leafSize);
  const bt = blockTree(tree, { eta, pad: opts.pad, symmetric: opts.symmetric });
  opts.progress?.("tree", 1);
  const order = new Uint32Array(new SharedArrayBuffer(4 * Math.max(1, n)));
  order.set(tree.order);

  // Jobs cut into chunks of about equal estimated work, many more than threads, which the
  // workers take one at a time so they finish together.
  const nb = bt.near.length / 2, nf = bt.far.length / 2, total = nb + nf;
  const jobs = new Float64Array(total * JOB_FIELDS), cost = new Float64Array(total);
  const put = (q: number, s: number, t: number, kind: number): void => {
    const o = q * JOB_FIELDS;
    jobs[o] = tree.start[s]; jobs[o + 1] = tree.end[s]; jobs[o + 2] = tree.start[t]; jobs[o + 3] = tree.end[t]; jobs[o + 4] = kind;
    const m = tree.end[s] - tree.start[s], c = tree.end[t] - tree.start[t];
    // Near entries need singular or nearly singular integrals; a far block costs ~ rank rows and columns.
    cost[q] = kind === JOB_NEAR ? 4 * m * c : 24 * (m + c);
  };
  for (let q = 0; q < nb; q++) put(q, bt.near[2 * q], bt.near[2 * q + 1], JOB_NEAR);
  for (let q = 0; q < nf; q++) put(nb + q, bt.far[2 * q], bt.far[2 * q + 1], JOB_FAR);
  const threads = opts.pool ? opts.pool.size : 1;
  const chunks = splitJobs(cost, Math.max(1, Math.min(total, 24 * threads)));

  const built: BuiltChunk[] = new Array(chunks.length);
  // Near jobs come first in the list and chunks are taken in order, so the near field
  // finishes (nearly) before the far field starts: each phase reports its own fraction.
  let doneNear = 0, doneFar = 0, nearCost = 0, farCost = 0;
  for (let q = 0; q < nb; q++) nearCost += cost[q];
  for (let q = nb; q < total; q++) farCost += cost[q];
  const chunkJobs = (c: number): Float64Array => {
    const list = chunks[c], j = new Float64Array(new SharedArrayBuffer(8 * Math.max(1, list.length * JOB_FIELDS)));
    for (let a = 0; a < list.length; a++) j.set(jobs.subarray(list[a] * JOB_FIELDS, (list[a] + 1) * JOB_FIELDS), a * JOB_FIELDS);
    return j.subarray(0, list.length * JOB_FIELDS);
  };
  const finished = (c: number): void => {
    for (const q of chunks[c]) { if (q < nb) doneNear += cost[q]; else doneFar += cost[q]; }
    if (!opts.progress) return;
    if (doneNear < nearCost) opts.progress("near field", doneNear / nearCost);
    else opts.progress("far field", farCost > 0 ? doneFar / farCost : 1);
  };
  if (opts.pool && source) {
    const pool = opts.pool;
    let next = 0;
    await Promise.all(Array.from({ length: pool.size }, async (_, w) => {
      while (next < chunks.length) {
        const c = next++;
        built[c] = await pool.run(hmatrixBuildTask, w, [source, order, chunkJobs(c), opts.tolerance]);
        finished(c);
      }
    }));
  } else {
    let gen = entries.generator;
    if (!gen) {
      if (!source) throw new Error("buildHMatrix needs an entry source or a generator");
      gen = await loadGenerator(source);
    }
    for (let c = 0; c < chunks.length; c++) {
      const d = buildChunk(gen, order, chunkJobs(c), opts.tolerance);
      // buildChunk reuses its scratch; the chunk's data is already its own shared copy.
      built[c] = d;
      finished(c);
    }
  }

  // Block table and statistics.
  const blocks = new Float64Array(new SharedArrayBuffer(8 * Math.max(1, total * BLOCK_FIELDS)));
  const buffers: Float64Array[] = [];
  let stored = 0, maxRank = 0, rankSum = 0, lowRank = 0, farDense = 0;
  const useCost: number[] = [], useCode: number[] = [];
  for (let c = 0; c < chunks.length; c++) {
    const ch = built[c];
    buffers.push(ch.data);
    chunks[c].forEach((q, a) => {
      const o = q * BLOCK_FIELDS, jo = q * JOB_FIELDS;
      const rs = jobs[jo], re = jobs[jo + 1], cs = jobs[jo + 2], ce = jobs[jo + 3];
      const r = ch.rank[a], m = re - rs, w = ce - cs;
      blocks[o] = rs; blocks[o + 1] = re; blocks[o + 2] = cs; blocks[o + 3] = ce;
      blocks[o + 4] = c; blocks[o + 5] = ch.offset[a]; blocks[o + 6] = r;
      const size = r < 0 ? m * w : r * (m + w);
      stored += size;
      if (r >= 0) { lowRank++; rankSum += r; if (r > maxRank) maxRank = r; }
      else if (jobs[jo + 4] === JOB_FAR) farDense++;
      useCost.push(size + m); useCode.push(2 * q);
      if (bt.symmetric && rs !== cs) { useCost.push(size + w); useCode.push(2 * q + 1); }
    });
  }
  const parts = Math.max(1, threads);
  const uses = balanceUses(useCost, useCode, parts);
  const layout: HMatrixLayout = { blocks, buffers, uses, maxRank };
  const stats: HMatrixStats = {
    n, leafSize, eta, nearBlocks: nb, farBlocks: nf, farDense, storedEntries: stored,
    compressionRatio: n > 0 ? (bt.symmetric ? storedFull(layout) : stored) / (n * n) : 0,
    bytes: 8 * stored + blocks.byteLength + 4 * useCode.length,
    maxRank, meanRank: lowRank > 0 ? rankSum / lowRank : 0,
    buildSeconds: (performance.now() - t0) / 1e3,
  };
  return new HMatrix(n, tree, bt, layout, stats, opts.pool);
}

/** Entries the stored blocks stand for with both uses counted (for the compression ratio). */
function storedFull(layout: HMatrixLayout): number {
  let s = 0;
  for (const part of layout.uses)
    for (let a = 0; a < part.length; a++) {
      const o = (part[a] >> 1) * BLOCK_FIELDS, B = layout.blocks;
      const m = B[o + 1] - B[o], w = B[o + 3] - B[o + 2], r = B[o + 6];
      s += r < 0 ? m * w : r * (m + w);
    }
  return s;
}

/** Contiguous runs of the job list (in order) of about equal cost. */
function splitJobs(cost: Float64Array, parts: number): number[][] {
  let total = 0;
  for (let q = 0; q < cost.length; q++) total += cost[q];
  const out: number[][] = [];
  const target = total / parts;
  let cur: number[] = [], acc = 0;
  for (let q = 0; q < cost.length; q++) {
    cur.push(q); acc += cost[q];
    if (acc >= target && out.length < parts - 1) { out.push(cur); cur = []; acc = 0; }
  }
  if (cur.length > 0 || out.length === 0) out.push(cur);
  return out;
}

/** Greedy longest-processing-time split of the uses over `parts` (Graham, SIAM J. Appl. Math. 17, 1969). */
function balanceUses(cost: number[], code: number[], parts: number): Int32Array[] {
  const idx = cost.map((_, i) => i).sort((a, b) => cost[b] - cost[a]);
  const load = new Float64Array(parts), lists: number[][] = Array.from({ length: parts }, () => []);
  for (const i of idx) {
    let best = 0;
    for (let p = 1; p < parts; p++) if (load[p] < load[best]) best = p;
    load[best] += cost[i];
    lists[best].push(code[i]);
  }
  // Within a part, in block order: neighbouring blocks share rows of X and Y in cache.
  return lists.map((l) => Int32Array.from(l.sort((a, b) => a - b)));
}
