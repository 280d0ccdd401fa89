/**
 * Block cluster tree over a cluster tree (rows and columns from the same tree): the matrix
 * index set split into blocks that are either admissible (far: a low-rank approximation
 * converges exponentially) or small leaf-by-leaf blocks stored dense (near).
 *
 * Admissibility (Hackbusch, Hierarchical Matrices, Springer 2015, §5.2, eq. 4.9b; Börm,
 * Grasedyck & Hackbusch, "Hierarchical matrices", lecture notes, 2003, Definition 2.9):
 *   min(diam τ, diam σ) ≤ η · dist(τ, σ)
 * with diameters and distances of axis-parallel bounding boxes. The boxes may be widened per
 * point (`pad`, e.g. the radius of the panel a centroid stands for), so that the geometric
 * test speaks for the supports and not only for the centre points.
 */
import type { ClusterTree } from "./cluster.js";

export interface BlockTree {
  /** Node pairs (row, column) of the dense leaf blocks, two per block. */
  near: Uint32Array;
  /** Node pairs (row, column) of the admissible blocks, two per block. */
  far: Uint32Array;
  /** Only blocks with row.start ≤ column.start were listed (symmetric matrix). */
  symmetric: boolean;
  /** Node boxes used (widened by `pad`), 6 per node. */
  boxes: Float64Array;
}

export interface BlockTreeOptions {
  /** η of the admissibility condition (default 2). */
  eta?: number;
  /** Per point (original index) half-width to widen the boxes by; units of the points. */
  pad?: Float64Array;
  /** List only the blocks on or above the diagonal (row.start ≤ column.start). */
  symmetric?: boolean;
}

/** Boxes of every node widened by the largest `pad` of its points. */
export function paddedBoxes(tree: ClusterTree, pad?: Float64Array): Float64Array {
  const nodes = tree.start.length;
  const out = Float64Array.from(tree.bbox);
  if (!pad) return out;
  for (let v = 0; v < nodes; v++) {
    let w = 0;
    for (let p = tree.start[v]; p < tree.end[v]; p++) { const x = pad[tree.order[p]]; if (x > w) w = x; }
    for (let d = 0; d < 3; d++) { out[6 * v + d] -= w; out[6 * v + 3 + d] += w; }
  }
  return out;
}

/** Diagonal of box v; units of the points. */
export function boxDiameter(boxes: Float64Array, v: number): number {
  const o = 6 * v;
  const x = boxes[o + 3] - boxes[o], y = boxes[o + 4] - boxes[o + 1], z = boxes[o + 5] - boxes[o + 2];
  return Math.sqrt(x * x + y * y + z * z);
}

/** Euclidean distance between boxes s and t (0 when they overlap). */
export function boxDistance(boxes: Float64Array, s: number, t: number): number {
  const a = 6 * s, b = 6 * t;
  let d2 = 0;
  for (let d = 0; d < 3; d++) {
    const gap = Math.max(boxes[a + d] - boxes[b + 3 + d], boxes[b + d] - boxes[a + 3 + d], 0);
    d2 += gap * gap;
  }
  return Math.sqrt(d2);
}

/** The block tree of `tree` × `tree`. */
export function blockTree(tree: ClusterTree, opts: BlockTreeOptions = {}): BlockTree {
  const eta = opts.eta ?? 2;
  if (!(eta > 0)) throw new RangeError(`admissibility η must be positive, got ${eta}`);
  const symmetric = opts.symmetric ?? false;
  const boxes = paddedBoxes(tree, opts.pad);
  const near: number[] = [], far: number[] = [];
  const nodes = tree.start.length;
  const diam = new Float64Array(nodes);
  for (let v = 0; v < nodes; v++) diam[v] = boxDiameter(boxes, v);
  if (nodes === 0 || tree.end[0] === 0) return { near: new Uint32Array(0), far: new Uint32Array(0), symmetric, boxes };

  // Explicit stack of pairs: deep trees stay off the call stack.
  const stack: number[] = [0, 0];
  while (stack.length > 0) {
    const t = stack.pop()!, s = stack.pop()!;
    if (symmetric && tree.start[s] > tree.start[t]) continue;
    if (s !== t && Math.min(diam[s], diam[t]) <= eta * boxDistance(boxes, s, t)) { far.push(s, t); continue; }
    const sLeaf = tree.left[s] < 0, tLeaf = tree.left[t] < 0;
    if (sLeaf && tLeaf) { near.push(s, t); continue; }
    const sKids = sLeaf ? [s] : [tree.left[s], tree.right[s]];
    const tKids = tLeaf ? [t] : [tree.left[t], tree.right[t]];
    for (const a of sKids) for (const b of tKids) stack.push(a, b);
  }
  return { near: Uint32Array.from(near), far: Uint32Array.from(far), symmetric, boxes };
}
