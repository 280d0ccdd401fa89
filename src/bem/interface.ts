/**
 * The normal-field operator of piecewise-constant panel charges, for the interface rows of the
 * equivalent (total) charge formulation of dielectric bodies:
 *   K_ij = −∇I_j(x)·n̂_i / A_j      (1/m²; times 1/(4πε0) and the charge q_j gives V/m),
 * with I_j the potential integral of triangle-potential.ts, i.e. the normal field at x of unit
 * charge on panel j spread over it. The self term (j = i, x on T_i) is the principal value 0:
 * a flat uniformly charged panel has no normal field on its own plane (the two one-sided
 * limits ±σ/(2ε0) average to zero); the jump is the row's diagonal term (below).
 *
 * Interface row i (panel on the surface between medium − inside and medium + outside, n̂_i from
 * − to +), from continuity of the normal displacement ε+ E_n+ = ε− E_n− with
 * E_n± = E_pv·n̂ ± σ/(2ε0) (S. M. Rao, T. K. Sarkar, R. F. Harrington, "The electrostatic field
 * of conducting bodies in multiple dielectric media", IEEE Trans. MTT 32(11):1441, Nov. 1984,
 * doi:10.1109/TMTT.1984.1132869 — free-space Green's function, total charge on conductor and
 * polarisation charge on dielectric interfaces, flat triangles, pulse basis, point matching;
 * the issue's "32(5)" is the volume with a wrong number):
 *   (ε+ − ε−) E_pv·n̂ + (ε+ + ε−) σ/(2ε0) = 0.
 * With the scaled unknowns x = q/(4πε0) of assembly.ts, E_pv·n̂ = Σ_j K_ij x_j and
 * σ_i/(2ε0) = 2π x_i/A_i, so dividing by (ε+ + ε−):
 *   λ_i Σ_j K_ij x_j + 2π x_i/A_i = 0,    λ_i = (ε+ − ε−)/(ε+ + ε−).
 * The row is multiplied by √A_i/(2π) so its diagonal is 1/√A_i (1/m), the same order as the
 * single-layer rows of the conductors it is assembled with.
 *
 * Testing: collocation at the centroid (`normalFieldEntry`) or the mean over the test panel
 * near the source (`normalFieldGalerkinEntry`). Measured on the coated sphere (a = 1, b = 2,
 * εr = 4) against the exact series-capacitor value, relative error of C with 320 / 1280
 * interface panels: collocation +5.0e-2 / +3.3e-2, Galerkin test −1.1e-2 / −2.9e-3 (the earlier
 * split-outer-rule entries gave −2.2e-3 at 1280). Point
 * matching at the centroid of a flat facet misses the tilt of its neighbours' field across the
 * facet; the Galerkin test converges like h² and is the default (extract/options.ts).
 */
import type { PanelSet } from "./panels.js";
import type { ImageSet } from "./images.js";
import { task } from "../linalg/task.js";
import { trianglePotentialGradient, triangleSolidAngle, PLANE_TOLERANCE } from "./triangle-potential.js";
import { dunavantRule, type TriangleRule } from "./dunavant.js";

export type InterfaceTesting = "collocation" | "galerkin";

/**
 * The point ladder of normalFieldAt, by distance from c_j in radii r_j; worst error relative to
 * 1/|x − c_j|² against the analytic gradient, 2000 random panels, points and normals per distance
 * (tests/bem/interface-ladder.test.ts): below NORMAL_FIELD_RULE the analytic gradient
 * (triangle-potential.ts); below NORMAL_FIELD_TAYLOR the degree-5 Dunavant rule (5.5e-6 at 4
 * radii, 3e-7 at 6, 5e-9 at 12); beyond, the third-order Taylor expansion (taylorGalerkin with M_i = 0:
 * 7e-6 at 12 radii, under 5e-6 from 14, 6e-7 at 20).
 */
export const NORMAL_FIELD_RULE = 5;
export const NORMAL_FIELD_TAYLOR = 14;
const FAR_RULE = dunavantRule(5);
/** |n̂·n̂_j| at or above which a test normal counts as parallel to panel j's (coplanar test). */
const COPLANAR_PARALLEL = 1 - 1e-9;
const grad = new Float64Array(3);

