/**
 * Contact between two triangles of a mesh: whether they share a point at all (Möller's
 * test), whether they cross properly rather than meet along an edge or a face, and whether
 * they lie face on face facing the same way.
 *
 * Scalar kernels over module-level scratch: no allocation per triangle pair. Arguments as in
 * the rest of src/mesh: the mesh arrays and triangle indices first.
 */
import { triangleAreaVector } from "../geometry/triangle.js";
import { loadTrianglePair, longestEdgeSquared, triangleTriangleDistance } from "./triangle-distance.js";

// Corners of the two triangles under test: A0 A1 A2 B0 B1 B2, 3 numbers each.
const V = new Float64Array(18);
/** Scratch for a triangle's area vector (src/geometry/triangle.ts). */
const NRM = new Float64Array(3);

/** Relative snap of plane distances to zero, as a fraction of the longer triangle's longest edge. */
const COPLANAR_EPS = 1e-9;

/**
 * Do triangles ta and tb share at least one point (touching counts)?
 * Möller, "A fast triangle-triangle intersection test", J. Graphics Tools 2(2), 1997:
 * reject when one triangle lies strictly on one side of the other's plane; otherwise
 * compare the two intervals in which the triangles cut the planes' common line,
 * projected on its dominant axis; coplanar triangles are tested in 2D by edge
 * crossings and containment. Plane distances within COPLANAR_EPS of the panel size
 * are taken as zero (Möller's epsilon, made relative to scale).
 */
export function trianglesIntersect(positions: Float64Array, triangles: Uint32Array, ta: number, tb: number): boolean {
  loadTrianglePair(positions, triangles, ta, tb, V);
  const h2 = longestEdgeSquared(V);
  const eps = COPLANAR_EPS * Math.sqrt(h2);
  const n1l = planeDistances(0, 9, eps);
  const du0 = DIST[0], du1 = DIST[1], du2 = DIST[2];
  if (du0 * du1 > 0 && du0 * du2 > 0) return false;
  const n2l = planeDistances(9, 0, eps);
  const dv0 = DIST[0], dv1 = DIST[1], dv2 = DIST[2];
  if (dv0 * dv1 > 0 && dv0 * dv2 > 0) return false;
  if (n1l === 0 || n2l === 0) return degenerateIntersect(positions, triangles, ta, tb);
  const n1x = AV[0], n1y = AV[1], n1z = AV[2], n2x = AV[3], n2y = AV[4], n2z = AV[5];
  // Direction of the line where the planes meet; project on its largest axis.
  const Dx = n1y * n2z - n1z * n2y, Dy = n1z * n2x - n1x * n2z, Dz = n1x * n2y - n1y * n2x;
  const ax = Math.abs(Dx), ay = Math.abs(Dy), az = Math.abs(Dz);
  const axis = ax >= ay && ax >= az ? 0 : ay >= az ? 1 : 2;
  const vp0 = V[axis], vp1 = V[3 + axis], vp2 = V[6 + axis];
  const up0 = V[9 + axis], up1 = V[12 + axis], up2 = V[15 + axis];
  if (!interval(iv, 0, vp0, vp1, vp2, dv0, dv1, dv2) || !interval(iv, 2, up0, up1, up2, du0, du1, du2)) {
    return coplanarIntersect(Math.abs(n1x), Math.abs(n1y), Math.abs(n1z));
  }
  return !(iv[1] < iv[2] || iv[3] < iv[0]);
}

const iv = new Float64Array(4);
/** Area vectors of the two triangles under test: A's at [0..2], B's at [3..5]. */
const AV = new Float64Array(6);
/** Plane distances of one triangle's corners, from planeDistances. */
const DIST = new Float64Array(3);

/**
 * The plane n·x + d = 0 of the triangle at V[o..o+8], n its area vector (into AV[o/3..]), and
 * n·x + d at the other triangle's corners V[q..q+8] into DIST, taken as zero within eps·|n|
 * (Möller's epsilon, relative). Returns |n|.
 */
function planeDistances(o: number, q: number, eps: number): number {
  const a = o / 3;
  triangleAreaVector(AV, a, V, o, o + 3, o + 6);
  const nx = AV[a], ny = AV[a + 1], nz = AV[a + 2];
  const nl = Math.hypot(nx, ny, nz);
  const d = -(nx * V[o] + ny * V[o + 1] + nz * V[o + 2]);
  const e = eps * nl;
  for (let k = 0; k < 3; k++) {
    const s = nx * V[q + 3 * k] + ny * V[q + 3 * k + 1] + nz * V[q + 3 * k + 2] + d;
    DIST[k] = Math.abs(s) <= e ? 0 : s;
  }
  return nl;
}

/**
 * The interval (sorted, into out[o], out[o+1]) cut on the planes' common line by a
 * triangle with projected corners p0..p2 and plane distances d0..d2 (Möller 1997,
 * COMPUTE_INTERVALS). False when all distances are zero (coplanar).
 */
