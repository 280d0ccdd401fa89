/**
 * Cluster tree over points in space: recursive bisection of the longest side of each
 * cluster's bounding box at the median point, so the two halves differ in size by at most
 * one (Hackbusch, Hierarchical Matrices, Springer 2015, §5.4.2, geometric bisection with
 * cardinality balancing). The points are only coordinates; what they stand for is the
 * caller's business.
 *
 * The tree lives in node arrays (struct of arrays). Node 0 is the root; a node covers the
 * positions start..end of `order`, which lists the original point indices so that every
 * cluster is a contiguous range. Leaves are listed left to right and tile 0..N.
 */

export interface ClusterTree {
  /** order[p] = original index of the point at position p. */
  order: Uint32Array;
  /** Node ranges into `order`: start (inclusive) and end (exclusive). */
  start: Uint32Array;
  end: Uint32Array;
  /** Children of each node, −1 for a leaf. */
  left: Int32Array;
  right: Int32Array;
  /** Depth of each node (root 0). */
  depth: Uint32Array;
  /** Bounding box of each node: min x, y, z, max x, y, z (units of the input). */
  bbox: Float64Array;
  /** Leaf ranges [start, end) left to right. */
  leaves: Array<[number, number]>;
  /** Node index of each leaf, in the order of `leaves`. */
  leafNodes: Uint32Array;
}

/**
 * Cluster tree of `points` (x, y, z of each point in turn) with at most `leafSize` points
 * per leaf.
 */
export function clusterPoints(points: Float64Array, leafSize: number): ClusterTree {
  if (points.length % 3 !== 0) throw new RangeError(`points hold ${points.length} values, not a multiple of 3`);
  if (!(leafSize >= 1) || !Number.isInteger(leafSize)) throw new RangeError(`leaf size ${leafSize} is not a positive integer`);
  const N = points.length / 3;
  for (let i = 0; i < points.length; i++) if (!Number.isFinite(points[i])) throw new RangeError(`point ${Math.floor(i / 3)} has a non-finite coordinate`);
  const order = new Uint32Array(N);
  for (let i = 0; i < N; i++) order[i] = i;
  const start: number[] = [], end: number[] = [], left: number[] = [], right: number[] = [], depth: number[] = [];
  const box: number[] = [];
  const leaves: Array<[number, number]> = [], leafNodes: number[] = [];

  const addNode = (s: number, e: number, d: number): number => {
    const id = start.length;
    start.push(s); end.push(e); left.push(-1); right.push(-1); depth.push(d);
    let x0 = Infinity, y0 = Infinity, z0 = Infinity, x1 = -Infinity, y1 = -Infinity, z1 = -Infinity;
    for (let p = s; p < e; p++) {
      const q = 3 * order[p], x = points[q], y = points[q + 1], z = points[q + 2];
      if (x < x0) x0 = x; if (x > x1) x1 = x;
      if (y < y0) y0 = y; if (y > y1) y1 = y;
      if (z < z0) z0 = z; if (z > z1) z1 = z;
    }
    if (e === s) { x0 = y0 = z0 = x1 = y1 = z1 = 0; }
    box.push(x0, y0, z0, x1, y1, z1);
    return id;
  };

  const build = (id: number): void => {
    const s = start[id], e = end[id];
    if (e - s <= leafSize) { leaves.push([s, e]); leafNodes.push(id); return; }
    const b = 6 * id;
    const ex = box[b + 3] - box[b], ey = box[b + 4] - box[b + 1], ez = box[b + 5] - box[b + 2];
    const axis = ex >= ey && ex >= ez ? 0 : ey >= ez ? 1 : 2;
    const mid = s + ((e - s) >> 1);
    selectNth(order, points, axis, s, e, mid);
    const l = addNode(s, mid, depth[id] + 1), r = addNode(mid, e, depth[id] + 1);
    left[id] = l; right[id] = r;
    build(l);
    build(r);
  };
  addNode(0, N, 0);
  build(0);

  return {
    order,
    start: Uint32Array.from(start), end: Uint32Array.from(end),
    left: Int32Array.from(left), right: Int32Array.from(right),
    depth: Uint32Array.from(depth), bbox: Float64Array.from(box),
    leaves, leafNodes: Uint32Array.from(leafNodes),
  };
}

/** The original point indices of each leaf, as index sets (e.g. for block-Jacobi). */
export function leafIndexSets(tree: ClusterTree): Uint32Array[] {
  return tree.leaves.map(([s, e]) => tree.order.slice(s, e));
}

/**
 * Rearrange order[s..e) so that position `nth` holds the point of that rank along `axis`,
 * smaller or equal before it and greater or equal after (Hoare's selection, "FIND",
 * CACM 4(7), 1961, with median-of-three pivots).
 */
function selectNth(order: Uint32Array, pts: Float64Array, axis: number, s: number, e: number, nth: number): void {
  let lo = s, hi = e - 1;
  while (hi > lo) {
    const m = (lo + hi) >> 1;
    const a = pts[3 * order[lo] + axis], b = pts[3 * order[m] + axis], c = pts[3 * order[hi] + axis];
    const pivot = a < b ? (b < c ? b : a < c ? c : a) : (a < c ? a : b < c ? c : b);
    let i = lo, j = hi;
    while (i <= j) {
      while (pts[3 * order[i] + axis] < pivot) i++;
      while (pts[3 * order[j] + axis] > pivot) j--;
      if (i <= j) { const t = order[i]; order[i] = order[j]; order[j] = t; i++; j--; }
    }
    if (nth <= j) hi = j;
    else if (nth >= i) lo = i;
    else return;
  }
}