/**
 * −∇I_j(x)·(nx, ny, nz) / A_j for the panel j of S (1/m²), with the principal value 0 when x
 * lies on T_j's plane (triangle-potential.ts PLANE_TOLERANCE).
 */
export function normalFieldAt(S: PanelSet, j: number, px: number, py: number, pz: number, nx: number, ny: number, nz: number): number {
  const c = S.centroids, v = S.vertices;
  const dx = px - c[3 * j], dy = py - c[3 * j + 1], dz = pz - c[3 * j + 2];
  const r2 = dx * dx + dy * dy + dz * dz, rj = S.radii[j];
  if (r2 >= NORMAL_FIELD_TAYLOR * NORMAL_FIELD_TAYLOR * rj * rj) return taylorGalerkin(undefined, 0, S, j, dx, dy, dz, nx, ny, nz);
  if (r2 < NORMAL_FIELD_RULE * NORMAL_FIELD_RULE * rj * rj) {
    // On T_j's own plane with n̂ parallel to T_j's normal the value is the principal value 0
    // (the field of a flat panel lies in its plane there); the in-plane gradient, infinite
    // exactly on T_j's edges (a pad edge through a board panel's quadrature point), would
    // otherwise enter as ∞·0.
    const m = S.normals, mx = m[3 * j], my = m[3 * j + 1], mz = m[3 * j + 2];
    if (Math.abs(mx * nx + my * ny + mz * nz) >= COPLANAR_PARALLEL && Math.abs(dx * mx + dy * my + dz * mz) <= PLANE_TOLERANCE * rj) return 0;
    trianglePotentialGradient(grad, 0, v, 9 * j, px, py, pz);
    return -(grad[0] * nx + grad[1] * ny + grad[2] * nz) / S.areas[j];
  }
  // ∇_x ∫ dS/|x − y| = −∫ (x − y)/|x − y|³ dS, so −∇I/A is the mean of (x − y)/|x − y|³.
  const o = 9 * j;
  const ax = v[o], ay = v[o + 1], az = v[o + 2], bx = v[o + 3], by = v[o + 4], bz = v[o + 5], cx = v[o + 6], cy = v[o + 7], cz = v[o + 8];
  const R = FAR_RULE, L1 = R.l1, L2 = R.l2, L3 = R.l3, W = R.w;
  let s = 0;
  for (let m = 0; m < R.n; m++) {
    const rx = px - (L1[m] * ax + L2[m] * bx + L3[m] * cx);
    const ry = py - (L1[m] * ay + L2[m] * by + L3[m] * cy);
    const rz = pz - (L1[m] * az + L2[m] * bz + L3[m] * cz);
    const ir = 1 / Math.sqrt(rx * rx + ry * ry + rz * rz);
    s += W[m] * ir * ir * ir * (rx * nx + ry * ny + rz * nz);
  }
  return s;
}

/** K_ij by collocation at the centroid of panel i (1/m²); 0 for i = j (principal value). */
export function normalFieldEntry(P: PanelSet, i: number, j: number): number {
  if (i === j) return 0;
  const c = P.centroids, nm = P.normals;
  return normalFieldAt(P, j, c[3 * i], c[3 * i + 1], c[3 * i + 2], nm[3 * i], nm[3 * i + 1], nm[3 * i + 2]);
}

