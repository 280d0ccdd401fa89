/**
 * The conductors at their working potentials in the dielectric model (./dielectric-model.ts):
 * panel charges, σ, fields and forces; the model without dielectrics is ./excitation.ts.
 */
import type { PanelSet } from "../bem/panels.js";
import { fieldAt } from "../bem/field.js";
import type { ImageSet } from "../bem/images.js";
import type { PanelExcitation } from "./excitation.js";
import { EPSILON_0 } from "./constants.js";
import type { DielectricModel } from "./dielectric-model.js";

export interface DielectricExcitation {
  excitation: PanelExcitation;
  /** Net force per conductor, 3 each; newtons. */
  force: Float64Array;
  /** Polarisation charge per interface panel at the working potentials; coulombs. */
  interfaceCharge: Float64Array;
}

/**
 * The conductors at their working potentials in the dielectric model. Fields: closed panels
 * |σ_total|/ε0 (= |σ_free|/ε_local); open sheets the stronger face |E_pv·n̂ ± σ_total/(2ε0)|.
 * Forces: Maxwell stress ε E_n²/2 along the outward normal of each face in its own medium
 * (common practice for a conductor in a linear fluid dielectric; electrostriction and forces on
 * the dielectric bodies themselves are not included).
 */
export function dielectricExcitation(model: DielectricModel, P: PanelSet, x: Float64Array, k: number, potentials: ArrayLike<number>,
  conductorOf: Uint32Array, nConductors: number, images?: ImageSet, normalField?: Float64Array): DielectricExcitation {
  const nc = model.nc, N = P.n;
  const fourPiEps0 = 4 * Math.PI * EPSILON_0;
  const total = new Float64Array(N);
  for (let p = 0; p < N; p++) {
    let s = 0;
    for (let j = 0; j < k; j++) s += x[p * k + j] * potentials[j];
    total[p] = fourPiEps0 * s;
  }
  const charge = new Float64Array(nc), sigma = new Float64Array(nc), field = new Float64Array(nc);
  const force = new Float64Array(3 * nConductors);
  const point = new Float64Array(3), e = new Float64Array(3);
  for (let p = 0; p < nc; p++) {
    const A = P.areas[p], st = total[p] / A, nx = P.normals[3 * p], ny = P.normals[3 * p + 1], nz = P.normals[3 * p + 2];
    const ep = model.conductorPlus[p], em = model.conductorMinus[p];
    let f: number, sf: number, fn: number;
    if (!model.openPanel[p]) {
      const E = st / EPSILON_0;
      f = Math.abs(E); sf = ep * st; fn = 0.5 * ep * EPSILON_0 * E * E;
    } else {
      let En: number;
      if (normalField !== undefined && ep !== em) {
        // Σ_q K_pq total_q/(4πε0) = Σ_j V_j Σ_q K_pq x_qj.
        En = 0;
        for (let j = 0; j < k; j++) En += normalField[p * k + j] * potentials[j];
      } else {
        point[0] = P.centroids[3 * p]; point[1] = P.centroids[3 * p + 1]; point[2] = P.centroids[3 * p + 2];
        fieldAt(P, total, point, e, images);
        En = (e[0] * nx + e[1] * ny + e[2] * nz) / fourPiEps0;
      }
      const Ep = En + st / (2 * EPSILON_0), Em = En - st / (2 * EPSILON_0);
      f = Math.max(Math.abs(Ep), Math.abs(Em));
      sf = EPSILON_0 * (ep * Ep - em * Em);
      fn = 0.5 * EPSILON_0 * (ep * Ep * Ep - em * Em * Em);
    }
    charge[p] = sf * A; sigma[p] = sf; field[p] = f;
    const c = conductorOf[p];
    force[3 * c] += fn * A * nx; force[3 * c + 1] += fn * A * ny; force[3 * c + 2] += fn * A * nz;
  }
  return { excitation: { charge, sigma, field }, force, interfaceCharge: total.slice(nc) };
}
