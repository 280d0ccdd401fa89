/**
 * Triangles of one conductor that cover the same surface twice: repeated faces (the same three
 * vertices in any order and winding, after welding) and distinct triangles that overlap with
 * positive area in one plane. Both give two panels carrying the same charge: the Galerkin
 * matrix has two equal (or nearly equal) rows and is singular, and an iterative solve ends on
 * a wrong split of the charge. A surface meeting itself along an edge or at a corner is legal.
 *
 * Repeats are found by a hash of the sorted vertex numbers (O(N)); overlaps among the remaining
 * triangles by the bounding-volume hierarchy (bvh.ts) over each conductor's triangles, testing
 * only pairs whose boxes meet (O(N log N) on a surface that does not cover itself). Surfaces
 * that overlap everywhere (millions of copies shifted a little) would make that pair search
 * quadratic, so it stops after a budget of pairs and reports its counts as lower bounds.
 */
import { type SurfaceMesh, triangleCount } from "./model.js";
import { buildBoxTree, forEachOverlappingPair } from "./bvh.js";
import { loadTrianglePair, longestEdgeSquared } from "./triangle-distance.js";
import { triangleCentroid, triangleNormal } from "../geometry/triangle.js";

export interface SelfOverlap {
  /** Conductor index, into `mesh.names`. */
  conductor: number;
  /** Triangles that repeat an earlier triangle of the conductor (same three vertices). */
  repeated: number;
  /** Pairs of distinct triangles of the conductor overlapping with positive area in one plane. */
  overlapping: number;
  /** The first pair found (a repeat if any, else an overlap): triangle numbers of the mesh. */
  triangles: [number, number];
  /** Centroid of the first pair's second triangle; metres. */
  position: [number, number, number];
  /** True when the overlap search stopped at its budget: `overlapping` is then a lower bound. */
  truncated: boolean;
}

/**
 * Coplanarity and strictness tolerance, relative to the longer triangle's longest edge: the
 * weld tolerance's default (weld.ts), so vertices the loader would not weld are not "the same".
 */
export const OVERLAP_TOLERANCE = 1e-6;

/** Box-overlapping pairs examined per triangle (plus a constant) before the search stops. */
const PAIR_BUDGET_PER_TRIANGLE = 64;
const PAIR_BUDGET_BASE = 1_000_000;

/**
 * Per conductor that covers itself, what was found; conductors without a finding are left out.
 * `pairBudget` (box-overlapping pairs examined per conductor) defaults to 1e6 + 64 per triangle.
 */
export function selfOverlaps(mesh: SurfaceMesh, opts: { pairBudget?: number } = {}): SelfOverlap[] {
  const nt = triangleCount(mesh), nc = mesh.names.length;
  const found: Array<SelfOverlap | undefined> = new Array(nc);
  const repeatOf = repeatedTriangles(mesh.triangles, mesh.conductor);
  const record = (c: number, a: number, b: number): SelfOverlap => {
    let f = found[c];
    if (!f) {
      f = { conductor: c, repeated: 0, overlapping: 0, triangles: [a, b], position: centroid(mesh, b), truncated: false };
      found[c] = f;
    }
    return f;
  };
  for (let t = 0; t < nt; t++) if (repeatOf[t] >= 0) record(mesh.conductor[t], repeatOf[t], t).repeated++;

  // Triangles of each conductor, repeats left out (a repeat overlaps its original everywhere).
  const offset = new Uint32Array(nc + 1);
  for (let t = 0; t < nt; t++) if (repeatOf[t] < 0) offset[mesh.conductor[t] + 1]++;
  for (let c = 0; c < nc; c++) offset[c + 1] += offset[c];
  const list = new Uint32Array(offset[nc]);
  const fill = offset.slice(0, nc);
  for (let t = 0; t < nt; t++) if (repeatOf[t] < 0) list[fill[mesh.conductor[t]]++] = t;

  for (let c = 0; c < nc; c++) {
    const items = list.subarray(offset[c], offset[c + 1]);
    if (items.length < 2) continue;
    const tree = buildBoxTree(paddedBoxes(mesh.positions, mesh.triangles, items));
    const plane = planes(mesh.positions, mesh.triangles, items);
    const budget = opts.pairBudget ?? PAIR_BUDGET_BASE + PAIR_BUDGET_PER_TRIANGLE * items.length;
    let examined = 0;
    try {
      forEachOverlappingPair(tree, (i, j) => {
        if (++examined > budget) throw STOP;
        // Coplanar triangles have each centroid within the tolerance of the other's plane; on a
        // curved surface that rejects nearly every neighbour before the full test.
        const pi = 8 * i, pj = 8 * j;
        const dij = plane[pi] * plane[pj + 4] + plane[pi + 1] * plane[pj + 5] + plane[pi + 2] * plane[pj + 6] - plane[pi + 3];
        const dji = plane[pj] * plane[pi + 4] + plane[pj + 1] * plane[pi + 5] + plane[pj + 2] * plane[pi + 6] - plane[pj + 3];
        const tol = plane[pi + 7] > plane[pj + 7] ? plane[pi + 7] : plane[pj + 7];
        if (!(Math.abs(dij) <= tol && Math.abs(dji) <= tol)) return;
        const a = items[i] < items[j] ? items[i] : items[j], b = items[i] < items[j] ? items[j] : items[i];
        if (coplanarOverlap(mesh.positions, mesh.triangles, a, b)) record(c, a, b).overlapping++;
      });
    } catch (e) {
      if (e !== STOP) throw e;
      const f = found[c];
      if (f) f.truncated = true;
    }
  }
  return found.filter((f): f is SelfOverlap => f !== undefined);
}