/**
 * K_ij tested over panel i: (1/A_i) ∫_{T_i} −∇I_j(x)·n̂_i dS(x) / A_j (1/m²); 0 for i = j.
 * Swapping the order of integration, ∫_{T_i} (x − y)·n̂_i/|x − y|³ dS(x) = −Ω_i(y), the signed
 * solid angle T_i subtends at y (triangle-potential.ts triangleSolidAngle; A. van Oosterom &
 * J. Strackee, IEEE Trans. Biomed. Eng. 30(2):125, 1983), so
 *   K_ij = −(1/A_i) · mean over y ∈ T_j of Ω_i(y).
 * The inner integral is then bounded (|Ω| ≤ 2π) where the field of T_j is log-singular along a
 * shared edge, and costs one atan2 instead of the edge logarithms of the potential gradient.
 * Coplanar panels give exactly 0 (every y on T_i's plane outside T_i sees no solid angle).
 *
 * The ladder, by ρ = |c_i − c_j|/(r_i + r_j); worst error relative to 1/max(|c_i − c_j|, r_i + r_j)²
 * (the size of the kernel; a relative error proper is undefined where the entry passes through 0),
 * against the solid-angle mean on 4⁴ pieces (graded 3 more levels next to T_i) with the degree-10 rule, on 300 random pairs at each
 * of ρ = 1.2 … 16 and on all pairs of a 1 × 1 × 0.1 box (10 × 10 × 1 divisions), a 1 × 1 × 0.04
 * box and a 320-panel icosphere (tests/bem/interface-ladder.test.ts rechecks a subset):
 *   coplanar               exactly 0
 *   ρ < NF_SPLIT2 (1.2)    Ω_i at the degree-6 rule on 4² pieces of T_j, the pieces within two
 *                          radii of T_i split NF_GRADE more times:  separated ≤ 2e-9; touching
 *                          at a 90° edge of a thin box 6.7e-5 (4.3e-3 without the grading;
 *                          the graded reference moves 1e-6 from 4⁴ to 4⁵ pieces), icosphere 1.9e-6
 *   ρ < NF_SPLIT1 (1.5)    the same on 4 pieces                               ≤ 7.6e-7
 *   ρ < NF_RULE (3)        the degree-6 rule on T_j (12 solid angles)          ≤ 3.9e-6
 *   ρ < NF_DOUBLE3 (7)     degree-4 rule on both panels, point field (36)      ≤ 5.7e-6
 *   ρ < NF_TAYLOR (10)     degree-3 rule on both panels (16)                   ≤ 8.0e-6
 *   ρ ≥ NF_TAYLOR          Taylor expansion about both centroids, third order  ≤ 4.8e-6
 * So entries with ρ ≥ NF_SPLIT2 are good to 1e-5 of the kernel's size; the touching pairs
 * are the accuracy limit, as for the single layer (galerkin.ts).
 */
export function normalFieldGalerkinEntry(P: PanelSet, i: number, j: number, images?: { S: PanelSet; j: number }): number {
  if (i === j && images === undefined) return 0;
  const S = images ? images.S : P, js = images ? images.j : j;
  const c = P.centroids, nm = P.normals;
  const nx = nm[3 * i], ny = nm[3 * i + 1], nz = nm[3 * i + 2];
  const dx = c[3 * i] - S.centroids[3 * js], dy = c[3 * i + 1] - S.centroids[3 * js + 1], dz = c[3 * i + 2] - S.centroids[3 * js + 2];
  const rs = P.radii[i] + S.radii[js];
  const d2 = dx * dx + dy * dy + dz * dz, rs2 = rs * rs;
  if (d2 >= NF_TAYLOR * NF_TAYLOR * rs2) return taylorGalerkin(P, i, S, js, dx, dy, dz, nx, ny, nz);
  if (d2 >= NF_DOUBLE3 * NF_DOUBLE3 * rs2) return doubleRule(P, i, S, js, nx, ny, nz, DOUBLE_RULE_FAR);
  if (d2 >= NF_RULE * NF_RULE * rs2) return doubleRule(P, i, S, js, nx, ny, nz, DOUBLE_RULE);
  if (coplanar(P, i, S, js)) return 0;
  const depth = d2 >= NF_SPLIT1 * NF_SPLIT1 * rs2 ? 0 : d2 >= NF_SPLIT2 * NF_SPLIT2 * rs2 ? 1 : 2;
  return solidAngleMean(P, i, S, js, SOLID_RULE, depth, depth === 2 ? NF_GRADE : 0);
}

/** ρ bounds of the Galerkin ladder (normalFieldGalerkinEntry). */
export const NF_SPLIT2 = 1.2;
export const NF_SPLIT1 = 1.5;
export const NF_RULE = 3;
export const NF_DOUBLE3 = 7;
export const NF_TAYLOR = 10;
const SOLID_RULE = dunavantRule(6);
/** Extra levels of graded splitting next to T_i in the nearest rung. */
export const NF_GRADE = 3;
const DOUBLE_RULE = dunavantRule(4);
const DOUBLE_RULE_FAR = dunavantRule(3);
/** Vertices within this fraction of r_i of T_i's plane count as on it. */
const COPLANAR = 1e-10;

