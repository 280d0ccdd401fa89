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
 * interface panels: collocation +5.0e-2 / +3.3e-2, Galerkin test −1.1e-2 / −2.2e-3. Point
 * matching at the centroid of a flat facet misses the tilt of its neighbours' field across the
 * facet; the Galerkin test converges like h² and is the default (extract.ts).
 */
import type { PanelSet } from "./panels.js";
import type { ImageSet } from "./images.js";
import { trianglePotentialGradient, PLANE_TOLERANCE } from "./triangle-potential.js";
import { dunavantRule, type TriangleRule } from "./dunavant.js";

export type InterfaceTesting = "collocation" | "galerkin";

/** Beyond this distance from c_j, in radii r_j, the gradient integral uses FAR_RULE (as field.ts). */
export const NORMAL_FIELD_FAR = 12;
/** Degree-5 Dunavant rule on far sources: field.ts measures ≤ 1e-6 relative for it beyond 12 radii. */
const FAR_RULE = dunavantRule(5);
/** Outer rule of the Galerkin test and the distance (radii of both panels) below which T_i is split. */
const OUTER_RULE = dunavantRule(6);
const OUTER_NEAR = 3;
export const GALERKIN_SPLIT = 2;
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
  if (r2 < NORMAL_FIELD_FAR * NORMAL_FIELD_FAR * rj * rj) {
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
 * Pairs nearer than OUTER_NEAR summed radii use OUTER_RULE on the 4^GALERKIN_SPLIT midpoint
 * sub-triangles of T_i (the integrand is log-singular along an edge shared with a non-coplanar
 * T_j, and the split keeps that error local); farther pairs take the centroid value, as
 * collocation does. Measured on the coated sphere (tests/reference/dielectric.test.ts; a = 1,
 * b = 2, εr = 4, 1280 + 1280 panels): the centroid-only far part changes C by 3e-4 against
 * the outer rule everywhere (−2.2e-3 vs −1.9e-3 from the exact value), while collocation of
 * the near pairs too leaves +3.3e-2: the near pairs decide the accuracy.
 */
export function normalFieldGalerkinEntry(P: PanelSet, i: number, j: number, images?: { S: PanelSet; j: number }): number {
  if (i === j && images === undefined) return 0;
  const S = images ? images.S : P, js = images ? images.j : j;
  const c = P.centroids, v = P.vertices, nm = P.normals, o = 9 * i;
  const dx = c[3 * i] - S.centroids[3 * js], dy = c[3 * i + 1] - S.centroids[3 * js + 1], dz = c[3 * i + 2] - S.centroids[3 * js + 2];
  const rs = P.radii[i] + S.radii[js];
  const d2 = dx * dx + dy * dy + dz * dz;
  if (d2 >= OUTER_NEAR * OUTER_NEAR * rs * rs) return normalFieldAt(S, js, c[3 * i], c[3 * i + 1], c[3 * i + 2], nm[3 * i], nm[3 * i + 1], nm[3 * i + 2]);
  return outerMean(S, js, nm[3 * i], nm[3 * i + 1], nm[3 * i + 2],
    v[o], v[o + 1], v[o + 2], v[o + 3], v[o + 4], v[o + 5], v[o + 6], v[o + 7], v[o + 8], OUTER_RULE, GALERKIN_SPLIT);
}

function outerMean(S: PanelSet, j: number, nx: number, ny: number, nz: number,
  ax: number, ay: number, az: number, bx: number, by: number, bz: number, cx: number, cy: number, cz: number,
  R: TriangleRule, depth: number): number {
  if (depth === 0) {
    let s = 0;
    for (let m = 0; m < R.n; m++) {
      const l1 = R.l1[m], l2 = R.l2[m], l3 = R.l3[m];
      s += R.w[m] * normalFieldAt(S, j, l1 * ax + l2 * bx + l3 * cx, l1 * ay + l2 * by + l3 * cy, l1 * az + l2 * bz + l3 * cz, nx, ny, nz);
    }
    return s;
  }
  const abx = 0.5 * (ax + bx), aby = 0.5 * (ay + by), abz = 0.5 * (az + bz);
  const bcx = 0.5 * (bx + cx), bcy = 0.5 * (by + cy), bcz = 0.5 * (bz + cz);
  const cax = 0.5 * (cx + ax), cay = 0.5 * (cy + ay), caz = 0.5 * (cz + az);
  const e = depth - 1;
  return 0.25 * (outerMean(S, j, nx, ny, nz, ax, ay, az, abx, aby, abz, cax, cay, caz, R, e)
    + outerMean(S, j, nx, ny, nz, abx, aby, abz, bx, by, bz, bcx, bcy, bcz, R, e)
    + outerMean(S, j, nx, ny, nz, cax, cay, caz, bcx, bcy, bcz, cx, cy, cz, R, e)
    + outerMean(S, j, nx, ny, nz, abx, aby, abz, bcx, bcy, bcz, cax, cay, caz, R, e));
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

/** Worker task: interfaceRows over [a0, a1); returns the row count. */
export function interfaceRowsTask(P: PanelSet, rows: Uint32Array, lambda: Float64Array, a0: number, a1: number, out: Float64Array,
  testing: InterfaceTesting, images?: ImageSet): number {
  interfaceRows(P, rows, lambda, a0, a1, out, testing, images);
  return a1 - a0;
}
