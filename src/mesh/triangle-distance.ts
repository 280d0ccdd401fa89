/**
 * Distance between two triangles of a mesh, with the closest points that realise it.
 *
 * Scalar kernels over module-level scratch: no allocation per triangle pair. Arguments as in
 * the rest of src/mesh: the mesh arrays and triangle indices first, the output last. Here
 * rather than in src/geometry because it reads corners through a mesh's triangle indices; the
 * point and segment measures it is built from are in src/geometry/closest-point.ts.
 */
import { closestPointTriangle, closestPointsSegments } from "../geometry/closest-point.js";
import { triangleAreaVector } from "../geometry/triangle.js";

const cp = new Float64Array(3);
// Corners of the two triangles under test: A0 A1 A2 B0 B1 B2, 3 numbers each.
const V = new Float64Array(18);
/** Scratch for a triangle's area vector (src/geometry/triangle.ts). */
const NRM = new Float64Array(3);
const seg = new Float64Array(6);

/** The corners of triangles ta and tb of (p, tr) into out[0..8] and out[9..17]. */
export function loadTrianglePair(p: Float64Array, tr: Uint32Array, ta: number, tb: number, out: Float64Array): void {
  for (let k = 0; k < 3; k++) {
    const ia = 3 * tr[3 * ta + k], ib = 3 * tr[3 * tb + k];
    out[3 * k] = p[ia]; out[3 * k + 1] = p[ia + 1]; out[3 * k + 2] = p[ia + 2];
    out[9 + 3 * k] = p[ib]; out[9 + 3 * k + 1] = p[ib + 1]; out[9 + 3 * k + 2] = p[ib + 2];
  }
}

/** The longest edge of the two triangles loaded by loadTrianglePair, squared. */
export function longestEdgeSquared(V: Float64Array): number {
  let h2 = 0;
  for (let k = 0; k < 3; k++) {
    const k2 = k === 2 ? 0 : k + 1;
    for (let o = 0; o <= 9; o += 9) {
      const l = (V[o + 3 * k2] - V[o + 3 * k]) ** 2 + (V[o + 3 * k2 + 1] - V[o + 3 * k + 1]) ** 2 + (V[o + 3 * k2 + 2] - V[o + 3 * k + 2]) ** 2;
      if (l > h2) h2 = l;
    }
  }
  return h2;
}

/**
 * Distance between triangles ta and tb of (positions, triangles); metres when positions are.
 * The closest points are written into out[0..2] (on ta) and out[3..5] (on tb).
 *
 * Two disjoint triangles realise their distance either between two edges or between a
 * corner and the other face (Ericson 2005, 5.1.9, closing remarks on triangle pairs):
 * 9 segment–segment and 6 point–triangle tests. Where one triangle pierces the other,
 * an edge crosses the other's plane at a point inside it, so the 6 edge–plane crossings
 * are tested as well and the result is 0 for intersecting triangles.
 */
export function triangleTriangleDistance(positions: Float64Array, triangles: Uint32Array, ta: number, tb: number, out: Float64Array): number {
  loadTrianglePair(positions, triangles, ta, tb, V);
  let best = Infinity;
  for (let i = 0; i < 3; i++) {
    const i2 = i === 2 ? 0 : i + 1;
    for (let j = 0; j < 3; j++) {
      const j2 = j === 2 ? 0 : j + 1;
      const d = closestPointsSegments(seg,
        V[3 * i], V[3 * i + 1], V[3 * i + 2], V[3 * i2], V[3 * i2 + 1], V[3 * i2 + 2],
        V[9 + 3 * j], V[9 + 3 * j + 1], V[9 + 3 * j + 2], V[9 + 3 * j2], V[9 + 3 * j2 + 1], V[9 + 3 * j2 + 2]);
      if (d < best) { best = d; out.set(seg); }
    }
  }
  for (let side = 0; side < 2; side++) {
    const o = side === 0 ? 0 : 9, q = side === 0 ? 9 : 0;
    const ax = V[q], ay = V[q + 1], az = V[q + 2], bx = V[q + 3], by = V[q + 4], bz = V[q + 5], cx = V[q + 6], cy = V[q + 7], cz = V[q + 8];
    for (let k = 0; k < 3; k++) {
      const px = V[o + 3 * k], py = V[o + 3 * k + 1], pz = V[o + 3 * k + 2];
      const d = closestPointTriangle(cp, px, py, pz, ax, ay, az, bx, by, bz, cx, cy, cz);
      if (d < best) { best = d; writePair(out, side, px, py, pz); }
    }
    // Edge–plane crossings of this side's edges through the other triangle's plane.
    triangleAreaVector(NRM, 0, V, q, q + 3, q + 6);
    const nx = NRM[0], ny = NRM[1], nz = NRM[2];
    if (nx === 0 && ny === 0 && nz === 0) continue;
    for (let k = 0; k < 3; k++) {
      const k2 = k === 2 ? 0 : k + 1;
      const sx = V[o + 3 * k], sy = V[o + 3 * k + 1], sz = V[o + 3 * k + 2];
      const ex = V[o + 3 * k2], ey = V[o + 3 * k2 + 1], ez = V[o + 3 * k2 + 2];
      const ds = nx * (sx - ax) + ny * (sy - ay) + nz * (sz - az);
      const de = nx * (ex - ax) + ny * (ey - ay) + nz * (ez - az);
      if ((ds > 0 && de > 0) || (ds < 0 && de < 0) || ds === de) continue;
      const u = ds / (ds - de);
      const px = sx + u * (ex - sx), py = sy + u * (ey - sy), pz = sz + u * (ez - sz);
      const d = closestPointTriangle(cp, px, py, pz, ax, ay, az, bx, by, bz, cx, cy, cz);
      if (d < best) { best = d; writePair(out, side, px, py, pz); }
    }
  }
  return Math.sqrt(best);
}

function writePair(out: Float64Array, side: number, px: number, py: number, pz: number): void {
  if (side === 0) { out[0] = px; out[1] = py; out[2] = pz; out[3] = cp[0]; out[4] = cp[1]; out[5] = cp[2]; }
  else { out[0] = cp[0]; out[1] = cp[1]; out[2] = cp[2]; out[3] = px; out[4] = py; out[5] = pz; }
}
