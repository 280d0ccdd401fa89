/**
 * Galerkin entries of the single-layer operator for piecewise-constant panel charges:
 *   P_ij = (1/(A_i A_j)) ∫_{T_i} ∫_{T_j} 1/|x − y| dS(y) dS(x)      (1/metre)
 * (the 1/(4πε) factor is the caller's). P is symmetric: every entry is computed with the
 * lower index as the outer panel, so P_ij and P_ji are the same floating-point number.
 *
 * The ladder, by ρ = |c_i − c_j| / (r_i + r_j) (centroid distance over the sum of the
 * centroid-to-vertex radii). Worst relative errors measured against a reference with the
 * analytic inner integral and a subdivided degree-10 outer rule (tests/bem/galerkin.test.ts on
 * random pairs, and on icosphere pairs by the ladder section of tests/bench/assembly.bench.mjs):
 *   i = j              closed form (selfTerm)                                   ~1e-15
 *   shared vertex      homogeneity reduction to edge integrals (touchingTerm)   ≤ 1e-8 (5e-9)
 *   ρ < RHO_NEAR       analytic inner, outer rule on pieces split by distance  ≤ 2e-7 (outerRuleSplit)
 *   ρ < RHO_MID        degree-6 (12-point) rule on both panels, if each centroid
 *                      is ETA_MID radii clear of the other triangle, else as ρ < RHO_NEAR ≤ 2e-7
 *   ρ < RHO_QQ3        degree-4 (6-point) rule on both panels                   ≤ 2e-6
 *   ρ < RHO_FAR        degree-3 (4-point) rule on both panels                   ≤ 1e-5
 *   ρ < RHO_QUADRUPOLE Taylor expansion about the centroids to third order     ≤ 1e-5
 *   ρ ≥ RHO_QUADRUPOLE the same to second order (quadrupoleTerm)               ≤ 5e-6 (icosphere)
 * So entries with ρ < RHO_MID ("near") are good to 1e-6 and the rest ("far") to 1e-5.
 */
import type { PanelSet } from "./panels.js";
import { trianglePotential, segmentPotential, sourceFrame, framePotential, frameDistance, FRAME_SIZE } from "./triangle-potential.js";
import { dunavantRule, type TriangleRule } from "./dunavant.js";
import { gaussLegendre } from "./gauss-legendre.js";

export const RHO_NEAR = 1.0;
export const RHO_MID = 2.5;
export const RHO_QQ3 = 4.0;
export const RHO_FAR = 5.0;
export const RHO_QUADRUPOLE = 12.0;

const RULE_NEAR = dunavantRule(10);
const RULE_MID = dunavantRule(6);
const RULE_QQ = dunavantRule(4);
const RULE_QQ3 = dunavantRule(3);
const GL_SMOOTH = gaussLegendre(10);
const GL_GRADED = gaussLegendre(8);
/** Geometric grading toward a shared vertex: interval ratio and number of levels. */
const GRADE_RATIO = 0.15;
const GRADE_LEVELS = 4;

/** P_ij (1/metre). */
export function galerkinEntry(P: PanelSet, i: number, j: number): number {
  if (i === j) return selfTerm(P, i);
  if (i > j) { const t = i; i = j; j = t; }
  const c = P.centroids;
  const dx = c[3 * i] - c[3 * j], dy = c[3 * i + 1] - c[3 * j + 1], dz = c[3 * i + 2] - c[3 * j + 2];
  const d2 = dx * dx + dy * dy + dz * dz;
  const rs = P.radii[i] + P.radii[j];
  if (d2 >= RHO_QUADRUPOLE * RHO_QUADRUPOLE * rs * rs) return quadrupoleTerm(P, i, j);
  if (d2 >= RHO_FAR * RHO_FAR * rs * rs) return farTerm(P, i, j);
  if (d2 >= RHO_QQ3 * RHO_QQ3 * rs * rs) return doubleQuadrature(P, i, j, RULE_QQ3);
  if (d2 >= RHO_MID * RHO_MID * rs * rs) return doubleQuadrature(P, i, j, RULE_QQ);
  const shared = sharedCorner(P, i, j);
  if (shared >= 0) return touchingTerm(P, i, j, shared);
  if (d2 >= RHO_NEAR * RHO_NEAR * rs * rs && clearOfEachOther(P, i, j)) return doubleQuadrature(P, i, j, RULE_MID);
  return outerRuleSplit(P, i, j);
}

