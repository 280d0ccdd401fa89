/**
 * Potential and electric field of piecewise-constant panel charges, at arbitrary points.
 * Panel j carries charge q_j (coulombs) spread uniformly over area A_j. Results leave out the
 * factor 1/(4πε): the potential is Σ_j (q_j/A_j) I_j(x) (C/m) and the field −Σ_j (q_j/A_j) ∇I_j(x)
 * (C/m²); multiply by 1/(4πε) for volts and V/m.
 *
 * Near a panel the closed forms of triangle-potential.ts are used (exact, including points on
 * or next to the surface); beyond FIELD_FAR radii the potential uses the third-order Taylor
 * expansion about the centroid (as collocation.ts) and the field a degree-5 Dunavant rule.
 * Measured against the all-analytic sums in tests/bem/field.test.ts: ≤ 1e-6 relative.
 */
import type { PanelSet } from "./panels.js";
import { trianglePotential, trianglePotentialGradient } from "./triangle-potential.js";
import { dunavantRule } from "./dunavant.js";
import type { ImageSet } from "./images.js";

/** Distance from c_j, in radii r_j, beyond which the cheap far forms are used. */
export const FIELD_FAR = 12;
const FAR_RULE = dunavantRule(5);
const grad = new Float64Array(3);

/**
 * out[k] = Σ_j (q_j/A_j) ∫_{T_j} dS/|x_k − y|, points 3 per point (metres); C/m before 1/(4πε).
 * With `images` (images.ts) each panel's mirror images carry s_e q_j as well.
 */
export function potentialAt(P: PanelSet, q: Float64Array, points: Float64Array, out: Float64Array, images?: ImageSet): void {
  const np = points.length / 3;
  checkImages(P, images);
  for (let k = 0; k < np; k++) {
    const px = points[3 * k], py = points[3 * k + 1], pz = points[3 * k + 2];
    let s = potentialSum(P, q, 0, px, py, pz);
    if (images !== undefined) for (let e = 0; e < images.count; e++) s += images.signs[e] * potentialSum(images.panels, q, images.n * (e + 1), px, py, pz);
    out[k] = s;
  }
}

/** Σ_j (q_j/A_j) I_{off+j}(x) over the q.length panels of S starting at index off. */
function potentialSum(S: PanelSet, q: Float64Array, off: number, px: number, py: number, pz: number): number {
  const n = q.length;
  const c = S.centroids, M = S.moments2, T = S.moments3, V = S.traces3, rad = S.radii, A = S.areas, v = S.vertices;
  const far2 = FIELD_FAR * FIELD_FAR;
  let s = 0;
  for (let jj = 0; jj < n; jj++) {
    const qj = q[jj];
    if (qj === 0) continue;
    const j = off + jj;
    const dx = px - c[3 * j], dy = py - c[3 * j + 1], dz = pz - c[3 * j + 2];
    const r2 = dx * dx + dy * dy + dz * dz, rj = rad[j];
    if (r2 < far2 * rj * rj) { s += (qj / A[j]) * trianglePotential(v, 9 * j, px, py, pz); continue; }
    // Taylor expansion of 1/|D − b| about D = x − c_j (see collocation.ts collocationFar).
    const oj = 6 * j, tj = 10 * j;
    const sxx = M[oj], syy = M[oj + 1], szz = M[oj + 2], sxy = M[oj + 3], sxz = M[oj + 4], syz = M[oj + 5];
    const uddd = -(T[tj] * dx * dx * dx + T[tj + 1] * dy * dy * dy + T[tj + 2] * dz * dz * dz
      + 3 * (T[tj + 3] * dx * dx * dy + T[tj + 4] * dx * dx * dz + T[tj + 5] * dx * dy * dy
        + T[tj + 6] * dy * dy * dz + T[tj + 7] * dx * dz * dz + T[tj + 8] * dy * dz * dz)
      + 6 * T[tj + 9] * dx * dy * dz);
    const vd = -(V[3 * j] * dx + V[3 * j + 1] * dy + V[3 * j + 2] * dz);
    const qq = sxx * dx * dx + syy * dy * dy + szz * dz * dz + 2 * (sxy * dx * dy + sxz * dx * dz + syz * dy * dz);
    const inv = 1 / Math.sqrt(r2), inv2 = inv * inv;
    s += qj * inv * (1 + inv2 * (0.5 * (3 * qq * inv2 - (sxx + syy + szz)) + inv2 * (-2.5 * uddd * inv2 + 1.5 * vd)));
  }
  return s;
}

/**
 * out[3k..3k+2] = −Σ_j (q_j/A_j) ∇I_j(x_k) (C/m² before 1/(4πε)). On a panel's own plane the
 * normal part of that panel's contribution is its principal value (the mean of the two sides);
 * the in-plane part is log-singular on panel edges. With `images`, the mirror charges are added.
 */
