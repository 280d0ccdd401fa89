/**
 * Proximity between conductors: exact triangle–triangle intersection, triangle–triangle
 * distance, and the search over a whole mesh for conductors that intersect, touch, or
 * come closer than the local panel size.
 *
 * Conductors that touch are one net electrically, and intersecting surfaces make the
 * boundary-integral problem meaningless, so both are errors. A gap narrower than the
 * panels beside it is legal but the piecewise-constant charge cannot follow the field
 * there, so it is a warning with a suggestion to refine.
 *
 * Kernels work on scalars and module-level scratch: no allocation per triangle pair.
 */
import { type SurfaceMesh, triangleCount, boundingDiagonal } from "./model.js";
import { buildBoxTree, triangleBoxes, forEachOverlappingPair, forEachItemInBox, nodeLabels, nearestItem, type BoxTree } from "./bvh.js";
import { panelSizes } from "./quality.js";
import { windingNumber as generalisedWinding } from "../geometry/solid-angle.js";
import { triangleAreaVector } from "../geometry/triangle.js";
import { task } from "../linalg/task.js";

const cp = new Float64Array(3);

/**
 * Closest point to p on triangle abc, written into out; returns the squared distance.
 * Ericson, Real-Time Collision Detection (2005), 5.1.5 ClosestPtPointTriangle
 * (Voronoi-region tests on the barycentric parameters). Zero-length sides, which the
 * book's version divides by, fall back on the nearer end.
 */
export function closestPointTriangle(
  out: Float64Array, px: number, py: number, pz: number,
  ax: number, ay: number, az: number, bx: number, by: number, bz: number, cx: number, cy: number, cz: number,
): number {
  const abx = bx - ax, aby = by - ay, abz = bz - az;
  const acx = cx - ax, acy = cy - ay, acz = cz - az;
  const apx = px - ax, apy = py - ay, apz = pz - az;
  let qx: number, qy: number, qz: number;
  const d1 = abx * apx + aby * apy + abz * apz, d2 = acx * apx + acy * apy + acz * apz;
  const bpx = px - bx, bpy = py - by, bpz = pz - bz;
  const d3 = abx * bpx + aby * bpy + abz * bpz, d4 = acx * bpx + acy * bpy + acz * bpz;
  const cpx = px - cx, cpy = py - cy, cpz = pz - cz;
  const d5 = abx * cpx + aby * cpy + abz * cpz, d6 = acx * cpx + acy * cpy + acz * cpz;
  const vc = d1 * d4 - d3 * d2, vb = d5 * d2 - d1 * d6, va = d3 * d6 - d5 * d4;
  if (d1 <= 0 && d2 <= 0) { qx = ax; qy = ay; qz = az; }
  else if (d3 >= 0 && d4 <= d3) { qx = bx; qy = by; qz = bz; }
  else if (vc <= 0 && d1 >= 0 && d3 <= 0) {
    const v = d1 - d3 > 0 ? d1 / (d1 - d3) : 0;
    qx = ax + v * abx; qy = ay + v * aby; qz = az + v * abz;
  } else if (d6 >= 0 && d5 <= d6) { qx = cx; qy = cy; qz = cz; }
  else if (vb <= 0 && d2 >= 0 && d6 <= 0) {
    const w = d2 - d6 > 0 ? d2 / (d2 - d6) : 0;
    qx = ax + w * acx; qy = ay + w * acy; qz = az + w * acz;
  } else if (va <= 0 && d4 - d3 >= 0 && d5 - d6 >= 0) {
    const den = (d4 - d3) + (d5 - d6);
    const w = den > 0 ? (d4 - d3) / den : 0;
    qx = bx + w * (cx - bx); qy = by + w * (cy - by); qz = bz + w * (cz - bz);
  } else {
    const s = va + vb + vc;
    if (s > 0) {
      const v = vb / s, w = vc / s;
      qx = ax + abx * v + acx * w; qy = ay + aby * v + acy * w; qz = az + abz * v + acz * w;
    } else {
      // Collinear corners (zero area) that slipped past the region tests: nearest of the three sides.
      let best = Infinity; qx = ax; qy = ay; qz = az;
      for (let k = 0; k < 3; k++) {
        const sx = k === 0 ? ax : k === 1 ? bx : cx, sy = k === 0 ? ay : k === 1 ? by : cy, sz = k === 0 ? az : k === 1 ? bz : cz;
        const ex = k === 0 ? bx : k === 1 ? cx : ax, ey = k === 0 ? by : k === 1 ? cy : ay, ez = k === 0 ? bz : k === 1 ? cz : az;
        const dx = ex - sx, dy = ey - sy, dz = ez - sz, l2 = dx * dx + dy * dy + dz * dz;
        let u = l2 > 0 ? ((px - sx) * dx + (py - sy) * dy + (pz - sz) * dz) / l2 : 0;
        u = u < 0 ? 0 : u > 1 ? 1 : u;
        const rx = sx + u * dx, ry = sy + u * dy, rz = sz + u * dz;
        const d = (px - rx) ** 2 + (py - ry) ** 2 + (pz - rz) ** 2;
        if (d < best) { best = d; qx = rx; qy = ry; qz = rz; }
      }
    }
  }
  out[0] = qx; out[1] = qy; out[2] = qz;
  return (px - qx) ** 2 + (py - qy) ** 2 + (pz - qz) ** 2;
}