const STOP = Symbol("pair budget spent");

/**
 * Per triangle, the earlier triangle of the same conductor with the same three vertex numbers
 * (in any order), or -1. Open addressing over a table twice the triangle count, keyed by the
 * sorted vertex numbers and the conductor.
 */
export function repeatedTriangles(triangles: Uint32Array, conductor: Uint32Array): Int32Array {
  const nt = conductor.length;
  const out = new Int32Array(nt).fill(-1);
  let size = 16;
  while (size < 2 * nt) size *= 2;
  const mask = size - 1;
  const slot = new Int32Array(size).fill(-1);
  // Sorted corners of every triangle, so a probe compares numbers without sorting again.
  const sorted = new Uint32Array(3 * nt);
  for (let t = 0; t < nt; t++) {
    let a = triangles[3 * t], b = triangles[3 * t + 1], c = triangles[3 * t + 2], s: number;
    if (a > b) { s = a; a = b; b = s; }
    if (b > c) { s = b; b = c; c = s; }
    if (a > b) { s = a; a = b; b = s; }
    sorted[3 * t] = a; sorted[3 * t + 1] = b; sorted[3 * t + 2] = c;
    const g = conductor[t];
    // Multiplicative mixing (the constants of weld.ts's vertex hash and a fourth odd one).
    let h = Math.imul(a, 0x9e3779b1) ^ Math.imul(b, 0x85ebca77) ^ Math.imul(c, 0xc2b2ae3d) ^ Math.imul(g, 0x27d4eb2f);
    h ^= h >>> 15;
    h = Math.imul(h, 0x2c1b3c6d);
    h ^= h >>> 12;
    for (let k = h & mask; ; k = (k + 1) & mask) {
      const u = slot[k];
      if (u < 0) { slot[k] = t; break; }
      if (sorted[3 * u] === a && sorted[3 * u + 1] === b && sorted[3 * u + 2] === c && conductor[u] === g) { out[t] = u; break; }
    }
  }
  return out;
}

/** Boxes of the listed triangles, grown by the coplanarity tolerance so near-coplanar neighbours meet. */
function paddedBoxes(p: Float64Array, tr: Uint32Array, items: Uint32Array): Float64Array {
  const out = new Float64Array(6 * items.length);
  for (let i = 0; i < items.length; i++) {
    const t = items[i];
    const a = 3 * tr[3 * t], b = 3 * tr[3 * t + 1], c = 3 * tr[3 * t + 2];
    let h2 = 0;
    for (let k = 0; k < 3; k++) {
      const x = p[a + k], y = p[b + k], z = p[c + k];
      out[6 * i + k] = Math.min(x, y, z);
      out[6 * i + 3 + k] = Math.max(x, y, z);
      const e = out[6 * i + 3 + k] - out[6 * i + k];
      h2 += e * e;
    }
    const g = OVERLAP_TOLERANCE * Math.sqrt(h2);
    for (let k = 0; k < 3; k++) { out[6 * i + k] -= g; out[6 * i + 3 + k] += g; }
  }
  return out;
}

/**
 * Per listed triangle, 8 numbers: unit normal (3), its offset n·x of the plane, centroid (3), and
 * the coplanarity tolerance (OVERLAP_TOLERANCE × longest edge). Zero-area triangles get a zero
 * normal, so only a centroid at the origin's offset passes; coplanarOverlap rejects them anyway.
 */