/**
 * ∫_T∫_T 1/|x−y| dS dS / A² for one triangle with sides a, b, c:
 *   (4/3) Σ_sides (1/a) ln((a + b + c)/(b + c − a)),
 * the classical closed form of the constant-basis self term (as used e.g. by Arcioni, Bressan &
 * Perregrini, IEEE Trans. MTT 45(3), 1997; recalled from memory and verified in
 * tests/bem/galerkin.test.ts against converged numerical integration and against the
 * homogeneity reduction of touchingTerm).
 */
export function selfTerm(P: PanelSet, i: number): number {
  const v = P.vertices, o = 9 * i;
  const a = Math.hypot(v[o + 3] - v[o + 6], v[o + 4] - v[o + 7], v[o + 5] - v[o + 8]);
  const b = Math.hypot(v[o + 6] - v[o], v[o + 7] - v[o + 1], v[o + 8] - v[o + 2]);
  const c = Math.hypot(v[o] - v[o + 3], v[o + 1] - v[o + 4], v[o + 2] - v[o + 5]);
  const p = a + b + c;
  if (P.areas[i] === 0) return Infinity;
  return (4 / 3) * (Math.log(p / (b + c - a)) / a + Math.log(p / (c + a - b)) / b + Math.log(p / (a + b - c)) / c);
}

/**
 * Index 3·ki + kj of the first corner pair the panels share (by mesh vertex index), or −1.
 * Panels that touch only geometrically (unwelded mesh) fall to the near rungs.
 */
export function sharedCorner(P: PanelSet, i: number, j: number): number {
  const c = P.corners;
  for (let a = 0; a < 3; a++) {
    const va = c[3 * i + a];
    for (let b = 0; b < 3; b++) if (c[3 * j + b] === va) return 3 * a + b;
  }
  return -1;
}

/**
 * Panels with a common vertex V. The kernel is homogeneous of degree −1, so scaling both
 * triangles about V gives 3J = h_i ∫_{e_i} I_j dl + h_j ∫_{e_j} I_i dl, where e_i is the edge
 * of T_i opposite V, h_i the distance from V to its line and I_j the analytic potential
 * integral of T_j (the reduction by homogeneity of M. Lenoir & N. Salles, SIAM J. Sci. Comput.
 * 34(6), 2012, cited from memory; see also Gumerov, Kaneko & Duraiswami, arXiv:2302.03247).
 * The edge integrands are smooth except for a t·ln t type point where the edge meets the other
 * panel (a second shared vertex): Gauss–Legendre, geometrically graded toward such ends.
 */
export function touchingTerm(P: PanelSet, i: number, j: number, shared: number): number {
  const ki = (shared / 3) | 0, kj = shared % 3;
  const J = oppositeEdgeTerm(P, i, ki, j) + oppositeEdgeTerm(P, j, kj, i);
  return J / (3 * P.areas[i] * P.areas[j]);
}

/** h_a ∫_{edge of a opposite its corner k} I_b dl. */
function oppositeEdgeTerm(P: PanelSet, a: number, k: number, b: number): number {
  const v = P.vertices, c = P.corners;
  const k1 = (k + 1) % 3, k2 = (k + 2) % 3;
  const o1 = 9 * a + 3 * k1, o2 = 9 * a + 3 * k2;
  const x0 = v[o1], y0 = v[o1 + 1], z0 = v[o1 + 2];
  const ex = v[o2] - x0, ey = v[o2 + 1] - y0, ez = v[o2 + 2] - z0;
  const L = Math.sqrt(ex * ex + ey * ey + ez * ez);
  const h = 2 * P.areas[a] / L;
  const vb = c[3 * b], vb1 = c[3 * b + 1], vb2 = c[3 * b + 2];
  const i1 = c[3 * a + k1], i2 = c[3 * a + k2];
  const g0 = i1 === vb || i1 === vb1 || i1 === vb2;
  const g1 = i2 === vb || i2 === vb1 || i2 === vb2;
  const F = sourceFrame(FRAME_J, v, 9 * b);
  if (!g0 && !g1) return h * L * lineIntegral(F, x0, y0, z0, ex, ey, ez, 0, 1, GL_SMOOTH);
  if (g0 !== g1) {
    const w = g0 ? i1 : i2;
    const kw = w === vb ? 0 : w === vb1 ? 1 : 2;
    return h * edgeTriangleFromCorner(P, F, b, kw, g0 ? x0 : x0 + ex, g0 ? y0 : y0 + ey, g0 ? z0 : z0 + ez,
      g0 ? x0 + ex : x0, g0 ? y0 + ey : y0, g0 ? z0 + ez : z0, L);
  }
  // Both ends on T_b: only for duplicated panels; grade toward both ends.
  return h * L * (gradedIntegral(F, x0, y0, z0, ex, ey, ez, 0, 0.5) + gradedIntegral(F, x0, y0, z0, ex, ey, ez, 1, 0.5));
}

