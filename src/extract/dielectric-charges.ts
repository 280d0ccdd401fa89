/**
 * Free charge on the conductor panels of the dielectric model (./dielectric-model.ts). Free
 * charge on a conductor panel is its total charge times ε_local/ε0, ε_local the permittivity of
 * the medium just outside it (Gauss's law at the conductor surface: the displacement there is
 * σ_free, the field σ_total/ε0).
 */
import type { PanelSet } from "../bem/panels.js";
import { normalFieldAt } from "../bem/interface.js";
import type { ImageSet } from "../bem/images.js";
import type { DielectricModel } from "./dielectric-model.js";

/**
 * Free charge per conductor panel from the total-charge solution (scaled unknowns x = q/(4πε0),
 * N×k row-major over all panels; only the first nc rows are returned, same scaling). Closed
 * panels: ε_out/ε0 times the total. Open sheets with different media on their faces: each face's
 * total charge is σ/2 ± ε0 E_pv·n̂ (excitation.ts), so free = (ε+ + ε−)/2 σ + (ε+ − ε−) ε0 E_pv·n̂,
 * with E_pv·n̂ from all panels (bem/interface.ts), or from `normalField` (nc×k, Σ_q K_pq x_q at the
 * panels openFieldPanels flags; the compressed solver computes it, solve.ts) when given.
 */
export function freeCharges(model: DielectricModel, P: PanelSet, x: Float64Array, k: number, images?: ImageSet,
  normalField?: Float64Array): Float64Array {
  const nc = model.nc, N = P.n;
  const out = new Float64Array(nc * k);
  const en = new Float64Array(k);
  for (let p = 0; p < nc; p++) {
    const ep = model.conductorPlus[p], em = model.conductorMinus[p];
    if (!model.openPanel[p] || ep === em) {
      for (let j = 0; j < k; j++) out[p * k + j] = ep * x[p * k + j];
      continue;
    }
    if (normalField !== undefined) {
      const a4 = P.areas[p] / (4 * Math.PI);
      for (let j = 0; j < k; j++) out[p * k + j] = 0.5 * (ep + em) * x[p * k + j] + (ep - em) * a4 * normalField[p * k + j];
      continue;
    }
    en.fill(0);
    const c = P.centroids, nm = P.normals;
    const px = c[3 * p], py = c[3 * p + 1], pz = c[3 * p + 2], nx = nm[3 * p], ny = nm[3 * p + 1], nz = nm[3 * p + 2];
    for (let q = 0; q < N; q++) {
      if (q === p) continue;
      const K = normalFieldAt(P, q, px, py, pz, nx, ny, nz);
      for (let j = 0; j < k; j++) en[j] += K * x[q * k + j];
    }
    if (images !== undefined) {
      for (let e = 0; e < images.count; e++) for (let q = 0; q < N; q++) {
        const K = images.signs[e] * normalFieldAt(images.panels, N * (e + 1) + q, px, py, pz, nx, ny, nz);
        for (let j = 0; j < k; j++) en[j] += K * x[q * k + j];
      }
    }
    // E_pv·n̂ = Σ K x (V/m per 1/(4πε0)·4πε0); in x units ε0 E_pv A/(4πε0 ... ) = A Σ K x / (4π).
    const a4 = P.areas[p] / (4 * Math.PI);
    for (let j = 0; j < k; j++) out[p * k + j] = 0.5 * (ep + em) * x[p * k + j] + (ep - em) * a4 * en[j];
  }
  return out;
}

/** Conductor panels whose free charge needs E_pv·n̂: open sheets with different media on their faces (1; nc flags). */
export function openFieldPanels(model: DielectricModel): Uint8Array {
  const f = new Uint8Array(model.nc);
  for (let p = 0; p < model.nc; p++) f[p] = model.openPanel[p] && model.conductorPlus[p] !== model.conductorMinus[p] ? 1 : 0;
  return f;
}