/** Whether T_j (of S) lies in the plane of T_i (of P). */
function coplanar(P: PanelSet, i: number, S: PanelSet, j: number): boolean {
  const nm = P.normals, v = P.vertices, w = S.vertices, o = 9 * i, q = 9 * j;
  const nx = nm[3 * i], ny = nm[3 * i + 1], nz = nm[3 * i + 2], tol = COPLANAR * P.radii[i];
  const h0 = v[o] * nx + v[o + 1] * ny + v[o + 2] * nz;
  for (let k = 0; k < 9; k += 3) if (Math.abs(w[q + k] * nx + w[q + k + 1] * ny + w[q + k + 2] * nz - h0) > tol) return false;
  return true;
}

/**
 * −(1/A_i) · mean over T_j of Ω_i(y), by the rule R on the 4^depth midpoint pieces of T_j
 * (reference: depth 5 with the degree-10 rule).
 */
export function solidAngleMean(P: PanelSet, i: number, S: PanelSet, j: number, R: TriangleRule, depth: number, grade = 0): number {
  const w = S.vertices, q = 9 * j;
  return -solidPieces(P.vertices, 9 * i, w[q], w[q + 1], w[q + 2], w[q + 3], w[q + 4], w[q + 5], w[q + 6], w[q + 7], w[q + 8], R, depth, grade) / P.areas[i];
}

function solidPieces(v: Float64Array, o: number,
  ax: number, ay: number, az: number, bx: number, by: number, bz: number, cx: number, cy: number, cz: number,
  R: TriangleRule, depth: number, grade = 0): number {
  if (depth === 0 && grade > 0) {
    // Graded: a piece keeps splitting while it lies within two of its radii of T_i's plane and
    // of T_i itself (the solid angle changes fast only next to T_i's edges).
    const gx = (ax + bx + cx) / 3, gy = (ay + by + cy) / 3, gz = (az + bz + cz) / 3;
    const rp = Math.sqrt(Math.max((ax - gx) ** 2 + (ay - gy) ** 2 + (az - gz) ** 2, (bx - gx) ** 2 + (by - gy) ** 2 + (bz - gz) ** 2,
      (cx - gx) ** 2 + (cy - gy) ** 2 + (cz - gz) ** 2));
    if (nearPanel(v, o, gx, gy, gz, 2 * rp)) return split(v, o, ax, ay, az, bx, by, bz, cx, cy, cz, R, 0, grade - 1);
  }
  if (depth === 0) {
    let s = 0;
    for (let m = 0; m < R.n; m++) {
      const l1 = R.l1[m], l2 = R.l2[m], l3 = R.l3[m];
      s += R.w[m] * triangleSolidAngle(v, o, l1 * ax + l2 * bx + l3 * cx, l1 * ay + l2 * by + l3 * cy, l1 * az + l2 * bz + l3 * cz);
    }
    return s;
  }
  return split(v, o, ax, ay, az, bx, by, bz, cx, cy, cz, R, depth - 1, grade);
}

function split(v: Float64Array, o: number,
  ax: number, ay: number, az: number, bx: number, by: number, bz: number, cx: number, cy: number, cz: number,
  R: TriangleRule, e: number, grade: number): number {
  const abx = 0.5 * (ax + bx), aby = 0.5 * (ay + by), abz = 0.5 * (az + bz);
  const bcx = 0.5 * (bx + cx), bcy = 0.5 * (by + cy), bcz = 0.5 * (bz + cz);
  const cax = 0.5 * (cx + ax), cay = 0.5 * (cy + ay), caz = 0.5 * (cz + az);
  return 0.25 * (solidPieces(v, o, ax, ay, az, abx, aby, abz, cax, cay, caz, R, e, grade)
    + solidPieces(v, o, abx, aby, abz, bx, by, bz, bcx, bcy, bcz, R, e, grade)
    + solidPieces(v, o, cax, cay, caz, bcx, bcy, bcz, cx, cy, cz, R, e, grade)
    + solidPieces(v, o, abx, aby, abz, bcx, bcy, bcz, cax, cay, caz, R, e, grade));
}

