/**
 * Bounding-volume hierarchy over axis-aligned boxes (one box per triangle, usually).
 *
 * Built top-down by splitting each node's items at the median centroid along the
 * longest axis of the centroid bounds (quickselect, so O(N log N) overall and a tree
 * of depth about log2(N / leafSize)). Nodes are struct-of-arrays; children of node n
 * are `left[n]` and `left[n] + 1`. The tree knows boxes and item numbers only:
 * what an item is, and how far apart two items are, is the caller's business.
 */

export interface BoxTree {
  nodeCount: number;
  /** Node boxes, [minx, miny, minz, maxx, maxy, maxz] per node. */
  bounds: Float64Array;
  /** First child of an internal node (the second is left + 1); -1 for a leaf. */
  left: Int32Array;
  /** Leaf item range in `order`: order[start .. start + count). */
  start: Uint32Array;
  count: Uint32Array;
  /** Item numbers, grouped by leaf. */
  order: Uint32Array;
  /** The item boxes the tree was built on, 6 per item. */
  itemBounds: Float64Array;
}

/** Boxes of triangles, optionally grown on every side by pad[t] (same units as positions). */
export function triangleBoxes(positions: Float64Array, triangles: Uint32Array, pad?: Float64Array): Float64Array {
  const nt = triangles.length / 3;
  const out = new Float64Array(6 * nt);
  const p = positions;
  for (let t = 0; t < nt; t++) {
    const a = 3 * triangles[3 * t], b = 3 * triangles[3 * t + 1], c = 3 * triangles[3 * t + 2];
    const g = pad ? pad[t] : 0;
    for (let k = 0; k < 3; k++) {
      const x = p[a + k], y = p[b + k], z = p[c + k];
      let lo = x < y ? x : y, hi = x < y ? y : x;
      if (z < lo) lo = z; if (z > hi) hi = z;
      out[6 * t + k] = lo - g;
      out[6 * t + 3 + k] = hi + g;
    }
  }
  return out;
}

/**
 * Reorder order[lo..hi] (and the centroids stored beside it) so that position k holds
 * the item with the k-th smallest key on `axis` (Hoare's selection, median-of-three pivot).
 */
