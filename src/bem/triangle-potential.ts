/**
 * The potential integral of a flat triangle with unit surface density:
 *   I(x) = ∫_T 1/|x − y| dS(y)   (metres),
 * and its gradient ∇I(x) (dimensionless), for any observation point x.
 *
 * Closed form after D. R. Wilton, S. M. Rao, A. W. Glisson, D. H. Schaubert, O. M. Al-Bundak,
 * C. M. Butler, "Potential integrals for uniform and linear source distributions on polygonal
 * and polyhedral domains", IEEE Trans. Antennas Propag. 32(3):276–281, 1984, eq. (4) for I and
 * eq. (7) (the constant-density part) for ∇I; notation as in R. D. Graglia, IEEE TAP 41(10),
 * 1993. Per edge k with unit tangent l̂, outward in-plane normal û = l̂ × n̂, h = (x − v₁)·n̂:
 *   t⁰ = (v_k − x)·û,  s∓ = (v_k∓ − x)·l̂,  R⁰² = t⁰² + h²,  R∓ = √(s∓² + R⁰²),
 *   f  = ln((R⁺ + s⁺)/(R⁻ + s⁻)),
 *   β  = atan(t⁰ s⁺ / (R⁰² + |h| R⁺)) − atan(t⁰ s⁻ / (R⁰² + |h| R⁻)),
 *   I  = Σ_k t⁰ f − |h| Σ_k β,      ∇I = −Σ_k û f − sgn(h) n̂ Σ_k β.
 * sgn(h)·Σβ is the signed solid angle Ω the triangle subtends at x, evaluated here in one
 * atan2 (Van Oosterom & Strackee 1983), so I = Σ t⁰ f − hΩ and ∇I = −Σ û f − n̂Ω. The normal
 * derivative is −Ω on the
 * +n̂ side and +Ω on the −n̂ side, tending to ∓2π at the panel itself (a jump of 4π in ∂I/∂n,
 * which is the σ/ε jump of the normal field). On the plane (|h| ≤ PLANE_TOLERANCE radii) the normal part is returned as its principal value 0,
 * the mean of the two one-sided limits; callers add ±2π·n̂ for a one-sided value.
 *
 * Robustness: R ± s is formed without cancellation (R + s = R⁰²/(R − s) when s < 0) and f is
 * taken as log1p of an exactly formed difference (R⁺ − R⁻ = L(s⁺ + s⁻)/(R⁺ + R⁻)), so far
 * points keep their digits; beyond FAR_RATIO radii the sum Σ t⁰ f itself cancels, and the
 * integral switches to a Dunavant rule whose error there is below 1e-14 (measured in
 * tests/bem/triangle-potential.test.ts). On an edge or vertex, t⁰ f → 0 (t ln t) and β → 0 are
 * taken as limits, so I is finite everywhere; the in-plane gradient is log-singular on edges.
 */
import { dunavantRule } from "./dunavant.js";
import { solidAngle } from "../geometry/solid-angle.js";
import { triangleAreaVector } from "../geometry/triangle.js";

/** Beyond this distance from the centroid, in centroid-to-vertex radii, use quadrature. */
export const FAR_RATIO = 40;
const FAR_RULE = dunavantRule(8);
/** |h| below this fraction of the panel radius counts as on the plane (principal value). */
export const PLANE_TOLERANCE = 1e-12;
/** Scratch for the area vector: the kernels below allocate nothing. */
const N = new Float64Array(3);

/**
 * I(x) for the triangle whose 9 vertex coordinates (metres) are v[o..o+8], counter-clockwise
 * about its normal. Returns metres (∫ dS / distance).
 */