function interval(out: Float64Array, o: number, p0: number, p1: number, p2: number, d0: number, d1: number, d2: number): boolean {
  let a: number, b: number;
  if (d0 * d1 > 0) { a = p2 + (p0 - p2) * d2 / (d2 - d0); b = p2 + (p1 - p2) * d2 / (d2 - d1); }
  else if (d0 * d2 > 0) { a = p1 + (p0 - p1) * d1 / (d1 - d0); b = p1 + (p2 - p1) * d1 / (d1 - d2); }
  else if (d1 * d2 > 0 || d0 !== 0) {
    a = p0 + (p1 - p0) * d0 / (d0 - d1);
    b = p0 + (p2 - p0) * d0 / (d0 - d2);
  }
  else if (d1 !== 0) { a = p1 + (p0 - p1) * d1 / (d1 - d0); b = p1 + (p2 - p1) * d1 / (d1 - d2); }
  else if (d2 !== 0) { a = p2 + (p0 - p2) * d2 / (d2 - d0); b = p2 + (p1 - p2) * d2 / (d2 - d1); }
  else return false;
  if (a > b) { const s = a; a = b; b = s; }
  out[o] = a; out[o + 1] = b;
  return true;
}

/** Signed twice-area of 2D triangle (a, b, c). */
function orient2(ax: number, ay: number, bx: number, by: number, cx: number, cy: number): number {
  return (bx - ax) * (cy - ay) - (by - ay) * (cx - ax);
}

function segmentsCross2(ax: number, ay: number, bx: number, by: number, cx: number, cy: number, dx: number, dy: number): boolean {
  const o1 = orient2(ax, ay, bx, by, cx, cy), o2 = orient2(ax, ay, bx, by, dx, dy);
  const o3 = orient2(cx, cy, dx, dy, ax, ay), o4 = orient2(cx, cy, dx, dy, bx, by);
  if (((o1 > 0 && o2 < 0) || (o1 < 0 && o2 > 0)) && ((o3 > 0 && o4 < 0) || (o3 < 0 && o4 > 0))) return true;
  // Collinear overlaps and touching ends count: the triangles are closed sets.
  if (o1 === 0 && onSegment2(ax, ay, bx, by, cx, cy)) return true;
  if (o2 === 0 && onSegment2(ax, ay, bx, by, dx, dy)) return true;
  if (o3 === 0 && onSegment2(cx, cy, dx, dy, ax, ay)) return true;
  if (o4 === 0 && onSegment2(cx, cy, dx, dy, bx, by)) return true;
  return false;
}

function onSegment2(ax: number, ay: number, bx: number, by: number, px: number, py: number): boolean {
  return Math.min(ax, bx) <= px && px <= Math.max(ax, bx) && Math.min(ay, by) <= py && py <= Math.max(ay, by);
}

function inTriangle2(px: number, py: number, ax: number, ay: number, bx: number, by: number, cx: number, cy: number): boolean {
  const d1 = orient2(ax, ay, bx, by, px, py), d2 = orient2(bx, by, cx, cy, px, py), d3 = orient2(cx, cy, ax, ay, px, py);
  const neg = d1 < 0 || d2 < 0 || d3 < 0, pos = d1 > 0 || d2 > 0 || d3 > 0;
  return !(neg && pos);
}

/** Coplanar case of Möller 1997 (coplanar_tri_tri): drop the axis where the normal is largest and test in 2D. */
function coplanarIntersect(nx: number, ny: number, nz: number): boolean {
  const i0 = nx >= ny && nx >= nz ? 1 : 0;
  const i1 = nx >= ny && nx >= nz ? 2 : ny >= nz ? 2 : 1;
  for (let i = 0; i < 3; i++) {
    const i2 = i === 2 ? 0 : i + 1;
    for (let j = 0; j < 3; j++) {
      const j2 = j === 2 ? 0 : j + 1;
      if (segmentsCross2(V[3 * i + i0], V[3 * i + i1], V[3 * i2 + i0], V[3 * i2 + i1],
        V[9 + 3 * j + i0], V[9 + 3 * j + i1], V[9 + 3 * j2 + i0], V[9 + 3 * j2 + i1])) return true;
    }
  }
  if (inTriangle2(V[i0], V[i1], V[9 + i0], V[9 + i1], V[12 + i0], V[12 + i1], V[15 + i0], V[15 + i1])) return true;
  return inTriangle2(V[9 + i0], V[9 + i1], V[i0], V[i1], V[3 + i0], V[3 + i1], V[6 + i0], V[6 + i1]);
}

const dscratch = new Float64Array(6);
/** A zero-area triangle has no plane: fall back on the exact distance. */
function degenerateIntersect(positions: Float64Array, triangles: Uint32Array, ta: number, tb: number): boolean {
  return triangleTriangleDistance(positions, triangles, ta, tb, dscratch) === 0;
}