export function fieldAt(P: PanelSet, q: Float64Array, points: Float64Array, out: Float64Array, images?: ImageSet): void {
  const np = points.length / 3;
  checkImages(P, images);
  for (let k = 0; k < np; k++) {
    const px = points[3 * k], py = points[3 * k + 1], pz = points[3 * k + 2];
    E[0] = 0; E[1] = 0; E[2] = 0;
    fieldSum(E, P, q, 0, 1, px, py, pz);
    if (images !== undefined) for (let e = 0; e < images.count; e++) fieldSum(E, images.panels, q, images.n * (e + 1), images.signs[e], px, py, pz);
    out[3 * k] = E[0]; out[3 * k + 1] = E[1]; out[3 * k + 2] = E[2];
  }
}
const E = new Float64Array(3);

/** acc += −Σ_j sign (q_j/A_j) ∇I_{off+j}(x) over the q.length panels of S starting at off. */
function fieldSum(acc: Float64Array, S: PanelSet, q: Float64Array, off: number, sign: number, px: number, py: number, pz: number): void {
  const n = q.length;
  const c = S.centroids, rad = S.radii, A = S.areas, v = S.vertices;
  const R = FAR_RULE, L1 = R.l1, L2 = R.l2, L3 = R.l3, W = R.w, nr = R.n;
  const far2 = FIELD_FAR * FIELD_FAR;
  let ex = 0, ey = 0, ez = 0;
  for (let jj = 0; jj < n; jj++) {
    const qj = q[jj];
    if (qj === 0) continue;
    const j = off + jj;
    const dx = px - c[3 * j], dy = py - c[3 * j + 1], dz = pz - c[3 * j + 2];
    const r2 = dx * dx + dy * dy + dz * dz, rj = rad[j];
    if (r2 < far2 * rj * rj) {
      trianglePotentialGradient(grad, 0, v, 9 * j, px, py, pz);
      const s = qj / A[j];
      ex -= s * grad[0]; ey -= s * grad[1]; ez -= s * grad[2];
      continue;
    }
    const o = 9 * j;
    const ax = v[o], ay = v[o + 1], az = v[o + 2], bx = v[o + 3], by = v[o + 4], bz = v[o + 5], cx = v[o + 6], cy = v[o + 7], cz = v[o + 8];
    for (let m = 0; m < nr; m++) {
      const rx = px - (L1[m] * ax + L2[m] * bx + L3[m] * cx);
      const ry = py - (L1[m] * ay + L2[m] * by + L3[m] * cy);
      const rz = pz - (L1[m] * az + L2[m] * bz + L3[m] * cz);
      const ir = 1 / Math.sqrt(rx * rx + ry * ry + rz * rz);
      const w = qj * W[m] * ir * ir * ir;
      ex += w * rx; ey += w * ry; ez += w * rz;
    }
  }
  acc[0] += sign * ex; acc[1] += sign * ey; acc[2] += sign * ez;
}

function checkImages(P: PanelSet, images: ImageSet | undefined): void {
  if (images !== undefined && images.n !== P.n) throw new Error(`image set is for ${images.n} panels, the panel set has ${P.n}`);
}

/**
 * Normal field at each panel centroid, the principal value E_avg·n̂_i = mean of the two sides'
 * normal fields (C/m² before 1/(4πε)). The one-sided values are E_avg·n̂ ± 2π q_i/A_i (the jump
 * σ/ε, times 4πε); the force density on a charged sheet is σ·E_avg (common practice: the
 * self-field of a surface charge exerts no net force on itself).
 */
export function principalValueNormalField(P: PanelSet, q: Float64Array, out: Float64Array, images?: ImageSet): void {
  const n = P.n, c = P.centroids, nm = P.normals;
  const e = new Float64Array(3);
  const one = new Float64Array(3);
  for (let i = 0; i < n; i++) {
    one[0] = c[3 * i]; one[1] = c[3 * i + 1]; one[2] = c[3 * i + 2];
    fieldAt(P, q, one, e, images);
    out[i] = e[0] * nm[3 * i] + e[1] * nm[3 * i + 1] + e[2] * nm[3 * i + 2];
  }
}

/**
 * The point ladder of unitField, by distance from c_j in radii r_j (the same rungs and errors
 * as interface.ts normalFieldAt, measured in tests/bem/interface-ladder.test.ts): the closed
 * form below UNIT_FIELD_RULE, the degree-5 Dunavant rule below UNIT_FIELD_TAYLOR, the
 * third-order Taylor expansion about c_j beyond (≤ 5e-6 of 1/|x − c_j|² at every rung).
 */
export const UNIT_FIELD_RULE = 5;
export const UNIT_FIELD_TAYLOR = 14;

