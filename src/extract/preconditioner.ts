/**
 * Preconditioners of the boundary-element operator, built by name and options and applied as
 * Z = M⁻¹·R whatever Krylov method runs (krylov.ts): the iteration never knows which one it
 * applies, as PETSc keeps KSP and PC apart.
 *
 * - "block-jacobi": the block diagonal of the operator over panel clusters (Saad, Iterative
 *   Methods for Sparse Linear Systems, 2nd ed., §10.2). On a compressed operator the blocks are
 *   the largest cluster-tree nodes of at most `cluster` panels, read from the hierarchical
 *   matrix, factored on the workers and replaced by their explicit inverses
 *   (linalg/cluster-jacobi.ts); on a dense operator the leaves of a cluster tree of the panel
 *   centroids with leaf size `cluster`, factored on this thread (linalg/block-jacobi.ts).
 *   Cholesky where the operator is symmetric, LU otherwise.
 * - "two-level": block-Jacobi plus the additive coarse correction over aggregates of at most
 *   `coarseCluster` panels (linalg/two-level.ts), coarse matrix PᵀAP from the hierarchical
 *   matrix; compressed operators only.
 */
import type { BlockPreconditioner } from "../linalg/cg.js";
import { blockJacobi } from "../linalg/block-jacobi.js";
import { clusterPoints, leafIndexSets, type ClusterTree } from "../linalg/cluster.js";
import { parallelBlockJacobi, type AsyncBlockPreconditionerFn } from "../linalg/cluster-jacobi.js";
import { twoLevelPreconditioner } from "../linalg/two-level.js";
import type { WorkerPool } from "../linalg/pool.js";
import type { CompressedOperator, DenseOperator } from "./operator.js";

export const PRECONDITIONERS = ["block-jacobi", "two-level"] as const;
export type PreconditionerName = (typeof PRECONDITIONERS)[number];

/** Largest cluster of the compressed solver's block-Jacobi preconditioner (measured: compressed bench). */
export const PRECONDITIONER_CLUSTER = 256;
/**
 * Largest aggregate of the compressed solver's two-level coarse correction; 0 = off, the
 * default. Measured on spheres (compressed bench, DEVELOPERS.md): aggregates of 32 panels
 * save 2 of 17-22 iterations at 5k-80k panels but need an n/32 square coarse matrix (4096²
 * and 8 s of setup at 80k, out of reach at 320k); aggregates of 256 save none.
 */
export const COARSE_CLUSTER = 0;
/** Leaf size of the cluster tree whose leaves are the dense iterative solver's block-Jacobi blocks. */
export const DENSE_PRECONDITIONER_CLUSTER = 64;

export interface PreconditionerOptions {
  /** Most panels of a block-Jacobi block (on a compressed operator at least its leaf size is used). */
  cluster: number;
  /** "two-level": most panels of a coarse aggregate (> 0). */
  coarseCluster?: number;
  /** Workers for the compressed operator's blocks and the coarse factorisation. */
  pool: WorkerPool;
}

export interface Preconditioner {
  readonly name: PreconditionerName;
  readonly apply: BlockPreconditioner;
  /** Aggregates of the coarse correction; 0 where there is none (one aggregate is only a rescaling, so it is dropped). */
  readonly coarseAggregates: number;
  /** Frees what the workers hold. */
  release(): Promise<void>;
}

/** The preconditioner `name` for `op`; an unknown name, or one the operator cannot serve, is refused. */
export async function buildPreconditioner(name: string, op: DenseOperator | CompressedOperator, opts: PreconditionerOptions): Promise<Preconditioner> {
  if (!isPreconditionerName(name)) {
    throw new RangeError(`unknown preconditioner "${name}" (known: ${PRECONDITIONERS.join(", ")})`);
  }
  if (name === "two-level" && !(opts.coarseCluster !== undefined && opts.coarseCluster > 0)) {
    throw new RangeError(`the two-level preconditioner needs a coarse aggregate size > 0, got ${String(opts.coarseCluster)}`);
  }
  if (op.storage === "dense") {
    if (name !== "block-jacobi") throw new RangeError(`the ${name} preconditioner needs a compressed operator`);
    const apply = blockJacobi(op.matrix, op.n, leafIndexSets(clusterPoints(op.points, opts.cluster)), { lu: !op.symmetric });
    return { name, apply, coarseAggregates: 0, release: async () => {} };
  }
  const H = op.hmatrix, leafSize = H.stats.leafSize, n = op.n;
  const nodes = clusterCover(H.tree, Math.max(leafSize, opts.cluster));
  const sets = nodes.map((v) => H.tree.order.slice(H.tree.start[v], H.tree.end[v]));
  // Factored and applied on the workers: with many right-hand sides (a pad array) the
  // block solves cost as much as the product with H.
  const jacobi = await parallelBlockJacobi((into) => { H.diagonalBlocks(nodes, into); }, sets, n, opts.pool, { lu: !op.symmetric });
  if (name === "block-jacobi") return { name, apply: jacobi.apply, coarseAggregates: 0, release: jacobi.release };
  try {
    const agg = clusterCover(H.tree, Math.max(leafSize, opts.coarseCluster!));
    // One aggregate is only a rescaling of the one-level method.
    if (agg.length <= 1) return { name, apply: jacobi.apply, coarseAggregates: 0, release: jacobi.release };
    const aggregate = new Int32Array(n);
    agg.forEach((v, a) => { for (let p = H.tree.start[v]; p < H.tree.end[v]; p++) aggregate[H.tree.order[p]] = a; });
    const apply: AsyncBlockPreconditionerFn = await twoLevelPreconditioner(jacobi.apply, aggregate, agg.length, H.coarseMatrix(agg), { lu: !op.symmetric, pool: opts.pool });
    return { name, apply, coarseAggregates: agg.length, release: jacobi.release };
  } catch (err) {
    await jacobi.release();
    throw err;
  }
}

function isPreconditionerName(name: string): name is PreconditionerName {
  return (PRECONDITIONERS as readonly string[]).includes(name);
}

/** Disjoint tree nodes covering every point, each the largest node on its path of at most `size` points. */
export function clusterCover(tree: ClusterTree, size: number): number[] {
  const out: number[] = [];
  if (tree.start.length === 0) return out;
  const stack = [0];
  while (stack.length > 0) {
    const v = stack.pop()!;
    if (tree.end[v] - tree.start[v] <= size || tree.left[v] < 0) { if (tree.end[v] > tree.start[v]) out.push(v); continue; }
    stack.push(tree.right[v], tree.left[v]);
  }
  return out;
}