export function trianglePotential(v: ArrayLike<number>, o: number, px: number, py: number, pz: number): number {
  const ax = v[o], ay = v[o + 1], az = v[o + 2];
  const bx = v[o + 3], by = v[o + 4], bz = v[o + 5];
  const cx = v[o + 6], cy = v[o + 7], cz = v[o + 8];
  const gx = (ax + bx + cx) / 3, gy = (ay + by + cy) / 3, gz = (az + bz + cz) / 3;
  const dgx = px - gx, dgy = py - gy, dgz = pz - gz;
  const dg2 = dgx * dgx + dgy * dgy + dgz * dgz;
  const r2 = Math.max(
    (ax - gx) ** 2 + (ay - gy) ** 2 + (az - gz) ** 2,
    (bx - gx) ** 2 + (by - gy) ** 2 + (bz - gz) ** 2,
    (cx - gx) ** 2 + (cy - gy) ** 2 + (cz - gz) ** 2);
  triangleAreaVector(N, 0, v, o, o + 3, o + 6);
  let nx = N[0], ny = N[1], nz = N[2];
  const n2 = Math.sqrt(nx * nx + ny * ny + nz * nz);
  if (n2 === 0) return 0;
  const area = 0.5 * n2;
  if (dg2 > FAR_RATIO * FAR_RATIO * r2) {
    const R = FAR_RULE;
    let s = 0;
    for (let k = 0; k < R.n; k++) {
      const l1 = R.l1[k], l2 = R.l2[k], l3 = R.l3[k];
      const dx = px - (l1 * ax + l2 * bx + l3 * cx);
      const dy = py - (l1 * ay + l2 * by + l3 * cy);
      const dz = pz - (l1 * az + l2 * bz + l3 * cz);
      s += R.w[k] / Math.sqrt(dx * dx + dy * dy + dz * dz);
    }
    return s * area;
  }
  nx /= n2; ny /= n2; nz /= n2;
  const h = (px - ax) * nx + (py - ay) * ny + (pz - az) * nz;
  return edgeSum(ax, ay, az, bx, by, bz, cx, cy, cz, nx, ny, nz, px, py, pz, null, 0) - h * triangleSolidAngle(v, o, px, py, pz);
}

/**
 * A source triangle laid out once for many observation points (the inner integral of the
 * Galerkin near rungs): vertices, unit normal, centroid, squared radius, area, and per edge k
 * (a→b, b→c, c→a) the unit tangent l̂, the outward in-plane normal û = l̂ × n̂ and the length.
 * framePotential then costs three square roots, three logarithms and one atan2 per point.
 */
export const FRAME_SIZE = 38;
const F_N = 9, F_G = 12, F_R2 = 15, F_AREA = 16, F_EDGE = 17;

/** Fill F[0..FRAME_SIZE) from the triangle v[o..o+8] (metres, counter-clockwise about its normal). */
export function sourceFrame(F: Float64Array, v: ArrayLike<number>, o: number): Float64Array {
  for (let k = 0; k < 9; k++) F[k] = v[o + k];
  const ax = F[0], ay = F[1], az = F[2], bx = F[3], by = F[4], bz = F[5], cx = F[6], cy = F[7], cz = F[8];
  const gx = (ax + bx + cx) / 3, gy = (ay + by + cy) / 3, gz = (az + bz + cz) / 3;
  F[F_G] = gx; F[F_G + 1] = gy; F[F_G + 2] = gz;
  F[F_R2] = Math.max(
    (ax - gx) ** 2 + (ay - gy) ** 2 + (az - gz) ** 2,
    (bx - gx) ** 2 + (by - gy) ** 2 + (bz - gz) ** 2,
    (cx - gx) ** 2 + (cy - gy) ** 2 + (cz - gz) ** 2);
  triangleAreaVector(N, 0, v, o, o + 3, o + 6);
  let nx = N[0], ny = N[1], nz = N[2];
  const n2 = Math.sqrt(nx * nx + ny * ny + nz * nz);
  F[F_AREA] = 0.5 * n2;
  if (n2 > 0) { nx /= n2; ny /= n2; nz /= n2; }
  F[F_N] = nx; F[F_N + 1] = ny; F[F_N + 2] = nz;
  for (let k = 0; k < 3; k++) {
    const o0 = 3 * k, o1 = 3 * ((k + 1) % 3), e = F_EDGE + 7 * k;
    let lx = F[o1] - F[o0], ly = F[o1 + 1] - F[o0 + 1], lz = F[o1 + 2] - F[o0 + 2];
    const L = Math.sqrt(lx * lx + ly * ly + lz * lz);
    if (L > 0) { lx /= L; ly /= L; lz /= L; }
    F[e] = lx; F[e + 1] = ly; F[e + 2] = lz;
    F[e + 3] = ly * nz - lz * ny; F[e + 4] = lz * nx - lx * nz; F[e + 5] = lx * ny - ly * nx;
    F[e + 6] = L;
  }
  return F;
}

/**
 * I(x) (metres) of the triangle laid out in F by sourceFrame: the same formula, limits and
 * far-point quadrature as trianglePotential (agreement to rounding checked in
 * tests/bem/triangle-potential.test.ts).
 */