/**
 * out[o..o+2] = −∇I_j(x)/A_j for panel j of S (1/m²): the field of a unit charge spread over
 * T_j, before 1/(4πε). On T_j's plane the normal part is the principal value.
 */
export function unitField(S: PanelSet, j: number, px: number, py: number, pz: number, out: Float64Array, o: number): void {
  const c = S.centroids, v = S.vertices;
  const dx = px - c[3 * j], dy = py - c[3 * j + 1], dz = pz - c[3 * j + 2];
  const r2 = dx * dx + dy * dy + dz * dz, rj = S.radii[j];
  if (r2 < UNIT_FIELD_RULE * UNIT_FIELD_RULE * rj * rj) {
    trianglePotentialGradient(grad, 0, v, 9 * j, px, py, pz);
    const ia = -1 / S.areas[j];
    out[o] = ia * grad[0]; out[o + 1] = ia * grad[1]; out[o + 2] = ia * grad[2];
    return;
  }
  if (r2 < UNIT_FIELD_TAYLOR * UNIT_FIELD_TAYLOR * rj * rj) {
    const b = 9 * j;
    const ax = v[b], ay = v[b + 1], az = v[b + 2], bx = v[b + 3], by = v[b + 4], bz = v[b + 5], cx = v[b + 6], cy = v[b + 7], cz = v[b + 8];
    const R = FAR_RULE, L1 = R.l1, L2 = R.l2, L3 = R.l3, W = R.w;
    let ex = 0, ey = 0, ez = 0;
    for (let m = 0; m < R.n; m++) {
      const rx = px - (L1[m] * ax + L2[m] * bx + L3[m] * cx);
      const ry = py - (L1[m] * ay + L2[m] * by + L3[m] * cy);
      const rz = pz - (L1[m] * az + L2[m] * bz + L3[m] * cz);
      const ir = 1 / Math.sqrt(rx * rx + ry * ry + rz * rz);
      const w = W[m] * ir * ir * ir;
      ex += w * rx; ey += w * ry; ez += w * rz;
    }
    out[o] = ex; out[o + 1] = ey; out[o + 2] = ez;
    return;
  }
  // interface.ts taylorGalerkin with a point target (S = M_j, U = −T_j, t = −traces of T_j),
  // written for the whole vector: the expression there is n̂·F(d).
  const M = S.moments2, T = S.moments3, V = S.traces3, oj = 6 * j, tj = 10 * j;
  const sxx = M[oj], syy = M[oj + 1], szz = M[oj + 2], sxy = M[oj + 3], sxz = M[oj + 4], syz = M[oj + 5];
  const u0 = -T[tj], u1 = -T[tj + 1], u2 = -T[tj + 2], u3 = -T[tj + 3], u4 = -T[tj + 4], u5 = -T[tj + 5], u6 = -T[tj + 6];
  const u7 = -T[tj + 7], u8 = -T[tj + 8], u9 = -T[tj + 9];
  const tx = -V[3 * j], ty = -V[3 * j + 1], tz = -V[3 * j + 2];
  const inv2 = 1 / r2, inv = Math.sqrt(inv2), inv3 = inv * inv2;
  const sdx = sxx * dx + sxy * dy + sxz * dz, sdy = sxy * dx + syy * dy + syz * dz, sdz = sxz * dx + syz * dy + szz * dz;
  const q = dx * sdx + dy * sdy + dz * sdz, tr = sxx + syy + szz;
  const gx = u0 * dx * dx + u5 * dy * dy + u7 * dz * dz + 2 * (u3 * dx * dy + u4 * dx * dz + u9 * dy * dz);
  const gy = u3 * dx * dx + u1 * dy * dy + u8 * dz * dz + 2 * (u5 * dx * dy + u9 * dx * dz + u6 * dy * dz);
  const gz = u4 * dx * dx + u6 * dy * dy + u2 * dz * dz + 2 * (u9 * dx * dy + u7 * dx * dz + u8 * dy * dz);
  const uddd = gx * dx + gy * dy + gz * dz, td = tx * dx + ty * dy + tz * dz;
  // F = d/r³ − (3 S·d + 1.5 tr S d + 1.5 t)/r⁵ + 7.5 (q d + g + (t·d) d)/r⁷ − 17.5 U(d,d,d) d/r⁹.
  const kd = inv3 * (1 + inv2 * (-1.5 * tr + inv2 * (7.5 * q + 7.5 * td - 17.5 * uddd * inv2)));
  const k1 = inv3 * inv2, k2 = 7.5 * inv3 * inv2 * inv2;
  out[o] = kd * dx - k1 * (3 * sdx + 1.5 * tx) + k2 * gx;
  out[o + 1] = kd * dy - k1 * (3 * sdy + 1.5 * ty) + k2 * gy;
  out[o + 2] = kd * dz - k1 * (3 * sdz + 1.5 * tz) + k2 * gz;
}