/** Whether (x, y, z) lies within `dist` of the plane of the triangle at v[o..o+8] and of its bounding sphere. */
function nearPanel(v: Float64Array, o: number, x: number, y: number, z: number, dist: number): boolean {
  const ax = v[o], ay = v[o + 1], az = v[o + 2];
  const ux = v[o + 3] - ax, uy = v[o + 4] - ay, uz = v[o + 5] - az, wx = v[o + 6] - ax, wy = v[o + 7] - ay, wz = v[o + 8] - az;
  const nx = uy * wz - uz * wy, ny = uz * wx - ux * wz, nz = ux * wy - uy * wx, nl = Math.sqrt(nx * nx + ny * ny + nz * nz);
  if (nl === 0) return false;
  const h = ((x - ax) * nx + (y - ay) * ny + (z - az) * nz) / nl;
  if (Math.abs(h) > dist) return false;
  const gx = ax + (ux + wx) / 3, gy = ay + (uy + wy) / 3, gz = az + (uz + wz) / 3;
  const r2 = Math.max((ax - gx) ** 2 + (ay - gy) ** 2 + (az - gz) ** 2, (v[o + 3] - gx) ** 2 + (v[o + 4] - gy) ** 2 + (v[o + 5] - gz) ** 2,
    (v[o + 6] - gx) ** 2 + (v[o + 7] - gy) ** 2 + (v[o + 8] - gz) ** 2);
  const rr = Math.sqrt(r2) + dist;
  return (x - gx) ** 2 + (y - gy) ** 2 + (z - gz) ** 2 <= rr * rr;
}

/** Mean over x ∈ T_i and y ∈ T_j of (x − y)·n̂/|x − y|³ by the rule R on both panels. */
export function doubleRule(P: PanelSet, i: number, S: PanelSet, j: number, nx: number, ny: number, nz: number, R: TriangleRule): number {
  const v = P.vertices, w = S.vertices, o = 9 * i, q = 9 * j;
  const L1 = R.l1, L2 = R.l2, L3 = R.l3, W = R.w, m = R.n, Y = SOURCE_POINTS;
  // Source points once, as n̂-projections and coordinates: (x − y)·n̂ = x·n̂ − y·n̂.
  for (let b = 0; b < m; b++) {
    const yx = L1[b] * w[q] + L2[b] * w[q + 3] + L3[b] * w[q + 6];
    const yy = L1[b] * w[q + 1] + L2[b] * w[q + 4] + L3[b] * w[q + 7];
    const yz = L1[b] * w[q + 2] + L2[b] * w[q + 5] + L3[b] * w[q + 8];
    Y[4 * b] = yx; Y[4 * b + 1] = yy; Y[4 * b + 2] = yz; Y[4 * b + 3] = yx * nx + yy * ny + yz * nz;
  }
  let s = 0;
  for (let a = 0; a < m; a++) {
    const xx = L1[a] * v[o] + L2[a] * v[o + 3] + L3[a] * v[o + 6];
    const xy = L1[a] * v[o + 1] + L2[a] * v[o + 4] + L3[a] * v[o + 7];
    const xz = L1[a] * v[o + 2] + L2[a] * v[o + 5] + L3[a] * v[o + 8];
    const xn = xx * nx + xy * ny + xz * nz;
    let t = 0;
    for (let b = 0; b < m; b++) {
      const rx = xx - Y[4 * b], ry = xy - Y[4 * b + 1], rz = xz - Y[4 * b + 2];
      const r2 = rx * rx + ry * ry + rz * rz;
      t += W[b] * (xn - Y[4 * b + 3]) / (r2 * Math.sqrt(r2));
    }
    s += W[a] * t;
  }
  return s;
}
/** Scratch for doubleRule: 4 numbers per source point (rules of up to 16 points). */
const SOURCE_POINTS = new Float64Array(64);