export function framePotential(F: Float64Array, px: number, py: number, pz: number): number {
  const area = F[F_AREA];
  if (area === 0) return 0;
  const ax = F[0], ay = F[1], az = F[2], bx = F[3], by = F[4], bz = F[5], cx = F[6], cy = F[7], cz = F[8];
  const dgx = px - F[F_G], dgy = py - F[F_G + 1], dgz = pz - F[F_G + 2];
  if (dgx * dgx + dgy * dgy + dgz * dgz > FAR_RATIO * FAR_RATIO * F[F_R2]) {
    const R = FAR_RULE;
    let s = 0;
    for (let k = 0; k < R.n; k++) {
      const l1 = R.l1[k], l2 = R.l2[k], l3 = R.l3[k];
      const dx = px - (l1 * ax + l2 * bx + l3 * cx);
      const dy = py - (l1 * ay + l2 * by + l3 * cy);
      const dz = pz - (l1 * az + l2 * bz + l3 * cz);
      s += R.w[k] / Math.sqrt(dx * dx + dy * dy + dz * dz);
    }
    return s * area;
  }
  const nx = F[F_N], ny = F[F_N + 1], nz = F[F_N + 2];
  const wax = ax - px, way = ay - py, waz = az - pz;
  const wbx = bx - px, wby = by - py, wbz = bz - pz;
  const wcx = cx - px, wcy = cy - py, wcz = cz - pz;
  const ra = Math.sqrt(wax * wax + way * way + waz * waz);
  const rb = Math.sqrt(wbx * wbx + wby * wby + wbz * wbz);
  const rc = Math.sqrt(wcx * wcx + wcy * wcy + wcz * wcz);
  const h = -(wax * nx + way * ny + waz * nz);
  const h2 = h * h;
  let sum = 0;
  for (let k = 0; k < 3; k++) {
    let wx, wy, wz, Rm, Rp;
    if (k === 0) { wx = wax; wy = way; wz = waz; Rm = ra; Rp = rb; }
    else if (k === 1) { wx = wbx; wy = wby; wz = wbz; Rm = rb; Rp = rc; }
    else { wx = wcx; wy = wcy; wz = wcz; Rm = rc; Rp = ra; }
    const e = F_EDGE + 7 * k;
    const t0 = wx * F[e + 3] + wy * F[e + 4] + wz * F[e + 5];
    if (t0 === 0 || Rm === 0 || Rp === 0) continue;
    const L = F[e + 6];
    const sm = wx * F[e] + wy * F[e + 1] + wz * F[e + 2];
    sum += t0 * edgeLog(L, sm, sm + L, Rm, Rp, t0 * t0 + h2);
  }
  const trip = wax * (wby * wcz - wbz * wcy) - way * (wbx * wcz - wbz * wcx) + waz * (wbx * wcy - wby * wcx);
  const den = ra * rb * rc + (wax * wbx + way * wby + waz * wbz) * rc + (wax * wcx + way * wcy + waz * wcz) * rb
    + (wbx * wcx + wby * wcy + wbz * wcz) * ra;
  // The solid angle of src/geometry/solid-angle.ts, negated (triangleSolidAngle below), inlined
  // to reuse ra, rb, rc: this inner loop of the Galerkin near rungs is its only other copy.
  return sum + h * 2 * Math.atan2(trip, den);
}

/**
 * Distance (metres) from x to the closest point of the triangle in F: the normal offset when x
 * projects inside, otherwise the nearest edge segment — the Voronoi-region case split of
 * C. Ericson, Real-Time Collision Detection (2005) §5.1.5, read off the frame's edge normals.
 */
export function frameDistance(F: Float64Array, px: number, py: number, pz: number): number {
  const h = (px - F[0]) * F[F_N] + (py - F[1]) * F[F_N + 1] + (pz - F[2]) * F[F_N + 2];
  let best = Infinity, inside = true;
  for (let k = 0; k < 3; k++) {
    const o0 = 3 * k, e = F_EDGE + 7 * k;
    const wx = F[o0] - px, wy = F[o0 + 1] - py, wz = F[o0 + 2] - pz;
    const t0 = wx * F[e + 3] + wy * F[e + 4] + wz * F[e + 5];
    if (t0 >= 0) continue;
    inside = false;
    // Along-edge offset of x from the edge start, clamped to the segment.
    let s = -(wx * F[e] + wy * F[e + 1] + wz * F[e + 2]);
    s = s < 0 ? 0 : s > F[e + 6] ? F[e + 6] : s;
    const dx = wx + s * F[e], dy = wy + s * F[e + 1], dz = wz + s * F[e + 2];
    const d2 = dx * dx + dy * dy + dz * dz;
    if (d2 < best) best = d2;
  }
  return inside ? Math.abs(h) : Math.sqrt(best);
}