/**
 * K = ∫_e I_b dl for the segment e = W→Q that starts at corner kw (= W) of T_b. K is
 * homogeneous of degree 2; scaling e and T_b about W (the same reduction as touchingTerm) gives
 *   2K = L·I_b(Q) + h_W ∫_e ∫_{e'} dl' dl / |x − y|,
 * e' the edge of T_b opposite W and h_W the distance from W to its line. e and e' do not
 * meet, so the outer line integral of the analytic segment potential is smooth: Gauss–Legendre.
 */
function edgeTriangleFromCorner(P: PanelSet, F: Float64Array, b: number, kw: number, wx: number, wy: number, wz: number,
  qx: number, qy: number, qz: number, L: number): number {
  const v = P.vertices, ob = 9 * b;
  const oa = ob + 3 * ((kw + 1) % 3), oc = ob + 3 * ((kw + 2) % 3);
  const ax = v[oa], ay = v[oa + 1], az = v[oa + 2], cx = v[oc], cy = v[oc + 1], cz = v[oc + 2];
  const hW = 2 * P.areas[b] / Math.hypot(cx - ax, cy - ay, cz - az);
  const R = GL_SMOOTH;
  let s = 0;
  for (let k = 0; k < R.n; k++) {
    const t = R.t[k];
    s += R.w[k] * segmentPotential(ax, ay, az, cx, cy, cz, wx + t * (qx - wx), wy + t * (qy - wy), wz + t * (qz - wz));
  }
  return 0.5 * (L * framePotential(F, qx, qy, qz) + hW * L * s);
}

/** ∫_{ta}^{tb} I_b(p0 + t e) dt with a Gauss–Legendre rule, T_b given by its frame. */
function lineIntegral(F: Float64Array, x0: number, y0: number, z0: number,
  ex: number, ey: number, ez: number, ta: number, tb: number, R: { n: number; t: Float64Array; w: Float64Array }): number {
  const len = tb - ta;
  let s = 0;
  for (let k = 0; k < R.n; k++) {
    const t = ta + len * R.t[k];
    s += R.w[k] * framePotential(F, x0 + t * ex, y0 + t * ey, z0 + t * ez);
  }
  return s * len;
}

/** ∫ between t = ts (singular end) and t = te, graded geometrically toward ts. Signed length handled. */
function gradedIntegral(F: Float64Array, x0: number, y0: number, z0: number,
  ex: number, ey: number, ez: number, ts: number, te: number): number {
  const span = te - ts, sg = span > 0 ? 1 : -1, len = Math.abs(span);
  let s = 0, hi = 1;
  for (let l = 0; l <= GRADE_LEVELS; l++) {
    const lo = l === GRADE_LEVELS ? 0 : hi * GRADE_RATIO;
    const a = ts + sg * len * lo, b = ts + sg * len * hi;
    s += lineIntegral(F, x0, y0, z0, ex, ey, ez, Math.min(a, b), Math.max(a, b), GL_GRADED);
    hi = lo;
  }
  return s;
}

/** Analytic inner integral over T_j, outer rule on T_i. */
export function outerRule(P: PanelSet, i: number, j: number, R: TriangleRule): number {
  const v = P.vertices, o = 9 * i, oj = 9 * j;
  return outerOn(v, oj, v[o], v[o + 1], v[o + 2], v[o + 3], v[o + 4], v[o + 5], v[o + 6], v[o + 7], v[o + 8], R) / P.areas[j];
}