function select(order: Uint32Array, cen: Float64Array, lo: number, hi: number, k: number, axis: number): void {
  while (hi > lo) {
    const a = cen[3 * lo + axis], b = cen[3 * ((lo + hi) >>> 1) + axis], c = cen[3 * hi + axis];
    const pivot = a < b ? (b < c ? b : a < c ? c : a) : (a < c ? a : b < c ? c : b);
    let i = lo, j = hi;
    while (i <= j) {
      while (cen[3 * i + axis] < pivot) i++;
      while (cen[3 * j + axis] > pivot) j--;
      if (i <= j) {
        const s = order[i]; order[i] = order[j]; order[j] = s;
        const i3 = 3 * i, j3 = 3 * j;
        let x = cen[i3]; cen[i3] = cen[j3]; cen[j3] = x;
        x = cen[i3 + 1]; cen[i3 + 1] = cen[j3 + 1]; cen[j3 + 1] = x;
        x = cen[i3 + 2]; cen[i3 + 2] = cen[j3 + 2]; cen[j3 + 2] = x;
        i++; j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return;
  }
}

/** Build a tree over item boxes (6 numbers per item). */
export function buildBoxTree(itemBounds: Float64Array, leafSize = 4): BoxTree {
  const n = itemBounds.length / 6;
  const maxNodes = Math.max(1, 2 * n - 1);
  const bounds = new Float64Array(6 * maxNodes);
  const left = new Int32Array(maxNodes).fill(-1);
  const start = new Uint32Array(maxNodes), count = new Uint32Array(maxNodes);
  const order = new Uint32Array(n);
  // Centroids kept in the same permutation as `order`, so every scan below is sequential.
  const cen = new Float64Array(3 * n);
  for (let i = 0; i < n; i++) {
    order[i] = i;
    for (let k = 0; k < 3; k++) cen[3 * i + k] = 0.5 * (itemBounds[6 * i + k] + itemBounds[6 * i + 3 + k]);
  }
  if (n === 0) return { nodeCount: 0, bounds: new Float64Array(0), left: new Int32Array(0), start: new Uint32Array(0), count: new Uint32Array(0), order, itemBounds };
  let nodeCount = 1;
  const stack = new Int32Array(3 * 128);
  let sp = 0;
  stack[sp++] = 0; stack[sp++] = 0; stack[sp++] = n;
  while (sp > 0) {
    const e = stack[--sp], s = stack[--sp], node = stack[--sp];
    start[node] = s;
    count[node] = e - s;
    if (e - s <= leafSize) continue;
    let cx0 = Infinity, cy0 = Infinity, cz0 = Infinity, cx1 = -Infinity, cy1 = -Infinity, cz1 = -Infinity;
    for (let k = 3 * s, end = 3 * e; k < end; k += 3) {
      const cx = cen[k], cy = cen[k + 1], cz = cen[k + 2];
      if (cx < cx0) cx0 = cx; if (cx > cx1) cx1 = cx;
      if (cy < cy0) cy0 = cy; if (cy > cy1) cy1 = cy;
      if (cz < cz0) cz0 = cz; if (cz > cz1) cz1 = cz;
    }
    const dx = cx1 - cx0, dy = cy1 - cy0, dz = cz1 - cz0;
    const axis = dx >= dy && dx >= dz ? 0 : dy >= dz ? 1 : 2;
    const mid = (s + e) >>> 1;
    select(order, cen, s, e - 1, mid, axis);
    const l = nodeCount;
    nodeCount += 2;
    left[node] = l;
    // The median split keeps the depth near log2(n), so this stack stays small.
    stack[sp++] = l; stack[sp++] = s; stack[sp++] = mid;
    stack[sp++] = l + 1; stack[sp++] = mid; stack[sp++] = e;
  }
  // Boxes bottom-up: children always have higher indices than their parent.
  for (let node = nodeCount - 1; node >= 0; node--) {
    const b = 6 * node, l = left[node];
    if (l < 0) {
      let x0 = Infinity, y0 = Infinity, z0 = Infinity, x1 = -Infinity, y1 = -Infinity, z1 = -Infinity;
      for (let k = start[node], end = k + count[node]; k < end; k++) {
        const o = 6 * order[k];
        if (itemBounds[o] < x0) x0 = itemBounds[o];
        if (itemBounds[o + 1] < y0) y0 = itemBounds[o + 1];
        if (itemBounds[o + 2] < z0) z0 = itemBounds[o + 2];
        if (itemBounds[o + 3] > x1) x1 = itemBounds[o + 3];
        if (itemBounds[o + 4] > y1) y1 = itemBounds[o + 4];
        if (itemBounds[o + 5] > z1) z1 = itemBounds[o + 5];
      }
      bounds[b] = x0; bounds[b + 1] = y0; bounds[b + 2] = z0; bounds[b + 3] = x1; bounds[b + 4] = y1; bounds[b + 5] = z1;
    } else {
      const p = 6 * l, q = 6 * (l + 1);
      for (let k = 0; k < 3; k++) {
        bounds[b + k] = bounds[p + k] < bounds[q + k] ? bounds[p + k] : bounds[q + k];
        bounds[b + 3 + k] = bounds[p + 3 + k] > bounds[q + 3 + k] ? bounds[p + 3 + k] : bounds[q + 3 + k];
      }
    }
  }
  return {
    nodeCount,
    bounds: bounds.slice(0, 6 * nodeCount),
    left: left.slice(0, nodeCount),
    start: start.slice(0, nodeCount),
    count: count.slice(0, nodeCount),
    order,
    itemBounds,
  };
}

function boxesOverlap(a: Float64Array, ia: number, b: Float64Array, ib: number): boolean {
  return a[ia] <= b[ib + 3] && b[ib] <= a[ia + 3] &&
    a[ia + 1] <= b[ib + 4] && b[ib + 1] <= a[ia + 4] &&
    a[ia + 2] <= b[ib + 5] && b[ib + 2] <= a[ia + 5];
}

// Traversal stacks, grown on demand and reused; a fresh one is taken when a visitor re-enters.
let queryStack = new Int32Array(256);
let queryBusy = false;

/** Call visit(item) for every item whose box overlaps `box` (6 numbers at `offset`); boxes touching count as overlapping. */
export function forEachItemInBox(tree: BoxTree, box: Float64Array, visit: (item: number) => void, offset = 0): void {
  if (tree.nodeCount === 0) return;
  const reentered = queryBusy;
  let stack = reentered ? new Int32Array(256) : queryStack;
  queryBusy = true;
  try {
    let sp = 0;
    stack[sp++] = 0;
    while (sp > 0) {
      const n = stack[--sp];
      if (!boxesOverlap(tree.bounds, 6 * n, box, offset)) continue;
      const l = tree.left[n];
      if (l < 0) {
        for (let k = tree.start[n], e = k + tree.count[n]; k < e; k++) {
          const i = tree.order[k];
          if (boxesOverlap(tree.itemBounds, 6 * i, box, offset)) visit(i);
        }
      } else {
        if (sp + 2 > stack.length) { const s = new Int32Array(2 * stack.length); s.set(stack); stack = s; }
        stack[sp++] = l; stack[sp++] = l + 1;
      }
    }
  } finally {
    if (!reentered) { queryStack = stack; queryBusy = false; }
  }
}

/** Squared distance from a point to the box at b[o..o+5]; zero inside. */
export function boxDistanceSq(b: Float64Array, o: number, x: number, y: number, z: number): number {
  const dx = x < b[o] ? b[o] - x : x > b[o + 3] ? x - b[o + 3] : 0;
  const dy = y < b[o + 1] ? b[o + 1] - y : y > b[o + 4] ? y - b[o + 4] : 0;
  const dz = z < b[o + 2] ? b[o + 2] - z : z > b[o + 5] ? z - b[o + 5] : 0;
  return dx * dx + dy * dy + dz * dz;
}

export interface NearestItem {
  /** Item number, -1 when the tree is empty or nothing lies within the limit. */
  item: number;
  /** Distance from the query point (same units as the boxes). */
  distance: number;
}

/**
 * The item nearest to point (x, y, z), by branch and bound: subtrees whose box is
 * farther than the best distance so far are skipped. itemDistanceSq(i) gives the
 * squared distance from the point to item i (the item must lie inside its box).
 */
export function nearestItem(tree: BoxTree, x: number, y: number, z: number, itemDistanceSq: (item: number) => number, maxDistance = Infinity): NearestItem {
  let best = maxDistance * maxDistance, bestItem = -1;
  if (tree.nodeCount === 0) return { item: -1, distance: Infinity };
  const reentered = queryBusy;
  let stack = reentered ? new Int32Array(256) : queryStack;
  queryBusy = true;
  try {
    let sp = 0;
    stack[sp++] = 0;
    while (sp > 0) {
      const n = stack[--sp];
      if (boxDistanceSq(tree.bounds, 6 * n, x, y, z) > best) continue;
      const l = tree.left[n];
      if (l < 0) {
        for (let k = tree.start[n], e = k + tree.count[n]; k < e; k++) {
          const i = tree.order[k];
          if (boxDistanceSq(tree.itemBounds, 6 * i, x, y, z) > best) continue;
          const d = itemDistanceSq(i);
          if (d < best || (bestItem < 0 && d <= best)) { best = d; bestItem = i; }
        }
      } else {
        if (sp + 2 > stack.length) { const s = new Int32Array(2 * stack.length); s.set(stack); stack = s; }
        // Nearer child on top, so it is searched first and tightens the bound.
        const dl = boxDistanceSq(tree.bounds, 6 * l, x, y, z), dr = boxDistanceSq(tree.bounds, 6 * (l + 1), x, y, z);
        if (dl <= dr) { stack[sp++] = l + 1; stack[sp++] = l; } else { stack[sp++] = l; stack[sp++] = l + 1; }
      }
    }
  } finally {
    if (!reentered) { queryStack = stack; queryBusy = false; }
  }
  return { item: bestItem, distance: bestItem < 0 ? Infinity : Math.sqrt(best) };
}

/** Per node: the label shared by all its items, or -1 when they differ. */
export function nodeLabels(tree: BoxTree, itemLabel: Uint32Array): Int32Array {
  const out = new Int32Array(tree.nodeCount);
  // Children always have higher indices than their parent, so a reverse sweep sees children first.
  for (let n = tree.nodeCount - 1; n >= 0; n--) {
    const l = tree.left[n];
    if (l < 0) {
      const s = tree.start[n], e = s + tree.count[n];
      let lab = e > s ? itemLabel[tree.order[s]] : -1;
      for (let k = s + 1; k < e && lab >= 0; k++) if (itemLabel[tree.order[k]] !== lab) lab = -1;
      out[n] = lab;
    } else {
      out[n] = out[l] >= 0 && out[l] === out[l + 1] ? out[l] : -1;
    }
  }
  return out;
}

/**
 * Call visit(i, j) once for every pair of distinct items whose boxes overlap. With
 * labels, pairs of items with the same label are skipped, and so are whole subtrees
 * whose items all share one label with the other side: pairs within one conductor
 * then cost nothing beyond the nodes where conductors meet.
 */
export function forEachOverlappingPair(tree: BoxTree, visit: (i: number, j: number) => void, labels?: { item: Uint32Array; node: Int32Array }): void {
  if (tree.nodeCount === 0) return;
  const nb = tree.bounds, ib = tree.itemBounds, left = tree.left, order = tree.order;
  let stack = new Int32Array(1024);
  let sp = 0;
  stack[sp++] = 0; stack[sp++] = 0;
  while (sp > 0) {
    const b = stack[--sp], a = stack[--sp];
    if (labels && labels.node[a] >= 0 && labels.node[a] === labels.node[b]) continue;
    if (sp + 6 > stack.length) { const s = new Int32Array(2 * stack.length); s.set(stack); stack = s; }
    if (a === b) {
      const l = left[a];
      if (l >= 0) {
        stack[sp++] = l; stack[sp++] = l;
        stack[sp++] = l + 1; stack[sp++] = l + 1;
        stack[sp++] = l; stack[sp++] = l + 1;
        continue;
      }
      const s = tree.start[a], e = s + tree.count[a];
      for (let p = s; p < e; p++) {
        const i = order[p];
        for (let q = p + 1; q < e; q++) {
          const j = order[q];
          if (labels && labels.item[i] === labels.item[j]) continue;
          if (boxesOverlap(ib, 6 * i, ib, 6 * j)) visit(i, j);
        }
      }
      continue;
    }
    if (!boxesOverlap(nb, 6 * a, nb, 6 * b)) continue;
    const la = left[a], lb = left[b];
    if (la < 0 && lb < 0) {
      const sa = tree.start[a], ea = sa + tree.count[a], sb = tree.start[b], eb = sb + tree.count[b];
      for (let p = sa; p < ea; p++) {
        const i = order[p];
        for (let q = sb; q < eb; q++) {
          const j = order[q];
          if (labels && labels.item[i] === labels.item[j]) continue;
          if (boxesOverlap(ib, 6 * i, ib, 6 * j)) visit(i, j);
        }
      }
      continue;
    }
    // Descend into the larger node (or the only internal one).
    if (lb < 0 || (la >= 0 && tree.count[a] >= tree.count[b])) {
      stack[sp++] = la; stack[sp++] = b;
      stack[sp++] = la + 1; stack[sp++] = b;
    } else {
      stack[sp++] = a; stack[sp++] = lb;
      stack[sp++] = a; stack[sp++] = lb + 1;
    }
  }
}
