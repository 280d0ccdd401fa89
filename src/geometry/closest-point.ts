/**
 * Closest points between a point and a triangle, and between two segments, in 3D.
 *
 * The lowest layer of sigmesh (see triangle.ts): imports nothing of the project. Conventions
 * as in triangle.ts, output first; corners come as scalars here (x, y, z each), so a caller
 * reads them from whatever buffer it holds without copying. Units are the caller's (metres in
 * sigmesh); the functions return squared distances, so that a search can compare without a
 * square root per candidate. No allocation.
 */

/**
 * Closest point to p on triangle abc, written into out; returns the squared distance.
 * Ericson, Real-Time Collision Detection (2005), 5.1.5 ClosestPtPointTriangle
 * (Voronoi-region tests on the barycentric parameters). A triangle of zero area (two corners
 * equal, or all three in a line), whose region tests the book's version gets wrong (with a = b
 * it can answer corner a for a point beside side ac), is taken as its three sides.
 */
export function closestPointTriangle(
  out: Float64Array, px: number, py: number, pz: number,
  ax: number, ay: number, az: number, bx: number, by: number, bz: number, cx: number, cy: number, cz: number,
): number {
  const abx = bx - ax, aby = by - ay, abz = bz - az;
  const acx = cx - ax, acy = cy - ay, acz = cz - az;
  // |ab × ac|² against |ab|²|ac|²: zero area (sin² of the angle at a below 1e-24, or a side of length zero).
  const nx = aby * acz - abz * acy, ny = abz * acx - abx * acz, nz = abx * acy - aby * acx;
  if (nx * nx + ny * ny + nz * nz <= 1e-24 * (abx * abx + aby * aby + abz * abz) * (acx * acx + acy * acy + acz * acz)) {
    return closestPointOnSides(out, px, py, pz, ax, ay, az, bx, by, bz, cx, cy, cz);
  }
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
      // Corners collinear to rounding that slipped past the region tests: nearest of the three sides.
      return closestPointOnSides(out, px, py, pz, ax, ay, az, bx, by, bz, cx, cy, cz);
    }
  }
  out[0] = qx; out[1] = qy; out[2] = qz;
  return (px - qx) ** 2 + (py - qy) ** 2 + (pz - qz) ** 2;
}

/** Closest point to p on the three sides of triangle abc (for a triangle of zero area); squared distance. */
function closestPointOnSides(
  out: Float64Array, px: number, py: number, pz: number,
  ax: number, ay: number, az: number, bx: number, by: number, bz: number, cx: number, cy: number, cz: number,
): number {
  let best = Infinity, qx = ax, qy = ay, qz = az;
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
  out[0] = qx; out[1] = qy; out[2] = qz;
  return best;
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