/**
 * Whether each panel's centroid lies at least ETA_MID of its own radii from the other
 * triangle. ρ ≥ RHO_NEAR only keeps the bounding spheres apart; a corner of one panel can
 * still come close to the other (coplanar neighbours of neighbours, slivers), and there the
 * degree-6 double rule fails the near bound: measured worst relative error against the
 * near rung with degree 10 everywhere, 4000 random pairs at ρ in [1, 2.5) (aspect up to 30,
 * coplanar and in space), by min(η_i, η_j): [1, 1.25) 4e-4, [1.5, 1.75) 7e-6, [2, 2.5) 1e-6,
 * [2.5, 3) 1.1e-7, ≥ 3 6e-8. Pairs below ETA_MID go to the near rung instead.
 */
export const ETA_MID = 2.5;
function clearOfEachOther(P: PanelSet, i: number, j: number): boolean {
  const c = P.centroids, v = P.vertices;
  const Fj = sourceFrame(FRAME_J, v, 9 * j);
  if (frameDistance(Fj, c[3 * i], c[3 * i + 1], c[3 * i + 2]) < ETA_MID * P.radii[i]) return false;
  const Fi = sourceFrame(FRAME_I, v, 9 * i);
  return frameDistance(Fi, c[3 * j], c[3 * j + 1], c[3 * j + 2]) >= ETA_MID * P.radii[j];
}
const FRAME_I = new Float64Array(FRAME_SIZE);

/**
 * The near rung: analytic inner integral over T_j, outer rule on pieces of T_i. T_i is split
 * at its edge midpoints into four, recursively, until each piece keeps away from T_j itself:
 * η = dist(piece centroid, T_j) / piece radius ≥ ETA_SPLIT (the distance to the triangle, not
 * to its centroid, so pieces beside a large or elongated T_j stop splitting as soon as they are
 * clear of it). Away from T_j the outer integrand is analytic, with its nearest singularity
 * (the |h| kink over T_j, the r·ln r lines along its edges) η piece radii off, so the rule
 * degree is chosen from η by NEAR_DEGREES. The split depth is capped at NEAR_DEPTH (only
 * reached by pieces that nearly touch T_j, i.e. unwelded meshes).
 * R, if given, replaces the η-chosen rule on every accepted piece (for references).
 */
export function outerRuleSplit(P: PanelSet, i: number, j: number, R?: TriangleRule): number {
  const v = P.vertices, o = 9 * i;
  const F = sourceFrame(FRAME_J, v, 9 * j);
  return adaptiveOuter(F, v[o], v[o + 1], v[o + 2], v[o + 3], v[o + 4], v[o + 5], v[o + 6], v[o + 7], v[o + 8],
    R ?? null, 0) / P.areas[j];
}

/** Source frame of T_j for the near and touching rungs (module scratch: entries are serial per thread). */
const FRAME_J = new Float64Array(FRAME_SIZE);

/**
 * η thresholds and the Dunavant degree used at or above each (degree 10 from ETA_SPLIT up).
 * Measured worst relative error of one piece's mean of I_j against the degree-10 rule on 256
 * sub-pieces (600 random configurations per row: source triangles of aspect up to 50, pieces
 * up to 20, coplanar and in space): η = 1.5 and degree 10: 1e-7; η = 2, degree 8: 1e-7;
 * η = 3, degree 6: 4e-8; η = 6, degree 5: 6e-8; η = 8, degree 4: 6e-8. Every piece's mean
 * is positive, so the entry's relative error is at most the worst piece's, ~1e-7: inside the
 * near bound of the ladder with a factor 10 to spare. Degrees 3 and 7 (a negative weight)
 * are skipped.
 */
export const ETA_SPLIT = 1.5;
const NEAR_ETA = [8, 6, 3, 2];
const NEAR_RULES = [dunavantRule(4), dunavantRule(5), dunavantRule(6), dunavantRule(8)];
const NEAR_DEPTH = 6;

