/**
 * Collocation entries of the single-layer operator for piecewise-constant panel charges:
 *   C_ij = (1/A_j) ∫_{T_j} 1/|x_i − y| dS(y),  x_i the centroid of panel i   (1/metre).
 * Not symmetric. The inner integral is the closed form of triangle-potential.ts everywhere
 * (it is exact on the panel itself, the self term included); beyond COLLOCATION_FAR radii of
 * T_j the Taylor expansion about c_j to third order replaces it (error measured in
 * tests/bem/collocation.test.ts below 1e-6 relative).
 */
import type { PanelSet } from "./panels.js";
import { trianglePotential } from "./triangle-potential.js";

/** Distance from c_j, in radii r_j, beyond which the Taylor expansion is used. */
export const COLLOCATION_FAR = 12;

/** C_ij (1/metre). */
export function collocationEntry(P: PanelSet, i: number, j: number): number {
  const c = P.centroids;
  const x = c[3 * i], y = c[3 * i + 1], z = c[3 * i + 2];
  const dx = x - c[3 * j], dy = y - c[3 * j + 1], dz = z - c[3 * j + 2];
  const rj = P.radii[j];
  if (dx * dx + dy * dy + dz * dz >= COLLOCATION_FAR * COLLOCATION_FAR * rj * rj) return collocationFar(P, i, j);
  return trianglePotential(P.vertices, 9 * j, x, y, z) / P.areas[j];
}

/**
 * Taylor expansion of 1/|D − b| about D = x_i − c_j averaged over T_j: the Galerkin farTerm
 * (galerkin.ts) with the moments of the point x_i set to zero, so ⟨w²⟩ = M_j, ⟨w³⟩ = −T_j.
 */
export function collocationFar(P: PanelSet, i: number, j: number): number {
  const c = P.centroids, M = P.moments2, T = P.moments3, V = P.traces3;
  const dx = c[3 * i] - c[3 * j], dy = c[3 * i + 1] - c[3 * j + 1], dz = c[3 * i + 2] - c[3 * j + 2];
  const oj = 6 * j, tj = 10 * j;
  const sxx = M[oj], syy = M[oj + 1], szz = M[oj + 2], sxy = M[oj + 3], sxz = M[oj + 4], syz = M[oj + 5];
  const uddd = -(T[tj] * dx * dx * dx + T[tj + 1] * dy * dy * dy + T[tj + 2] * dz * dz * dz
    + 3 * (T[tj + 3] * dx * dx * dy + T[tj + 4] * dx * dx * dz + T[tj + 5] * dx * dy * dy
      + T[tj + 6] * dy * dy * dz + T[tj + 7] * dx * dz * dz + T[tj + 8] * dy * dz * dz)
    + 6 * T[tj + 9] * dx * dy * dz);
  const vd = -(V[3 * j] * dx + V[3 * j + 1] * dy + V[3 * j + 2] * dz);
  const q = sxx * dx * dx + syy * dy * dy + szz * dz * dz + 2 * (sxy * dx * dy + sxz * dx * dz + syz * dy * dz);
  const inv = 1 / Math.sqrt(dx * dx + dy * dy + dz * dz), inv2 = inv * inv;
  return inv * (1 + inv2 * (0.5 * (3 * q * inv2 - (sxx + syy + szz)) + inv2 * (-2.5 * uddd * inv2 + 1.5 * vd)));
}