/**
 * True when each of triangles ta and tb has corners strictly on both sides of the other's
 * plane (beyond tol, metres): the surfaces cross rather than meet along an edge or a face.
 */
export function trianglesCrossProperly(positions: Float64Array, triangles: Uint32Array, ta: number, tb: number, tol: number): boolean {
  loadTrianglePair(positions, triangles, ta, tb, V);
  for (let side = 0; side < 2; side++) {
    const q = side === 0 ? 9 : 0, o = side === 0 ? 0 : 9;
    const ax = V[q], ay = V[q + 1], az = V[q + 2];
    triangleAreaVector(NRM, 0, V, q, q + 3, q + 6);
    let nx = NRM[0], ny = NRM[1], nz = NRM[2];
    const l = Math.hypot(nx, ny, nz);
    if (l === 0) return false;
    nx /= l; ny /= l; nz /= l;
    let above = false, below = false;
    for (let k = 0; k < 3; k++) {
      const d = nx * (V[o + 3 * k] - ax) + ny * (V[o + 3 * k + 1] - ay) + nz * (V[o + 3 * k + 2] - az);
      if (d > tol) above = true;
      if (d < -tol) below = true;
    }
    if (!(above && below)) return false;
  }
  return true;
}

/**
 * True when triangles ta and tb lie in one plane (within tol, metres), face the same way
 * and overlap with positive area: on outward-oriented surfaces that means both solids
 * lie on the same side of the shared face, so they overlap rather than meet face to face.
 * Positive-area overlap is taken as a strict crossing of two edges or the centroid of one
 * triangle strictly inside the other.
 */
export function coincidentSameFacing(positions: Float64Array, triangles: Uint32Array, ta: number, tb: number, tol: number): boolean {
  loadTrianglePair(positions, triangles, ta, tb, V);
  triangleAreaVector(AV, 0, V, 0, 3, 6);
  triangleAreaVector(AV, 3, V, 9, 12, 15);
  const n1x = AV[0], n1y = AV[1], n1z = AV[2], n2x = AV[3], n2y = AV[4], n2z = AV[5];
  const l1 = Math.hypot(n1x, n1y, n1z), l2 = Math.hypot(n2x, n2y, n2z);
  if (l1 === 0 || l2 === 0) return false;
  if (n1x * n2x + n1y * n2y + n1z * n2z < (1 - 1e-9) * l1 * l2) return false;
  for (let k = 0; k < 3; k++) {
    const d = (n1x * (V[9 + 3 * k] - V[0]) + n1y * (V[10 + 3 * k] - V[1]) + n1z * (V[11 + 3 * k] - V[2])) / l1;
    if (Math.abs(d) > tol) return false;
  }
  const ax = Math.abs(n1x), ay = Math.abs(n1y), az = Math.abs(n1z);
  const i0 = ax >= ay && ax >= az ? 1 : 0;
  const i1 = ax >= ay && ax >= az ? 2 : ay >= az ? 2 : 1;
  for (let i = 0; i < 3; i++) {
    const i2 = i === 2 ? 0 : i + 1;
    for (let j = 0; j < 3; j++) {
      const j2 = j === 2 ? 0 : j + 1;
      const pax = V[3 * i + i0], pay = V[3 * i + i1], pbx = V[3 * i2 + i0], pby = V[3 * i2 + i1];
      const qax = V[9 + 3 * j + i0], qay = V[9 + 3 * j + i1], qbx = V[9 + 3 * j2 + i0], qby = V[9 + 3 * j2 + i1];
      const o1 = orient2(pax, pay, pbx, pby, qax, qay), o2 = orient2(pax, pay, pbx, pby, qbx, qby);
      const o3 = orient2(qax, qay, qbx, qby, pax, pay), o4 = orient2(qax, qay, qbx, qby, pbx, pby);
      if (o1 * o2 < 0 && o3 * o4 < 0) return true;
    }
  }
  const c1x = (V[i0] + V[3 + i0] + V[6 + i0]) / 3, c1y = (V[i1] + V[3 + i1] + V[6 + i1]) / 3;
  const c2x = (V[9 + i0] + V[12 + i0] + V[15 + i0]) / 3, c2y = (V[9 + i1] + V[12 + i1] + V[15 + i1]) / 3;
  return strictlyInside2(c1x, c1y, 9, i0, i1) || strictlyInside2(c2x, c2y, 0, i0, i1);
}

function strictlyInside2(px: number, py: number, o: number, i0: number, i1: number): boolean {
  const d1 = orient2(V[o + i0], V[o + i1], V[o + 3 + i0], V[o + 3 + i1], px, py);
  const d2 = orient2(V[o + 3 + i0], V[o + 3 + i1], V[o + 6 + i0], V[o + 6 + i1], px, py);
  const d3 = orient2(V[o + 6 + i0], V[o + 6 + i1], V[o + i0], V[o + i1], px, py);
  return (d1 > 0 && d2 > 0 && d3 > 0) || (d1 < 0 && d2 < 0 && d3 < 0);
}