function planes(p: Float64Array, tr: Uint32Array, items: Uint32Array): Float64Array {
  const out = new Float64Array(8 * items.length);
  for (let i = 0; i < items.length; i++) {
    const t = items[i];
    const a = 3 * tr[3 * t], b = 3 * tr[3 * t + 1], c = 3 * tr[3 * t + 2];
    const o = 8 * i;
    triangleNormal(out, o, p, a, b, c);
    triangleCentroid(out, o + 4, p, a, b, c);
    out[o + 3] = out[o] * out[o + 4] + out[o + 1] * out[o + 5] + out[o + 2] * out[o + 6];
    const ux = p[b] - p[a], uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2];
    const vx = p[c] - p[a], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
    const wx = p[c] - p[b], wy = p[c + 1] - p[b + 1], wz = p[c + 2] - p[b + 2];
    const h2 = Math.max(ux * ux + uy * uy + uz * uz, vx * vx + vy * vy + vz * vz, wx * wx + wy * wy + wz * wz);
    out[o + 7] = OVERLAP_TOLERANCE * Math.sqrt(h2);
  }
  return out;
}

function centroid(mesh: SurfaceMesh, t: number): [number, number, number] {
  const tr = mesh.triangles, c = triangleCentroid(new Float64Array(3), 0, mesh.positions, 3 * tr[3 * t], 3 * tr[3 * t + 1], 3 * tr[3 * t + 2]);
  return [c[0], c[1], c[2]];
}

// Corners of the pair under test: A at 0..8, B at 9..17; their 2D projections in Q (A 0..5, B 6..11).
const V = new Float64Array(18);
const Q = new Float64Array(12);

/**
 * Do triangles ta and tb lie in one plane (every corner of each within the tolerance of the
 * other's plane) and overlap with positive area, whichever way each faces? In the plane the
 * common part of two triangles is a convex polygon whose corners are corners of one inside
 * the other or crossings of two edges (the construction of O'Rourke, "Computational Geometry
 * in C", 2nd ed., 1998, §7.6); it has positive area when two edges cross properly, a corner of
 * one lies strictly inside the other, or (for a triangle inside or equal to the other, all of
 * whose corners lie on the other's edges) a centroid lies strictly inside the other. "Strictly"
 * is beyond the tolerance, so neighbours sharing an edge or a corner do not count.
 */
export function coplanarOverlap(positions: Float64Array, triangles: Uint32Array, ta: number, tb: number): boolean {
  loadTrianglePair(positions, triangles, ta, tb, V);
  const h2 = longestEdgeSquared(V);
  const tol = OVERLAP_TOLERANCE * Math.sqrt(h2);
  // Normals (twice the area vectors; the formula of geometry/triangle.ts triangleAreaVector, inlined).
  const n1x = (V[4] - V[1]) * (V[8] - V[2]) - (V[5] - V[2]) * (V[7] - V[1]);
  const n1y = (V[5] - V[2]) * (V[6] - V[0]) - (V[3] - V[0]) * (V[8] - V[2]);
  const n1z = (V[3] - V[0]) * (V[7] - V[1]) - (V[4] - V[1]) * (V[6] - V[0]);
  const n2x = (V[13] - V[10]) * (V[17] - V[11]) - (V[14] - V[11]) * (V[16] - V[10]);
  const n2y = (V[14] - V[11]) * (V[15] - V[9]) - (V[12] - V[9]) * (V[17] - V[11]);
  const n2z = (V[12] - V[9]) * (V[16] - V[10]) - (V[13] - V[10]) * (V[15] - V[9]);
  const l1 = Math.hypot(n1x, n1y, n1z), l2 = Math.hypot(n2x, n2y, n2z);
  // Zero-area triangles cover nothing (the loader drops them; the check reports them).
  if (!(l1 > tol * tol) || !(l2 > tol * tol)) return false;
  for (let k = 0; k < 3; k++) {
    const d1 = n1x * (V[9 + 3 * k] - V[0]) + n1y * (V[10 + 3 * k] - V[1]) + n1z * (V[11 + 3 * k] - V[2]);
    if (!(Math.abs(d1) <= tol * l1)) return false;
    const d2 = n2x * (V[3 * k] - V[9]) + n2y * (V[3 * k + 1] - V[10]) + n2z * (V[3 * k + 2] - V[11]);
    if (!(Math.abs(d2) <= tol * l2)) return false;
  }
  // Project on the coordinate plane where A's normal is largest.
  const ax = Math.abs(n1x), ay = Math.abs(n1y), az = Math.abs(n1z);
  const i0 = ax >= ay && ax >= az ? 1 : 0;
  const i1 = ax >= ay && ax >= az ? 2 : ay >= az ? 2 : 1;
  for (let j = 0; j < 6; j++) { Q[2 * j] = V[3 * j + i0]; Q[2 * j + 1] = V[3 * j + i1]; }
  // A signed double area beyond eps puts a point farther than tol from a line through an edge
  // no longer than the longest edge.
  const eps = tol * Math.sqrt(h2);
  for (let i = 0; i < 3; i++) {
    const i2 = i === 2 ? 0 : i + 1;
    for (let j = 0; j < 3; j++) {
      const j2 = j === 2 ? 0 : j + 1;
      if (properCrossing(2 * i, 2 * i2, 6 + 2 * j, 6 + 2 * j2, eps)) return true;
    }
  }
  for (let j = 0; j < 3; j++) {
    if (strictlyInside(Q[6 + 2 * j], Q[7 + 2 * j], 0, eps) || strictlyInside(Q[2 * j], Q[2 * j + 1], 6, eps)) return true;
  }
  return strictlyInside((Q[6] + Q[8] + Q[10]) / 3, (Q[7] + Q[9] + Q[11]) / 3, 0, eps)
    || strictlyInside((Q[0] + Q[2] + Q[4]) / 3, (Q[1] + Q[3] + Q[5]) / 3, 6, eps);
}

