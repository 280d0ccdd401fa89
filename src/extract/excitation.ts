/**
 * The conductors at their working potentials: panel charges, surface charge density,
 * the normal surface field, its peak on each conductor, stored energy and forces.
 *
 * Just outside a conductor the field is normal to the surface and its strength is
 * |E| = |σ_face| / ε, with σ_face the charge density on that face (Gauss's law at a
 * conductor surface). On a closed body all the charge of a panel sits on its outer face.
 * On an open sheet the unknown σ is the sum of both faces' charge; the two faces carry
 * σ± = σ/2 ± ε E_pv·n, with E_pv the principal-value (two-sided average) normal field
 * of all the other charge, so |E| on the stronger face is |σ|/(2ε) + |E_pv·n|.
 * The force on a conductor is ∫ σ E_pv dA, which for a closed body (E inside = 0, so
 * E_pv = σ/(2ε) n) is the classical ∫ σ²/(2ε) n dA (Maxwell stress at a conductor surface).
 */
import type { PanelSet } from "../bem/panels.js";

export interface PanelExcitation {
  /** Panel charges; coulombs. */
  charge: Float64Array;
  /** Surface charge density σ (sum of both faces on sheets); C/m². */
  sigma: Float64Array;
  /** Normal field strength at the stronger face; V/m. */
  field: Float64Array;
}

/** Superpose the unit solutions: charge = 4πε · x · V. x is n×k row-major. */
export function panelExcitation(
  x: Float64Array, k: number, P: PanelSet, potentials: ArrayLike<number>, permittivity: number /* F/m, absolute */,
  openPanel: Uint8Array, normalFieldPv?: Float64Array /* V/m per panel, for open sheets */,
): PanelExcitation {
  const n = P.n;
  const fourPiEps = 4 * Math.PI * permittivity;
  const charge = new Float64Array(n), sigma = new Float64Array(n), field = new Float64Array(n);
  for (let p = 0; p < n; p++) {
    let s = 0;
    for (let j = 0; j < k; j++) s += x[p * k + j] * potentials[j];
    const q = fourPiEps * s;
    charge[p] = q;
    const sg = q / P.areas[p];
    sigma[p] = sg;
    if (openPanel[p] && normalFieldPv) field[p] = Math.abs(sg) / (2 * permittivity) + Math.abs(normalFieldPv[p]);
    else if (openPanel[p]) field[p] = Math.abs(sg) / permittivity; // bound: both faces' charge on one face
    else field[p] = Math.abs(sg) / permittivity;
  }
  return { charge, sigma, field };
}

export interface PeakField {
  /** V/m. */
  value: number;
  /** Panel index. */
  panel: number;
  /** Centroid of that panel; metres. */
  at: [number, number, number];
}

/** Peak normal field on each conductor. */
export function peakFields(field: Float64Array, conductorOf: Uint32Array, k: number, P: PanelSet): PeakField[] {
  const best = new Int32Array(k).fill(-1);
  for (let p = 0; p < field.length; p++) {
    const c = conductorOf[p];
    if (best[c] < 0 || field[p] > field[best[c]]) best[c] = p;
  }
  return Array.from(best, (p) => p < 0
    ? { value: NaN, panel: -1, at: [NaN, NaN, NaN] as [number, number, number] }
    : { value: field[p], panel: p, at: [P.centroids[3 * p], P.centroids[3 * p + 1], P.centroids[3 * p + 2]] as [number, number, number] });
}

/**
 * Net force on each conductor; newtons, 3 per conductor.
 * Closed panels use σ²/(2ε) n; open-sheet panels σ·E_pv, which needs `fieldPv`
 * (3 per panel, V/m); without it their contribution is left out and `complete` is false.
 */
export function conductorForces(
  sigma: Float64Array, P: PanelSet, conductorOf: Uint32Array, k: number, permittivity: number,
  openPanel: Uint8Array, fieldPv?: Float64Array,
): { force: Float64Array; complete: boolean } {
  const force = new Float64Array(3 * k);
  let complete = true;
  for (let p = 0; p < P.n; p++) {
    const c = conductorOf[p], a = P.areas[p], s = sigma[p];
    if (!openPanel[p]) {
      const f = (s * s) / (2 * permittivity) * a;
      force[3 * c] += f * P.normals[3 * p];
      force[3 * c + 1] += f * P.normals[3 * p + 1];
      force[3 * c + 2] += f * P.normals[3 * p + 2];
    } else if (fieldPv) {
      force[3 * c] += s * a * fieldPv[3 * p];
      force[3 * c + 1] += s * a * fieldPv[3 * p + 1];
      force[3 * c + 2] += s * a * fieldPv[3 * p + 2];
    } else complete = false;
  }
  return { force, complete };
}

/**
 * A conductor's net force is the small sum of large panel forces that cancel (exactly, by
 * symmetry, on a sphere alone or centred in a shell); what is left after a solve to a relative
 * residual of about 1e-6 is noise. A net force below this fraction of the sum of its panels'
 * force magnitudes is not resolved. One rule for every conductor, whatever surrounds it.
 */
export const FORCE_RESOLUTION = 1e-5;

/** Per conductor, FORCE_RESOLUTION × Σ ½ ε E² A over its panels (E the panel's field); N. */
export function forceResolutions(field: Float64Array, P: PanelSet, conductorOf: Uint32Array, k: number, permittivity: number): Float64Array {
  const out = new Float64Array(k);
  for (let p = 0; p < P.n; p++) out[conductorOf[p]] += 0.5 * permittivity * field[p] * field[p] * P.areas[p];
  for (let c = 0; c < k; c++) out[c] *= FORCE_RESOLUTION;
  return out;
}

/** Per conductor, the panel where the field comes closest to the breakdown strength of the medium there. */
export interface CriticalField {
  /** Largest field / strength over the conductor's panels. */
  ratio: number;
  /** Panel index (−1 for a conductor without panels). */
  panel: number;
  /** Field there; V/m. */
  field: number;
  /** Index of the medium there (caller's numbering; −1 the background). */
  medium: number;
  /** Breakdown strength of that medium; V/m. */
  strength: number;
  /** Centroid of the panel; metres. */
  at: [number, number, number];
}

/**
 * The field check per medium: each panel's field against the strength of the medium just
 * outside it. `mediumOf(p)` gives the medium index of panel p and `strengthOf(m)` its strength
 * (V/m); on open sheets the caller passes the weaker of the two faces' media.
 */
export function criticalFields(field: Float64Array, conductorOf: Uint32Array, k: number, P: PanelSet,
  mediumOf: (panel: number) => number, strengthOf: (medium: number) => number): CriticalField[] {
  const best = new Int32Array(k).fill(-1), ratio = new Float64Array(k).fill(-Infinity), med = new Int32Array(k);
  for (let p = 0; p < field.length; p++) {
    const c = conductorOf[p], m = mediumOf(p), r = field[p] / strengthOf(m);
    if (best[c] < 0 || r > ratio[c]) { best[c] = p; ratio[c] = r; med[c] = m; }
  }
  return Array.from(best, (p, c) => p < 0
    ? { ratio: NaN, panel: -1, field: NaN, medium: -1, strength: strengthOf(-1), at: [NaN, NaN, NaN] as [number, number, number] }
    : {
        ratio: ratio[c], panel: p, field: field[p], medium: med[c], strength: strengthOf(med[c]),
        at: [P.centroids[3 * p], P.centroids[3 * p + 1], P.centroids[3 * p + 2]] as [number, number, number],
      });
}