/**
 * Σ_k t⁰_k f_k (metres), and −Σ_k û_k f_k added into g[go..go+2] when g is given. R∓ of edge k
 * are the distances from x to its end vertices, shared between edges.
 */
function edgeSum(ax: number, ay: number, az: number, bx: number, by: number, bz: number, cx: number, cy: number, cz: number,
  nx: number, ny: number, nz: number, px: number, py: number, pz: number, g: Float64Array | null, go: number): number {
  const ra = Math.sqrt((ax - px) ** 2 + (ay - py) ** 2 + (az - pz) ** 2);
  const rb = Math.sqrt((bx - px) ** 2 + (by - py) ** 2 + (bz - pz) ** 2);
  const rc = Math.sqrt((cx - px) ** 2 + (cy - py) ** 2 + (cz - pz) ** 2);
  const h = (px - ax) * nx + (py - ay) * ny + (pz - az) * nz;
  const h2 = h * h;
  let sum = 0;
  for (let k = 0; k < 3; k++) {
    let x0, y0, z0, x1, y1, z1, Rm, Rp;
    if (k === 0) { x0 = ax; y0 = ay; z0 = az; x1 = bx; y1 = by; z1 = bz; Rm = ra; Rp = rb; }
    else if (k === 1) { x0 = bx; y0 = by; z0 = bz; x1 = cx; y1 = cy; z1 = cz; Rm = rb; Rp = rc; }
    else { x0 = cx; y0 = cy; z0 = cz; x1 = ax; y1 = ay; z1 = az; Rm = rc; Rp = ra; }
    let lx = x1 - x0, ly = y1 - y0, lz = z1 - z0;
    const L = Math.sqrt(lx * lx + ly * ly + lz * lz);
    lx /= L; ly /= L; lz /= L;
    const ux = ly * nz - lz * ny, uy = lz * nx - lx * nz, uz = lx * ny - ly * nx;
    const wx = x0 - px, wy = y0 - py, wz = z0 - pz;
    const t0 = wx * ux + wy * uy + wz * uz;
    // x on this edge's line at an end vertex: t⁰f → 0, and the in-plane gradient is singular.
    if ((t0 === 0 && g === null) || Rm === 0 || Rp === 0) continue;
    const sm = wx * lx + wy * ly + wz * lz, sp = sm + L;
    const f = edgeLog(L, sm, sp, Rm, Rp, t0 * t0 + h2);
    if (g !== null) { g[go] -= ux * f; g[go + 1] -= uy * f; g[go + 2] -= uz * f; }
    if (t0 !== 0) sum += t0 * f;
  }
  return sum;
}

/** f = ln((R⁺+s⁺)/(R⁻+s⁻)) = ∫_edge dl / distance, formed without cancellation. */
function edgeLog(L: number, sm: number, sp: number, Rm: number, Rp: number, R02: number): number {
  const q = (sp + sm) / (Rp + Rm);
  if (sp + sm >= 0) {
    const am = sm >= 0 ? Rm + sm : R02 / (Rm - sm);
    return Math.log1p(L * (1 + q) / am);
  }
  const bp = sp <= 0 ? Rp - sp : R02 / (Rp + sp);
  return Math.log1p(L * (1 - q) / bp);
}

/**
 * ∫_segment dl / |x − y| over the straight segment a→b (dimensionless): the f of the module
 * comment, ln((R⁺ + s⁺)/(R⁻ + s⁻)), with the same cancellation-free evaluation. Infinite on the
 * segment itself.
 */
export function segmentPotential(ax: number, ay: number, az: number, bx: number, by: number, bz: number,
  px: number, py: number, pz: number): number {
  let lx = bx - ax, ly = by - ay, lz = bz - az;
  const L = Math.sqrt(lx * lx + ly * ly + lz * lz);
  lx /= L; ly /= L; lz /= L;
  const wx = ax - px, wy = ay - py, wz = az - pz;
  const sm = wx * lx + wy * ly + wz * lz, sp = sm + L;
  const cx = wy * lz - wz * ly, cy = wz * lx - wx * lz, cz = wx * ly - wy * lx;
  const R02 = cx * cx + cy * cy + cz * cz;
  return edgeLog(L, sm, sp, Math.sqrt(sm * sm + R02), Math.sqrt(sp * sp + R02), R02);
}