/**
 * Taylor expansion of the mean of f(x − y) = (x − y)·n̂/|x − y|³ about the centroids, to third
 * order (d = c_i − c_j; S = M_i + M_j the summed second and U = T_i − T_j the differenced third
 * central moments of panels.ts, t_c = Σ_a U_aac their traces; the first moments vanish). With
 * f = −n̂·∇(1/r) and the derivatives of 1/r (as in galerkin.ts quadrupoleTerm/farTerm):
 *   f(d) + ½ S:∇∇f + ⅙ U⋮∇∇∇f
 *     = d·n̂/r³ − (3 n̂·S·d + 1.5 (d·n̂) tr S)/r⁵ + 7.5 (d·n̂)(d·S·d)/r⁷
 *       − 1.5 t·n̂/r⁵ + 7.5 (U(n̂,d,d) + (t·d)(d·n̂))/r⁷ − 17.5 U(d,d,d)(d·n̂)/r⁹.
 * Mi undefined: x is a point (collocation; S = M_j, U = −T_j).
 */
export function taylorGalerkin(Pi: PanelSet | undefined, i: number, Pj: PanelSet, j: number,
  dx: number, dy: number, dz: number, nx: number, ny: number, nz: number): number {
  const Mj = Pj.moments2, Tj = Pj.moments3, Vj = Pj.traces3;
  const oj = 6 * j, tj = 10 * j;
  let sxx = Mj[oj], syy = Mj[oj + 1], szz = Mj[oj + 2], sxy = Mj[oj + 3], sxz = Mj[oj + 4], syz = Mj[oj + 5];
  let u0 = -Tj[tj], u1 = -Tj[tj + 1], u2 = -Tj[tj + 2], u3 = -Tj[tj + 3], u4 = -Tj[tj + 4], u5 = -Tj[tj + 5], u6 = -Tj[tj + 6];
  let u7 = -Tj[tj + 7], u8 = -Tj[tj + 8], u9 = -Tj[tj + 9];
  let tx = -Vj[3 * j], ty = -Vj[3 * j + 1], tz = -Vj[3 * j + 2];
  if (Pi !== undefined) {
    const Mi = Pi.moments2, Ti = Pi.moments3, Vi = Pi.traces3, oi = 6 * i, ti = 10 * i;
    sxx += Mi[oi]; syy += Mi[oi + 1]; szz += Mi[oi + 2]; sxy += Mi[oi + 3]; sxz += Mi[oi + 4]; syz += Mi[oi + 5];
    u0 += Ti[ti]; u1 += Ti[ti + 1]; u2 += Ti[ti + 2]; u3 += Ti[ti + 3]; u4 += Ti[ti + 4]; u5 += Ti[ti + 5]; u6 += Ti[ti + 6];
    u7 += Ti[ti + 7]; u8 += Ti[ti + 8]; u9 += Ti[ti + 9];
    tx += Vi[3 * i]; ty += Vi[3 * i + 1]; tz += Vi[3 * i + 2];
  }
  const r2 = dx * dx + dy * dy + dz * dz, inv2 = 1 / r2, inv = Math.sqrt(inv2), inv3 = inv * inv2;
  const dn = dx * nx + dy * ny + dz * nz;
  const sdx = sxx * dx + sxy * dy + sxz * dz, sdy = sxy * dx + syy * dy + syz * dz, sdz = sxz * dx + syz * dy + szz * dz;
  const nsd = nx * sdx + ny * sdy + nz * sdz, q = dx * sdx + dy * sdy + dz * sdz;
  // g_p = Σ U_pqr d_q d_r (order xxx, yyy, zzz, xxy, xxz, xyy, yyz, xzz, yzz, xyz); U(d,d,d) = g·d, U(n̂,d,d) = g·n̂.
  const gx = u0 * dx * dx + u5 * dy * dy + u7 * dz * dz + 2 * (u3 * dx * dy + u4 * dx * dz + u9 * dy * dz);
  const gy = u3 * dx * dx + u1 * dy * dy + u8 * dz * dz + 2 * (u5 * dx * dy + u9 * dx * dz + u6 * dy * dz);
  const gz = u4 * dx * dx + u6 * dy * dy + u2 * dz * dz + 2 * (u9 * dx * dy + u7 * dx * dz + u8 * dy * dz);
  const uddd = gx * dx + gy * dy + gz * dz, undd = gx * nx + gy * ny + gz * nz;
  const tn = tx * nx + ty * ny + tz * nz, td = tx * dx + ty * dy + tz * dz;
  return inv3 * (dn + inv2 * (-3 * nsd - 1.5 * dn * (sxx + syy + szz) - 1.5 * tn
    + inv2 * (7.5 * dn * q + 7.5 * (undd + td * dn) - 17.5 * uddd * dn * inv2)));
}
/** The image part Σ_e s_e K(i, image e of j) (collocation or Galerkin test). */
export function normalFieldImageEntry(S: ImageSet, i: number, j: number, testing: InterfaceTesting): number {
  const Q = S.panels, c = Q.centroids, nm = Q.normals;
  let s = 0;
  for (let e = 0; e < S.count; e++) {
    const jj = S.n * (e + 1) + j;
    s += S.signs[e] * (testing === "galerkin"
      ? normalFieldGalerkinEntry(Q, i, jj, { S: Q, j: jj })
      : normalFieldAt(Q, jj, c[3 * i], c[3 * i + 1], c[3 * i + 2], nm[3 * i], nm[3 * i + 1], nm[3 * i + 2]));
  }
  return s;
}

