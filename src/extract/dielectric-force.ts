/**
 * Net electrostatic force on each dielectric body from the total-charge solution.
 *
 * Every charge radiates in vacuum (dielectric-model.ts), so the Maxwell stress of vacuum integrated
 * over a surface S just outside a body equals the force on the charge S encloses: the body's
 * interface charge (total = polarisation of the body and of the medium next to it) in the field
 * of all other charge, since a charge distribution exerts no net force on itself. In a linear
 * fluid of relative permittivity ε_out around the body the stress is ε_out times vacuum's, so
 *   F = ε_out Σ_{i ∈ body} q_i E_ext(c_i),
 * E_ext the field of the conductors, the other bodies and every mirror image (the body's own
 * images included) at the panel centroids (Maxwell stress in a fluid dielectric without
 * electrostriction: common practice, e.g. Jackson, Classical Electrodynamics, 3rd ed., §4.7,
 * and Landau & Lifshitz, Electrodynamics of Continuous Media, §15). The force is given only for
 * bodies whose whole surface faces one medium and touches no conductor or other body (a contact
 * force is not an electrostatic result); others get null.
 */
import type { PanelSet } from "../bem/panels.js";
import type { ImageSet } from "../bem/images.js";
import { fieldAt } from "../bem/field.js";
import type { DielectricModel } from "./dielectric-model.js";
import { EPSILON_0 } from "./constants.js";

/**
 * Force on each body (N, [Fx, Fy, Fz]) or null where it is not defined (see the header).
 * P: all panels of the model (conductors first); charge: total charge per panel (C); images:
 * the mirror images of all panels, when the model has planes.
 */
export function dielectricBodyForces(model: DielectricModel, P: PanelSet, charge: Float64Array, images?: ImageSet): Array<[number, number, number] | null> {
  const nb = model.bodies.length, nc = model.nc;
  const out: Array<[number, number, number] | null> = [];
  for (let b = 0; b < nb; b++) {
    const summary = model.bodies[b];
    const list: number[] = [];
    let uniform = true;
    for (let a = 0; a < model.ni; a++) {
      if (model.interfaceBody[a] !== b) continue;
      list.push(nc + a);
      if (model.epsPlus[a] !== summary.outsidePermittivity) uniform = false;
    }
    if (list.length === 0 || summary.removed > 0 || summary.merged > 0 || !uniform || touchesOther(model, b)) { out.push(null); continue; }
    const pts = new Float64Array(3 * list.length);
    list.forEach((p, i) => { pts[3 * i] = P.centroids[3 * p]; pts[3 * i + 1] = P.centroids[3 * p + 1]; pts[3 * i + 2] = P.centroids[3 * p + 2]; });
    // External charge: everything but this body's panels, directly; all panels through the images.
    const others = charge.slice(), own = new Float64Array(charge.length);
    for (const p of list) { others[p] = 0; own[p] = charge[p]; }
    const e = new Float64Array(pts.length);
    fieldAt(P, others, pts, e, images);
    if (images !== undefined) {
      const withImages = new Float64Array(pts.length), direct = new Float64Array(pts.length);
      fieldAt(P, own, pts, withImages, images);
      fieldAt(P, own, pts, direct);
      for (let i = 0; i < e.length; i++) e[i] += withImages[i] - direct[i];
    }
    const scale = summary.outsidePermittivity / (4 * Math.PI * EPSILON_0);
    let fx = 0, fy = 0, fz = 0;
    list.forEach((p, i) => { const q = charge[p]; fx += q * e[3 * i]; fy += q * e[3 * i + 1]; fz += q * e[3 * i + 2]; });
    out.push([scale * fx, scale * fy, scale * fz]);
  }
  return out;
}

/** Whether a conductor panel faces the body (a conductor inside or against it: in contact). */
function touchesOther(model: DielectricModel, b: number): boolean {
  for (let p = 0; p < model.nc; p++) if (model.conductorMediumPlus[p] === b || model.conductorMediumMinus[p] === b) return true;
  return false;
}