/** Signed twice-area of the 2D triangle (a, b, c). */
function orient2(ax: number, ay: number, bx: number, by: number, cx: number, cy: number): number {
  return (bx - ax) * (cy - ay) - (by - ay) * (cx - ax);
}

/** Segments Q[p]–Q[q] and Q[r]–Q[s] cross at a point interior to both, every end beyond eps of the other line. */
function properCrossing(p: number, q: number, r: number, s: number, eps: number): boolean {
  const o1 = orient2(Q[p], Q[p + 1], Q[q], Q[q + 1], Q[r], Q[r + 1]), o2 = orient2(Q[p], Q[p + 1], Q[q], Q[q + 1], Q[s], Q[s + 1]);
  if (!((o1 > eps && o2 < -eps) || (o1 < -eps && o2 > eps))) return false;
  const o3 = orient2(Q[r], Q[r + 1], Q[s], Q[s + 1], Q[p], Q[p + 1]), o4 = orient2(Q[r], Q[r + 1], Q[s], Q[s + 1], Q[q], Q[q + 1]);
  return (o3 > eps && o4 < -eps) || (o3 < -eps && o4 > eps);
}

/** Point (x, y) inside the 2D triangle at Q[o..o+5], beyond eps of each edge's line, either winding. */
function strictlyInside(x: number, y: number, o: number, eps: number): boolean {
  const d1 = orient2(Q[o], Q[o + 1], Q[o + 2], Q[o + 3], x, y);
  const d2 = orient2(Q[o + 2], Q[o + 3], Q[o + 4], Q[o + 5], x, y);
  const d3 = orient2(Q[o + 4], Q[o + 5], Q[o], Q[o + 1], x, y);
  return (d1 > eps && d2 > eps && d3 > eps) || (d1 < -eps && d2 < -eps && d3 < -eps);
}

/**
 * The mesh without the triangles that repeat an earlier one of their conductor (vertices kept),
 * and how many were removed; the mesh itself when none repeats.
 */
export function withoutRepeats(mesh: SurfaceMesh): { mesh: SurfaceMesh; removed: number } {
  const repeatOf = repeatedTriangles(mesh.triangles, mesh.conductor);
  let removed = 0;
  for (let t = 0; t < repeatOf.length; t++) if (repeatOf[t] >= 0) removed++;
  if (removed === 0) return { mesh, removed };
  const n = repeatOf.length - removed;
  const triangles = new Uint32Array(3 * n), conductor = new Uint32Array(n);
  for (let t = 0, k = 0; t < repeatOf.length; t++) {
    if (repeatOf[t] >= 0) continue;
    triangles[3 * k] = mesh.triangles[3 * t]; triangles[3 * k + 1] = mesh.triangles[3 * t + 1]; triangles[3 * k + 2] = mesh.triangles[3 * t + 2];
    conductor[k++] = mesh.conductor[t];
  }
  return { mesh: { ...mesh, triangles, conductor }, removed };
}