function adaptiveOuter(F: Float64Array,
  ax: number, ay: number, az: number, bx: number, by: number, bz: number, cx: number, cy: number, cz: number,
  R: TriangleRule | null, depth: number): number {
  const mx = (ax + bx + cx) / 3, my = (ay + by + cy) / 3, mz = (az + bz + cz) / 3;
  const r = Math.sqrt(Math.max((ax - mx) ** 2 + (ay - my) ** 2 + (az - mz) ** 2,
    (bx - mx) ** 2 + (by - my) ** 2 + (bz - mz) ** 2, (cx - mx) ** 2 + (cy - my) ** 2 + (cz - mz) ** 2));
  const d = frameDistance(F, mx, my, mz);
  if (d >= ETA_SPLIT * r || depth >= NEAR_DEPTH) {
    let rule = RULE_NEAR;
    if (R !== null) rule = R;
    else for (let k = 0; k < NEAR_ETA.length; k++) if (d >= NEAR_ETA[k] * r) { rule = NEAR_RULES[k]; break; }
    return frameOuterOn(F, ax, ay, az, bx, by, bz, cx, cy, cz, rule);
  }
  const abx = 0.5 * (ax + bx), aby = 0.5 * (ay + by), abz = 0.5 * (az + bz);
  const bcx = 0.5 * (bx + cx), bcy = 0.5 * (by + cy), bcz = 0.5 * (bz + cz);
  const cax = 0.5 * (cx + ax), cay = 0.5 * (cy + ay), caz = 0.5 * (cz + az);
  const e = depth + 1;
  return 0.25 * (adaptiveOuter(F, ax, ay, az, abx, aby, abz, cax, cay, caz, R, e)
    + adaptiveOuter(F, abx, aby, abz, bx, by, bz, bcx, bcy, bcz, R, e)
    + adaptiveOuter(F, cax, cay, caz, bcx, bcy, bcz, cx, cy, cz, R, e)
    + adaptiveOuter(F, abx, aby, abz, bcx, bcy, bcz, cax, cay, caz, R, e));
}

/** Mean over the triangle (a, b, c) of I_j, T_j given by its frame. */
function frameOuterOn(F: Float64Array, ax: number, ay: number, az: number, bx: number, by: number, bz: number,
  cx: number, cy: number, cz: number, R: TriangleRule): number {
  let s = 0;
  const L1 = R.l1, L2 = R.l2, L3 = R.l3, W = R.w;
  for (let k = 0; k < R.n; k++) {
    const l1 = L1[k], l2 = L2[k], l3 = L3[k];
    s += W[k] * framePotential(F, l1 * ax + l2 * bx + l3 * cx, l1 * ay + l2 * by + l3 * cy, l1 * az + l2 * bz + l3 * cz);
  }
  return s;
}

/** Mean over the triangle (a, b, c) of I_j. */
function outerOn(v: Float64Array, oj: number, ax: number, ay: number, az: number, bx: number, by: number, bz: number,
  cx: number, cy: number, cz: number, R: TriangleRule): number {
  let s = 0;
  for (let k = 0; k < R.n; k++) {
    const l1 = R.l1[k], l2 = R.l2[k], l3 = R.l3[k];
    s += R.w[k] * trianglePotential(v, oj, l1 * ax + l2 * bx + l3 * cx, l1 * ay + l2 * by + l3 * cy, l1 * az + l2 * bz + l3 * cz);
  }
  return s;
}

/** Quadrature points of the second panel, laid out once per entry (module scratch, no allocation). */
const YS = new Float64Array(3 * 64);

/** The same rule on both panels: Σ_k Σ_l w_k w_l / |x_k − y_l|. */
export function doubleQuadrature(P: PanelSet, i: number, j: number, R: TriangleRule): number {
  const v = P.vertices, o = 9 * i, p = 9 * j;
  const ax = v[o], ay = v[o + 1], az = v[o + 2], bx = v[o + 3], by = v[o + 4], bz = v[o + 5], cx = v[o + 6], cy = v[o + 7], cz = v[o + 8];
  const dx = v[p], dy = v[p + 1], dz = v[p + 2], ex = v[p + 3], ey = v[p + 4], ez = v[p + 5], fx = v[p + 6], fy = v[p + 7], fz = v[p + 8];
  const n = R.n, L1 = R.l1, L2 = R.l2, L3 = R.l3, W = R.w, Y = YS;
  for (let m = 0; m < n; m++) {
    const m1 = L1[m], m2 = L2[m], m3 = L3[m];
    Y[3 * m] = m1 * dx + m2 * ex + m3 * fx; Y[3 * m + 1] = m1 * dy + m2 * ey + m3 * fy; Y[3 * m + 2] = m1 * dz + m2 * ez + m3 * fz;
  }
  let s = 0;
  for (let k = 0; k < n; k++) {
    const l1 = L1[k], l2 = L2[k], l3 = L3[k];
    const xx = l1 * ax + l2 * bx + l3 * cx, xy = l1 * ay + l2 * by + l3 * cy, xz = l1 * az + l2 * bz + l3 * cz;
    let t = 0;
    for (let m = 0; m < n; m++) {
      const rx = xx - Y[3 * m], ry = xy - Y[3 * m + 1], rz = xz - Y[3 * m + 2];
      t += W[m] / Math.sqrt(rx * rx + ry * ry + rz * rz);
    }
    s += W[k] * t;
  }
  return s;
}