/**
 * Write the interface rows rows[a], a in [a0, a1), of the N×N row-major matrix `out`:
 *   out[i·N + j] = (√A_i/(2π)) (λ_a K_ij + δ_ij 2π/A_i),  λ_a = lambda[a]
 * (the row equation of the header). `images` adds the mirror charges' normal field.
 */
export function interfaceRows(P: PanelSet, rows: Uint32Array, lambda: Float64Array, a0: number, a1: number, out: Float64Array,
  testing: InterfaceTesting, images?: ImageSet): void {
  const N = P.n;
  if (out.length < N * N) throw new Error(`interfaceRows: output holds ${out.length} entries, need ${N * N}`);
  if (images !== undefined && images.n !== N) throw new Error(`interfaceRows: image set is for ${images.n} panels, the matrix has ${N}`);
  const c = P.centroids, nm = P.normals, A = P.areas;
  for (let a = a0; a < a1; a++) {
    const i = rows[a], row = i * N;
    const scale = Math.sqrt(A[i]) / (2 * Math.PI), sl = scale * lambda[a];
    const px = c[3 * i], py = c[3 * i + 1], pz = c[3 * i + 2], nx = nm[3 * i], ny = nm[3 * i + 1], nz = nm[3 * i + 2];
    if (testing === "galerkin") {
      for (let j = 0; j < N; j++) out[row + j] = sl * normalFieldGalerkinEntry(P, i, j);
    } else {
      for (let j = 0; j < N; j++) out[row + j] = j === i ? 0 : sl * normalFieldAt(P, j, px, py, pz, nx, ny, nz);
    }
    if (images !== undefined) for (let j = 0; j < N; j++) out[row + j] += sl * normalFieldImageEntry(images, i, j, testing);
    out[row + i] += scale * 2 * Math.PI / A[i];
  }
}

/**
 * One entry of an interface row, as interfaceRows writes it (the same operations in the same
 * order, so blocks of the compressed solver equal the dense matrix): panel i with contrast λ.
 */
export function interfaceRowEntry(P: PanelSet, i: number, j: number, lambda: number, testing: InterfaceTesting, images?: ImageSet): number {
  const A = P.areas, scale = Math.sqrt(A[i]) / (2 * Math.PI), sl = scale * lambda;
  let x: number;
  if (testing === "galerkin") x = sl * normalFieldGalerkinEntry(P, i, j);
  else {
    const c = P.centroids, nm = P.normals;
    x = j === i ? 0 : sl * normalFieldAt(P, j, c[3 * i], c[3 * i + 1], c[3 * i + 2], nm[3 * i], nm[3 * i + 1], nm[3 * i + 2]);
  }
  if (images !== undefined) x += sl * normalFieldImageEntry(images, i, j, testing);
  if (j === i) x += scale * 2 * Math.PI / A[i];
  return x;
}

/** interfaceRows in a worker. */
export const interfaceRowsTask = task(import.meta.url, { interfaceRows });