/**
 * ∇I(x) into out[oo..oo+2] (dimensionless) and I(x) as the return value (metres). The field of
 * a panel of density σ is −σ/(4πε)·∇I. Normal component at h = 0 is the principal value
 * (see the module comment). The in-plane part is log-singular on the edges: exactly on an edge
 * it is infinite, exactly at a vertex the singular terms are left out (no meaningful value).
 */
export function trianglePotentialGradient(out: Float64Array, oo: number, v: ArrayLike<number>, o: number,
  px: number, py: number, pz: number): number {
  const ax = v[o], ay = v[o + 1], az = v[o + 2];
  const bx = v[o + 3], by = v[o + 4], bz = v[o + 5];
  const cx = v[o + 6], cy = v[o + 7], cz = v[o + 8];
  const gx = (ax + bx + cx) / 3, gy = (ay + by + cy) / 3, gz = (az + bz + cz) / 3;
  const dgx = px - gx, dgy = py - gy, dgz = pz - gz;
  const dg2 = dgx * dgx + dgy * dgy + dgz * dgz;
  const r2 = Math.max(
    (ax - gx) ** 2 + (ay - gy) ** 2 + (az - gz) ** 2,
    (bx - gx) ** 2 + (by - gy) ** 2 + (bz - gz) ** 2,
    (cx - gx) ** 2 + (cy - gy) ** 2 + (cz - gz) ** 2);
  triangleAreaVector(N, 0, v, o, o + 3, o + 6);
  let nx = N[0], ny = N[1], nz = N[2];
  const n2 = Math.sqrt(nx * nx + ny * ny + nz * nz);
  out[oo] = 0; out[oo + 1] = 0; out[oo + 2] = 0;
  if (n2 === 0) return 0;
  const area = 0.5 * n2;
  if (dg2 > FAR_RATIO * FAR_RATIO * r2) {
    const R = FAR_RULE;
    let s = 0, sx = 0, sy = 0, sz = 0;
    for (let k = 0; k < R.n; k++) {
      const l1 = R.l1[k], l2 = R.l2[k], l3 = R.l3[k];
      const dx = px - (l1 * ax + l2 * bx + l3 * cx);
      const dy = py - (l1 * ay + l2 * by + l3 * cy);
      const dz = pz - (l1 * az + l2 * bz + l3 * cz);
      const ir = 1 / Math.sqrt(dx * dx + dy * dy + dz * dz);
      const w = R.w[k] * ir;
      s += w;
      const w3 = w * ir * ir;
      sx -= w3 * dx; sy -= w3 * dy; sz -= w3 * dz;
    }
    out[oo] = sx * area; out[oo + 1] = sy * area; out[oo + 2] = sz * area;
    return s * area;
  }
  nx /= n2; ny /= n2; nz /= n2;
  const h = (px - ax) * nx + (py - ay) * ny + (pz - az) * nz;
  const tf = edgeSum(ax, ay, az, bx, by, bz, cx, cy, cz, nx, ny, nz, px, py, pz, out, oo);
  // A point computed to lie on the panel carries a rounding-level h; it gets the principal value.
  if (Math.abs(h) <= PLANE_TOLERANCE * Math.sqrt(r2)) return tf;
  const om = triangleSolidAngle(v, o, px, py, pz);
  out[oo] -= nx * om; out[oo + 1] -= ny * om; out[oo + 2] -= nz * om;
  return tf - h * om;
}

/**
 * Solid angle (steradians, signed: positive seen from the +n̂ side) subtended by the triangle
 * at x, i.e. sgn(h)·Σβ of the formula above, so that ∂I/∂n = −Ω on both sides: the Van Oosterom
 * & Strackee angle of src/geometry/solid-angle.ts, which is positive from the −n̂ side, negated.
 * Equals sgn(h)·Σβ of Wilton et al. in one atan2 instead of six atans.
 */
export function triangleSolidAngle(v: ArrayLike<number>, o: number, px: number, py: number, pz: number): number {
  return -solidAngle(v, o, o + 3, o + 6, px, py, pz);
}