/** farTerm without the third-order term: 1/d + (3 DᵀSD/d⁵ − tr S/d³)/2. */
export function quadrupoleTerm(P: PanelSet, i: number, j: number): number {
  const c = P.centroids, M = P.moments2;
  const dx = c[3 * i] - c[3 * j], dy = c[3 * i + 1] - c[3 * j + 1], dz = c[3 * i + 2] - c[3 * j + 2];
  const oi = 6 * i, oj = 6 * j;
  const sxx = M[oi] + M[oj], syy = M[oi + 1] + M[oj + 1], szz = M[oi + 2] + M[oj + 2];
  const sxy = M[oi + 3] + M[oj + 3], sxz = M[oi + 4] + M[oj + 4], syz = M[oi + 5] + M[oj + 5];
  const q = sxx * dx * dx + syy * dy * dy + szz * dz * dz + 2 * (sxy * dx * dy + sxz * dx * dz + syz * dy * dz);
  const inv = 1 / Math.sqrt(dx * dx + dy * dy + dz * dz), inv2 = inv * inv;
  return inv * (1 + 0.5 * inv2 * (3 * q * inv2 - (sxx + syy + szz)));
}

/**
 * Taylor expansion of 1/|D + a − b| about D = c_i − c_j, averaged over both panels (a, b the
 * offsets from the centroids): first-order terms vanish, the second-order term involves the
 * summed second moments S, the third the difference U of third moments:
 *   1/d + (3 DᵀSD/d⁵ − tr S/d³)/2 + (−15 U[D,D,D]/d⁷ + 9 (tr U)·D/d⁵)/6,
 * from ∂_a∂_b(1/r) = (3x_a x_b − r²δ_ab)/r⁵ and ∂_a∂_b∂_c(1/r) = −15x_a x_b x_c/r⁷ +
 * 3(x_a δ_bc + x_b δ_ac + x_c δ_ab)/r⁵ (common practice; textbook Cartesian multipoles).
 */
export function farTerm(P: PanelSet, i: number, j: number): number {
  const c = P.centroids, M = P.moments2, T = P.moments3, V = P.traces3;
  const dx = c[3 * i] - c[3 * j], dy = c[3 * i + 1] - c[3 * j + 1], dz = c[3 * i + 2] - c[3 * j + 2];
  const oi = 6 * i, oj = 6 * j;
  const sxx = M[oi] + M[oj], syy = M[oi + 1] + M[oj + 1], szz = M[oi + 2] + M[oj + 2];
  const sxy = M[oi + 3] + M[oj + 3], sxz = M[oi + 4] + M[oj + 4], syz = M[oi + 5] + M[oj + 5];
  const ti = 10 * i, tj = 10 * j;
  const uddd = (T[ti] - T[tj]) * dx * dx * dx + (T[ti + 1] - T[tj + 1]) * dy * dy * dy + (T[ti + 2] - T[tj + 2]) * dz * dz * dz
    + 3 * ((T[ti + 3] - T[tj + 3]) * dx * dx * dy + (T[ti + 4] - T[tj + 4]) * dx * dx * dz + (T[ti + 5] - T[tj + 5]) * dx * dy * dy
      + (T[ti + 6] - T[tj + 6]) * dy * dy * dz + (T[ti + 7] - T[tj + 7]) * dx * dz * dz + (T[ti + 8] - T[tj + 8]) * dy * dz * dz)
    + 6 * (T[ti + 9] - T[tj + 9]) * dx * dy * dz;
  const vd = (V[3 * i] - V[3 * j]) * dx + (V[3 * i + 1] - V[3 * j + 1]) * dy + (V[3 * i + 2] - V[3 * j + 2]) * dz;
  const q = sxx * dx * dx + syy * dy * dy + szz * dz * dz + 2 * (sxy * dx * dy + sxz * dx * dz + syz * dy * dz);
  const r2 = dx * dx + dy * dy + dz * dz;
  const inv = 1 / Math.sqrt(r2), inv2 = inv * inv;
  return inv * (1 + inv2 * (0.5 * (3 * q * inv2 - (sxx + syy + szz)) + inv2 * (-2.5 * uddd * inv2 + 1.5 * vd)));
}
