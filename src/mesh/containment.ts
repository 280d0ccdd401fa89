/**
 * Point containment in closed triangle surfaces: the winding number by signed ray crossings,
 * found through a bounding-volume hierarchy (bvh.ts), so a query costs about log N triangle
 * tests instead of the N solid angles of the direct winding sum.
 *
 * A ray from x along d crosses an outward-oriented closed surface with sign(d·n̂) = +1 on its
 * way out and −1 on its way in; the sum over the crossings with t > 0 is the number of times
 * the surface winds around x (1 inside, 0 outside; common practice, e.g. the crossing-number
 * tests of J. O'Rourke, Computational Geometry in C, 2nd ed., §7.4, in their signed form).
 * Ray–triangle crossings by T. Möller & B. Trumbore, "Fast, minimum storage ray-triangle
 * intersection", J. Graphics Tools 2(1):21, 1997. A ray that grazes an edge or vertex, or runs
 * in a triangle's plane, makes the count ambiguous: the query is repeated along other fixed
 * directions, and only if every one is ambiguous is the exact solid-angle sum taken.
 */
import { buildBoxTree, triangleBoxes, type BoxTree } from "./bvh.js";
import { solidAngle } from "../geometry/solid-angle.js";

export interface SurfaceIndex {
  tree: BoxTree;
  /** 9 coordinates per triangle; metres. */
  vertices: Float64Array;
  /** Bounding box of all triangles: min x, y, z, max x, y, z. */
  box: Float64Array;
}

/** Ray directions, unit, chosen to avoid the axes and the diagonals of axis-aligned meshes. */
const DIRECTIONS = [
  [0.5377, 0.8014, 0.2625], [-0.3146, 0.4021, -0.8598], [0.8797, -0.4187, 0.2255], [-0.1571, -0.6919, 0.7048],
].map((d) => { const l = Math.hypot(d[0], d[1], d[2]); return [d[0] / l, d[1] / l, d[2] / l]; });
/** Barycentric margin (of 1) below which a crossing counts as grazing an edge. */
const GRAZE = 1e-9;

/** Index the triangles (3 vertex indices each into positions, metres) for containment queries. */
export function surfaceIndex(positions: Float64Array, triangles: Uint32Array): SurfaceIndex {
  const nt = triangles.length / 3;
  const vertices = new Float64Array(9 * nt);
  const box = Float64Array.from([Infinity, Infinity, Infinity, -Infinity, -Infinity, -Infinity]);
  for (let t = 0; t < nt; t++) for (let m = 0; m < 3; m++) for (let k = 0; k < 3; k++) {
    const x = positions[3 * triangles[3 * t + m] + k];
    vertices[9 * t + 3 * m + k] = x;
    if (x < box[k]) box[k] = x;
    if (x > box[3 + k]) box[3 + k] = x;
  }
  return { tree: buildBoxTree(triangleBoxes(positions, triangles)), vertices, box };
}

let stack = new Int32Array(128);

/**
 * Signed crossings of the ray x + t·d, t > 0, with the indexed triangles; NaN if the ray grazes
 * an edge or runs in a triangle's plane where it meets it.
 */
function crossings(S: SurfaceIndex, x: number, y: number, z: number, dx: number, dy: number, dz: number): number {
  const T = S.tree, B = T.bounds, v = S.vertices;
  if (T.nodeCount === 0) return 0;
  const ix = 1 / dx, iy = 1 / dy, iz = 1 / dz;
  let sum = 0, sp = 0;
  stack[sp++] = 0;
  while (sp > 0) {
    const n = stack[--sp], o = 6 * n;
    // Slab test (directions have no zero component).
    let t0 = (B[o] - x) * ix, t1 = (B[o + 3] - x) * ix;
    if (t0 > t1) { const s = t0; t0 = t1; t1 = s; }
    let u0 = (B[o + 1] - y) * iy, u1 = (B[o + 4] - y) * iy;
    if (u0 > u1) { const s = u0; u0 = u1; u1 = s; }
    if (u0 > t0) t0 = u0;
    if (u1 < t1) t1 = u1;
    let w0 = (B[o + 2] - z) * iz, w1 = (B[o + 5] - z) * iz;
    if (w0 > w1) { const s = w0; w0 = w1; w1 = s; }
    if (w0 > t0) t0 = w0;
    if (w1 < t1) t1 = w1;
    if (t1 < 0 || t0 > t1) continue;
    const l = T.left[n];
    if (l >= 0) {
      if (sp + 2 > stack.length) { const s = new Int32Array(2 * stack.length); s.set(stack); stack = s; }
      stack[sp++] = l; stack[sp++] = l + 1;
      continue;
    }
    for (let k = T.start[n], e = k + T.count[n]; k < e; k++) {
      const q = 9 * T.order[k];
      const ax = v[q], ay = v[q + 1], az = v[q + 2];
      const e1x = v[q + 3] - ax, e1y = v[q + 4] - ay, e1z = v[q + 5] - az;
      const e2x = v[q + 6] - ax, e2y = v[q + 7] - ay, e2z = v[q + 8] - az;
      const px = dy * e2z - dz * e2y, py = dz * e2x - dx * e2z, pz = dx * e2y - dy * e2x;
      const det = e1x * px + e1y * py + e1z * pz;
      const sx = x - ax, sy = y - ay, sz = z - az;
      // The scale of det: |e1||e2|; a ray within ~1e-12 rad of the plane is "in" it.
      const scale = Math.sqrt((e1x * e1x + e1y * e1y + e1z * e1z) * (e2x * e2x + e2y * e2y + e2z * e2z));
      // A ray (nearly) in the plane of a triangle whose box it passes: ill-conditioned, retry.
      if (Math.abs(det) <= 1e-12 * scale) return NaN;
      const inv = 1 / det;
      const u = (sx * px + sy * py + sz * pz) * inv;
      if (u < -GRAZE || u > 1 + GRAZE) continue;
      const qx = sy * e1z - sz * e1y, qy = sz * e1x - sx * e1z, qz = sx * e1y - sy * e1x;
      const w = (dx * qx + dy * qy + dz * qz) * inv;
      if (w < -GRAZE || u + w > 1 + GRAZE) continue;
      const t = (e2x * qx + e2y * qy + e2z * qz) * inv;
      if (t <= 0) continue;
      if (u < GRAZE || w < GRAZE || u + w > 1 - GRAZE) return NaN;
      // det = d·(e1 × e2) up to sign convention: e1 × e2 is the outward normal of a CCW triangle.
      sum += det > 0 ? -1 : 1;
    }
  }
  return sum;
}

/** Winding number of the indexed closed surface(s) about the point (1 inside an outward surface, 0 outside). */
export function windingNumber(S: SurfaceIndex, x: number, y: number, z: number): number {
  const b = S.box;
  if (x < b[0] || y < b[1] || z < b[2] || x > b[3] || y > b[4] || z > b[5]) return 0;
  for (const d of DIRECTIONS) {
    const c = crossings(S, x, y, z, d[0], d[1], d[2]);
    if (!Number.isNaN(c)) return c;
  }
  // Every ray grazed: the exact sum of solid angles (+4π per enclosing outward surface).
  const v = S.vertices, nt = v.length / 9;
  let w = 0;
  for (let t = 0; t < nt; t++) w += solidAngle(v, 9 * t, 9 * t + 3, 9 * t + 6, x, y, z);
  return Math.round(w / (4 * Math.PI));
}