/**
 * Closest points of segments p1q1 and p2q2, written into out[0..5]; returns the squared distance.
 * Ericson, Real-Time Collision Detection (2005), 5.1.9 ClosestPtSegmentSegment.
 */
export function closestPointsSegments(
  out: Float64Array,
  p1x: number, p1y: number, p1z: number, q1x: number, q1y: number, q1z: number,
  p2x: number, p2y: number, p2z: number, q2x: number, q2y: number, q2z: number,
): number {
  const d1x = q1x - p1x, d1y = q1y - p1y, d1z = q1z - p1z;
  const d2x = q2x - p2x, d2y = q2y - p2y, d2z = q2z - p2z;
  const rx = p1x - p2x, ry = p1y - p2y, rz = p1z - p2z;
  const a = d1x * d1x + d1y * d1y + d1z * d1z, e = d2x * d2x + d2y * d2y + d2z * d2z;
  const f = d2x * rx + d2y * ry + d2z * rz;
  let s: number, t: number;
  if (a <= 0 && e <= 0) { s = 0; t = 0; }
  else if (a <= 0) { s = 0; t = clamp01(f / e); }
  else {
    const c = d1x * rx + d1y * ry + d1z * rz;
    if (e <= 0) { t = 0; s = clamp01(-c / a); }
    else {
      const b = d1x * d2x + d1y * d2y + d1z * d2z;
      const denom = a * e - b * b;
      s = denom > 0 ? clamp01((b * f - c * e) / denom) : 0;
      t = (b * s + f) / e;
      if (t < 0) { t = 0; s = clamp01(-c / a); }
      else if (t > 1) { t = 1; s = clamp01((b - c) / a); }
    }
  }
  out[0] = p1x + d1x * s; out[1] = p1y + d1y * s; out[2] = p1z + d1z * s;
  out[3] = p2x + d2x * t; out[4] = p2y + d2y * t; out[5] = p2z + d2z * t;
  return (out[0] - out[3]) ** 2 + (out[1] - out[4]) ** 2 + (out[2] - out[5]) ** 2;
}

function clamp01(x: number): number {
  return x < 0 ? 0 : x > 1 ? 1 : x;
}

// Corners of the two triangles under test: A0 A1 A2 B0 B1 B2, 3 numbers each.
const V = new Float64Array(18);
/** Scratch for a triangle's area vector (src/geometry/triangle.ts). */
const NRM = new Float64Array(3);
const seg = new Float64Array(6);

function loadPair(p: Float64Array, tr: Uint32Array, ta: number, tb: number): void {
  for (let k = 0; k < 3; k++) {
    const ia = 3 * tr[3 * ta + k], ib = 3 * tr[3 * tb + k];
    V[3 * k] = p[ia]; V[3 * k + 1] = p[ia + 1]; V[3 * k + 2] = p[ia + 2];
    V[9 + 3 * k] = p[ib]; V[9 + 3 * k + 1] = p[ib + 1]; V[9 + 3 * k + 2] = p[ib + 2];
  }
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
  loadPair(positions, triangles, ta, tb);
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
  loadPair(positions, triangles, ta, tb);
  let h2 = 0;
  for (let k = 0; k < 3; k++) {
    const k2 = k === 2 ? 0 : k + 1;
    for (let o = 0; o <= 9; o += 9) {
      const l = (V[o + 3 * k2] - V[o + 3 * k]) ** 2 + (V[o + 3 * k2 + 1] - V[o + 3 * k + 1]) ** 2 + (V[o + 3 * k2 + 2] - V[o + 3 * k + 2]) ** 2;
      if (l > h2) h2 = l;
    }
  }
  const eps = COPLANAR_EPS * Math.sqrt(h2);
  // Plane of A: n1·x + d1 = 0.
  const n1x = (V[4] - V[1]) * (V[8] - V[2]) - (V[5] - V[2]) * (V[7] - V[1]);
  const n1y = (V[5] - V[2]) * (V[6] - V[0]) - (V[3] - V[0]) * (V[8] - V[2]);
  const n1z = (V[3] - V[0]) * (V[7] - V[1]) - (V[4] - V[1]) * (V[6] - V[0]);
  const n1l = Math.hypot(n1x, n1y, n1z);
  const d1 = -(n1x * V[0] + n1y * V[1] + n1z * V[2]);
  let du0 = n1x * V[9] + n1y * V[10] + n1z * V[11] + d1;
  let du1 = n1x * V[12] + n1y * V[13] + n1z * V[14] + d1;
  let du2 = n1x * V[15] + n1y * V[16] + n1z * V[17] + d1;
  const e1 = eps * n1l;
  if (Math.abs(du0) <= e1) du0 = 0;
  if (Math.abs(du1) <= e1) du1 = 0;
  if (Math.abs(du2) <= e1) du2 = 0;
  if (du0 * du1 > 0 && du0 * du2 > 0) return false;
  const n2x = (V[13] - V[10]) * (V[17] - V[11]) - (V[14] - V[11]) * (V[16] - V[10]);
  const n2y = (V[14] - V[11]) * (V[15] - V[9]) - (V[12] - V[9]) * (V[17] - V[11]);
  const n2z = (V[12] - V[9]) * (V[16] - V[10]) - (V[13] - V[10]) * (V[15] - V[9]);
  const n2l = Math.hypot(n2x, n2y, n2z);
  const d2 = -(n2x * V[9] + n2y * V[10] + n2z * V[11]);
  let dv0 = n2x * V[0] + n2y * V[1] + n2z * V[2] + d2;
  let dv1 = n2x * V[3] + n2y * V[4] + n2z * V[5] + d2;
  let dv2 = n2x * V[6] + n2y * V[7] + n2z * V[8] + d2;
  const e2 = eps * n2l;
  if (Math.abs(dv0) <= e2) dv0 = 0;
  if (Math.abs(dv1) <= e2) dv1 = 0;
  if (Math.abs(dv2) <= e2) dv2 = 0;
  if (dv0 * dv1 > 0 && dv0 * dv2 > 0) return false;
  if (n1l === 0 || n2l === 0) return degenerateIntersect(positions, triangles, ta, tb);
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
 * True when each triangle has corners strictly on both sides of the other's plane (beyond tol, metres):
 * the surfaces cross rather than meet along an edge or a face.
 */
function crossesProperly(tol: number): boolean {
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
 * True when the loaded triangles lie in one plane (within tol, metres), face the same way
 * and overlap with positive area: on outward-oriented surfaces that means both solids
 * lie on the same side of the shared face, so they overlap rather than meet face to face.
 * Positive-area overlap is taken as a strict crossing of two edges or the centroid of one
 * triangle strictly inside the other.
 */
function coincidentSameFacing(tol: number): boolean {
  const n1x = (V[4] - V[1]) * (V[8] - V[2]) - (V[5] - V[2]) * (V[7] - V[1]);
  const n1y = (V[5] - V[2]) * (V[6] - V[0]) - (V[3] - V[0]) * (V[8] - V[2]);
  const n1z = (V[3] - V[0]) * (V[7] - V[1]) - (V[4] - V[1]) * (V[6] - V[0]);
  const n2x = (V[13] - V[10]) * (V[17] - V[11]) - (V[14] - V[11]) * (V[16] - V[10]);
  const n2y = (V[14] - V[11]) * (V[15] - V[9]) - (V[12] - V[9]) * (V[17] - V[11]);
  const n2z = (V[12] - V[9]) * (V[16] - V[10]) - (V[13] - V[10]) * (V[15] - V[9]);
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

export type ProximityKind = "intersect" | "touch" | "gap";

export interface ProximityFinding {
  /** intersect and touch are errors; gap is a warning. */
  kind: ProximityKind;
  /** Conductor indices, a < b. */
  a: number;
  b: number;
  /** Smallest distance found between the two conductors; metres (0 when they intersect). */
  distance: number;
  /** Midpoint of the closest points there; metres. */
  position: [number, number, number];
  /** Local panel size there: the longer of the two triangles' longest edges; metres. */
  panelSize: number;
  /** The triangle pair (mesh-wide indices). */
  triangles: [number, number];
  /** For touches: up to CONTACT_SAMPLES touching triangle pairs (a's, b's), flattened. */
  contacts: number[];
}

/** Touching triangle pairs kept per conductor pair to decide touch against overlap. */
const CONTACT_SAMPLES = 16;

export interface ProximityOptions {
  /**
   * Conductors closer than this fraction of the local panel size are touching (default 1e-6);
   * never less than the same fraction of the mesh's bounding-box diagonal, the scale at
   * which loading welds vertices (coordinates rounded by a CAD export differ by about that).
   */
  touchTolerance?: number;
  /** Gaps narrower than this multiple of the local panel size are reported (default 1). */
  gapFactor?: number;
}

const KIND_RANK: Record<ProximityKind, number> = { gap: 0, touch: 1, intersect: 2 };

/**
 * Intersections, touches and narrow gaps between different conductors, one finding per
 * conductor pair (the worst kind; for each kind the smallest distance). Candidate
 * triangle pairs come from one BVH over triangle boxes grown by each panel's size,
 * traversed against itself with subtrees of a single conductor pruned, so the cost is
 * O(N log N) plus the triangle pairs that are actually close.
 *
 * Surfaces that cross are an intersection; surfaces that only meet are touching here.
 * Orientation plays no part, so this runs on the mesh as loaded (and may run in a
 * worker while the mesh is being oriented); `resolveOverlaps` then tells touching
 * solids from overlapping ones.
 */
export function conductorProximity(mesh: SurfaceMesh, opts: ProximityOptions = {}): ProximityFinding[] {
  const touchRel = opts.touchTolerance ?? 1e-6;
  const gapFactor = opts.gapFactor ?? 1;
  const p = mesh.positions, tr = mesh.triangles, cond = mesh.conductor;
  const nt = triangleCount(mesh);
  if (nt === 0 || mesh.names.length < 2) return [];
  const h = panelSizes(p, tr);
  const floor = touchRel * boundingDiagonal(p);
  const pad = new Float64Array(nt);
  for (let t = 0; t < nt; t++) pad[t] = gapFactor * h[t];
  const tree = buildBoxTree(triangleBoxes(p, tr, pad));
  const labels = { item: cond, node: nodeLabels(tree, cond) };
  const found = new Map<number, ProximityFinding>();
  const nc = mesh.names.length;
  const closest = new Float64Array(6);
  const ib = tree.itemBounds;
  forEachOverlappingPair(tree, (i, j) => {
    const local = Math.max(h[i], h[j]);
    const tol = Math.max(touchRel * local, floor);
    // Distance between the unpadded boxes bounds the triangles' distance from below: skip
    // pairs that cannot be near enough, or cannot improve on what this conductor pair has.
    let lb2 = 0;
    for (let k = 0; k < 3; k++) {
      const g = Math.max(ib[6 * j + k] + pad[j] - (ib[6 * i + 3 + k] - pad[i]), ib[6 * i + k] + pad[i] - (ib[6 * j + 3 + k] - pad[j]), 0);
      lb2 += g * g;
    }
    const lb = Math.sqrt(lb2);
    if (lb >= gapFactor * local) return;
    const key0 = cond[i] < cond[j] ? cond[i] * nc + cond[j] : cond[j] * nc + cond[i];
    const seen = found.get(key0);
    if (seen !== undefined) {
      if (seen.kind === "intersect") return;
      if (seen.kind === "touch" && lb > tol) return;
      if (seen.kind === "gap" && lb >= seen.distance) return;
    }
    const d = triangleTriangleDistance(p, tr, i, j, closest);
    if (!(d < gapFactor * local)) return;
    let kind: ProximityKind = "gap";
    if (d <= tol) {
      loadPair(p, tr, i, j);
      kind = crossesProperly(tol) && trianglesIntersect(p, tr, i, j) ? "intersect" : "touch";
    }
    const a = cond[i] < cond[j] ? cond[i] : cond[j], b = cond[i] < cond[j] ? cond[j] : cond[i];
    const key = a * nc + b;
    const prev = found.get(key);
    const ta = cond[i] === a ? i : j, tb = ta === i ? j : i;
    if (kind === "touch" && prev && prev.contacts.length < 2 * CONTACT_SAMPLES) prev.contacts.push(ta, tb);
    if (prev && (KIND_RANK[prev.kind] > KIND_RANK[kind] || (prev.kind === kind && prev.distance <= d))) return;
    found.set(key, {
      kind, a, b, distance: kind === "intersect" ? 0 : d,
      position: [0.5 * (closest[0] + closest[3]), 0.5 * (closest[1] + closest[4]), 0.5 * (closest[2] + closest[5])],
      panelSize: local, triangles: [ta, tb],
      contacts: prev ? prev.contacts : kind === "touch" ? [ta, tb] : [],
    });
  }, labels);
  return [...found.values()].sort((x, y) => KIND_RANK[y.kind] - KIND_RANK[x.kind] || x.a - y.a || x.b - y.b);
}

/** Nearest triangle of a mesh to point (x, y, z) using a tree built with `triangleBoxes` on the same mesh; distance in metres. */
export function nearestTriangle(tree: BoxTree, positions: Float64Array, triangles: Uint32Array, x: number, y: number, z: number, maxDistance = Infinity): { triangle: number; distance: number } {
  const r = nearestItem(tree, x, y, z, (t) => {
    const a = 3 * triangles[3 * t], b = 3 * triangles[3 * t + 1], c = 3 * triangles[3 * t + 2];
    const P = positions;
    return closestPointTriangle(cp, x, y, z, P[a], P[a + 1], P[a + 2], P[b], P[b + 1], P[b + 2], P[c], P[c + 1], P[c + 2]);
  }, maxDistance);
  return { triangle: r.item, distance: r.distance };
}

/**
 * Winding numbers are whole off the surface (1 inside, 0 outside) and fractional on it
 * (1/2 on a face, up to about 3/4 in a concave edge), so a point counts as inside above 3/4.
 */
export const INSIDE_WINDING = 0.75;

/** Triangles grouped by conductor: conductor c owns list[offset[c] .. offset[c+1]). */
export interface ConductorTriangles { offset: Uint32Array; list: Uint32Array }

export function conductorTriangles(mesh: SurfaceMesh): ConductorTriangles {
  const nc = mesh.names.length, nt = triangleCount(mesh);
  const offset = new Uint32Array(nc + 1);
  for (let t = 0; t < nt; t++) offset[mesh.conductor[t] + 1]++;
  for (let c = 0; c < nc; c++) offset[c + 1] += offset[c];
  const list = new Uint32Array(nt), fill = offset.slice(0, nc);
  for (let t = 0; t < nt; t++) list[fill[mesh.conductor[t]]++] = t;
  return { offset, list };
}

/**
 * Winding number of conductor c's surface about (x, y, z): the sum of its triangles'
 * signed solid angles over 4π, 1 inside a closed outward surface and 0 outside
 * (src/geometry/solid-angle.ts).
 */
export function windingNumber(mesh: SurfaceMesh, groups: ConductorTriangles, c: number, x: number, y: number, z: number): number {
  return generalisedWinding(mesh.positions, mesh.triangles, groups.list, groups.offset[c], groups.offset[c + 1], x, y, z);
}

/**
 * Turn touches between two closed solids into intersections where their volumes overlap.
 * Two tests on the touching triangle pairs kept with each finding: coincident faces
 * facing the same way (both solids on one side of the shared face); and, since meshes
 * whose edges lie exactly on the curve where two surfaces cross (common after CAD
 * booleans) show no crossing triangle pair, each touching triangle's centroid stepped
 * a little (1e-4 of its size) into its own solid and tested for lying inside the other.
 * Needs `mesh` oriented outward (`orientSurfaces`); open sheets have no inside and
 * their touches stay touches.
 */
export function resolveOverlaps(mesh: SurfaceMesh, findings: ProximityFinding[], solid: boolean[], groups: ConductorTriangles = conductorTriangles(mesh), opts: ProximityOptions = {}): void {
  const p = mesh.positions, tr = mesh.triangles;
  const touchRel = opts.touchTolerance ?? 1e-6;
  let floor = -1;
  for (const f of findings) {
    if (f.kind !== "touch" || !solid[f.a] || !solid[f.b]) continue;
    if (floor < 0) floor = touchRel * boundingDiagonal(p);
    const tol = Math.max(touchRel * f.panelSize, floor);
    let coincident = false;
    for (let s = 0; s < f.contacts.length && !coincident; s += 2) {
      loadPair(p, tr, f.contacts[s], f.contacts[s + 1]);
      coincident = coincidentSameFacing(tol);
    }
    if (coincident) { f.kind = "intersect"; f.distance = 0; continue; }
    search: for (let s = 0; s < f.contacts.length; s += 2) {
      for (let side = 0; side < 2; side++) {
        const t = f.contacts[s + side], other = side === 0 ? f.b : f.a;
        const i = 3 * tr[3 * t], j = 3 * tr[3 * t + 1], k = 3 * tr[3 * t + 2];
        const ux = p[j] - p[i], uy = p[j + 1] - p[i + 1], uz = p[j + 2] - p[i + 2];
        const vx = p[k] - p[i], vy = p[k + 1] - p[i + 1], vz = p[k + 2] - p[i + 2];
        triangleAreaVector(NRM, 0, p, i, j, k);
        const nx = NRM[0], ny = NRM[1], nz = NRM[2];
        const nl = Math.hypot(nx, ny, nz);
        if (nl === 0) continue;
        const h = Math.sqrt(Math.max(ux * ux + uy * uy + uz * uz, vx * vx + vy * vy + vz * vz));
        const step = (1e-4 * h) / nl;
        const x = (p[i] + p[j] + p[k]) / 3 - step * nx, y = (p[i + 1] + p[j + 1] + p[k + 1]) / 3 - step * ny, z = (p[i + 2] + p[j + 2] + p[k + 2]) / 3 - step * nz;
        if (windingNumber(mesh, groups, other, x, y, z) > INSIDE_WINDING) {
          f.kind = "intersect";
          f.distance = 0;
          f.position = [x, y, z];
          break search;
        }
      }
    }
  }
}

export interface EnclosedConductor {
  /** The conductor lying inside the other's material. */
  inner: number;
  outer: number;
  /** A point of the inner conductor inside the outer one; metres. */
  position: [number, number, number];
}

/**
 * Conductors lying wholly inside the material of a closed conductor, which no surface
 * test can see (their surfaces never meet). `mesh` must be oriented outward
 * (`orientSurfaces`), so that a cavity wall cancels its enclosing surface: a wire in
 * the bore of a tube is outside the tube's material. The test point is the centroid of
 * the inner conductor's first triangle, inside when the winding number of the outer
 * surface there exceeds INSIDE_WINDING. Only pairs whose boxes nest are tested.
 */
export function enclosedConductors(mesh: SurfaceMesh, closed: boolean[], boxes: Float64Array[], groups: ConductorTriangles = conductorTriangles(mesh)): EnclosedConductor[] {
  const nc = mesh.names.length;
  const out: EnclosedConductor[] = [];
  const p = mesh.positions, tr = mesh.triangles;
  // Conductor boxes in a tree of their own, so that many small conductors cost N log N, not N².
  const flat = new Float64Array(6 * nc);
  for (let c = 0; c < nc; c++) flat.set(groups.offset[c + 1] > groups.offset[c] ? boxes[c] : [NaN, NaN, NaN, NaN, NaN, NaN], 6 * c);
  const tree = buildBoxTree(flat);
  const nested: number[] = [];
  for (let o = 0; o < nc; o++) {
    if (!closed[o] || groups.offset[o + 1] === groups.offset[o]) continue;
    const ob = boxes[o];
    nested.length = 0;
    forEachItemInBox(tree, flat, (i) => { nested.push(i); }, 6 * o);
    for (const inner of nested) {
      if (inner === o || groups.offset[inner + 1] === groups.offset[inner]) continue;
      const ib = boxes[inner];
      if (!(ob[0] <= ib[0] && ob[1] <= ib[1] && ob[2] <= ib[2] && ob[3] >= ib[3] && ob[4] >= ib[4] && ob[5] >= ib[5])) continue;
      const t0 = groups.list[groups.offset[inner]];
      const a = 3 * tr[3 * t0], b = 3 * tr[3 * t0 + 1], c = 3 * tr[3 * t0 + 2];
      const x = (p[a] + p[b] + p[c]) / 3, y = (p[a + 1] + p[b + 1] + p[c + 1]) / 3, z = (p[a + 2] + p[b + 2] + p[c + 2]) / 3;
      if (windingNumber(mesh, groups, o, x, y, z) > INSIDE_WINDING) out.push({ inner, outer: o, position: [x, y, z] });
    }
  }
  return out;
}

/**
 * Worker entry for `conductorProximity` (see src/linalg/pool.ts): the mesh arrives as its
 * typed arrays; findings go back as plain objects.
 */
export function proximityOfArrays(positions: Float64Array, triangles: Uint32Array, conductor: Uint32Array, conductors: number, opts: ProximityOptions): ProximityFinding[] {
  const names = Array.from({ length: conductors }, (_, i) => String(i));
  return conductorProximity({ positions, triangles, conductor, names }, opts);
}

export const proximityTask = task(import.meta.url, { proximityOfArrays });
