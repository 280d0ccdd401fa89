/**
 * The finest mesh at the working potentials: panel charges and surface fields (open sheets
 * with the principal-value field of all the charge, for their stronger face and their force),
 * net forces on the conductors and dielectric bodies, the peak field per conductor and the
 * field check per medium.
 */
import type { PanelSet } from "../bem/panels.js";
import { imageSet, foldVectors, kernelPlanes, PLANE_EVEN, PLANE_ODD, type ImageSet, type KernelSpec } from "../bem/images.js";
import { EPSILON_0 } from "./constants.js";
import { compressionTolerance } from "./solve.js";
import { panelExcitation, peakFields, conductorForces, criticalFields, type PanelExcitation, type PeakField, type CriticalField } from "./excitation.js";
import { centroidFieldsFast } from "./probe.js";
import { dielectricExcitation } from "./dielectric-excitation.js";
import { dielectricBodyForces } from "./dielectric-force.js";
import type { ResolvedOptions } from "./options.js";
import { sharpVertices, panelsOnEdges, recoveredPeaks, assessPeak, peakSpread, type PeakFieldAssessment, type CutPlane } from "./peak-field.js";
import type { LevelSolves } from "./levels.js";
import type { DielectricResult } from "./result.js";
import type { DielectricSolution, FinestSolution } from "./result.js";

export interface WorkingPoint {
  excitation: PanelExcitation;
  /** Net force per conductor, summed over its mirror copies; N, 3 per conductor. */
  force: Float64Array;
  /** False where a force could not be computed (see conductorForces). */
  forcesComplete: boolean;
  peaks: PeakField[];
  /** Per conductor, its panel with the largest field against the breakdown strength of the medium outside. */
  critical: CriticalField[];
  /** Mirror images of the finest panels, shared so the field workers read them in place. */
  images?: ImageSet;
  dielectric?: DielectricResult;
  /** Per finest panel: 1 where it touches a sharp edge (peak-field.ts). */
  sharp: Uint8Array;
  /** Per conductor: its peak singular or converged, with the growth or the error from the levels. */
  peakAssessments: PeakFieldAssessment[];
}

/** Panels' charge, fields and forces for the K conductors of `finest` at `working` potentials (V). */
export async function workingPointFields(finest: FinestSolution, K: number, working: Float64Array, closed: boolean[],
  kernel: KernelSpec | undefined, o: ResolvedOptions, warnings: string[], coarse?: LevelSolves["coarse"]): Promise<WorkingPoint> {
  const { mesh } = finest, P = finest.unit.panels;
  const images = kernel ? imageSet(P, kernel, { shared: true }) : undefined;
  const fields = finest.dielectric
    ? dielectricFields(finest.dielectric, K, working, mesh.conductor, kernel, o, warnings)
    : await conductorFields(finest.unit.x, P, K, working, mesh.conductor, closed, images, o);
  const peaks = peakFields(fields.excitation.field, mesh.conductor, K, P);
  // The field check per medium: each panel against the strength of the medium just outside it
  // (on open sheets the weaker of its two faces' media).
  const model = finest.dielectric?.model;
  const critical = criticalFields(fields.excitation.field, mesh.conductor, K, P,
    model ? (p) => weakerMedium(model.conductorMediumPlus[p], model.conductorMediumMinus[p], o.strengths) : () => -1,
    (m) => m < 0 ? o.breakdownField : o.strengths[m]);
  const force = kernel ? foldVectors(kernel, fields.rawForce) : fields.rawForce;
  const cuts = symmetryCuts(kernel);
  const onEdge = sharpVertices(mesh, closed, cuts);
  const sharp = panelsOnEdges(mesh, onEdge);
  // Closed conductors in one medium: a smooth peak is the recovered (vertex-averaged) field, and
  // the field check takes it too (the same panel decides both there).
  const recover = peaks.map((pk, c) => !model && closed[c] && pk.panel >= 0 && sharp[pk.panel] === 0);
  const recovered = recoveredPeaks(fields.excitation.field, mesh, P.areas, onEdge, recover);
  recovered.forEach((rec, c) => {
    if (!rec) return;
    const p = mesh.positions, v = 3 * rec.vertex;
    const at: [number, number, number] = [p[v], p[v + 1], p[v + 2]];
    peaks[c] = { value: rec.value, panel: peaks[c].panel, at };
    if (critical[c].panel === peaks[c].panel) critical[c] = { ...critical[c], field: rec.value, ratio: rec.value / critical[c].strength, at };
  });
  const perLevel = await coarsePeaks(coarse, K, working, closed, kernel, o, recovered.map((r) => r !== null), cuts);
  const peakAssessments = peaks.map((pk, c) => assessPeak(perLevel ? [...perLevel.map((l) => l[c].value), pk.value] : [pk.value],
    pk.panel >= 0 && sharp[pk.panel] === 1, pk.panel >= 0 ? peakSpread(fields.excitation.field, mesh, pk.panel) : 0,
    // Adaptive levels refine some panels only: growth and error are measured against the peak's own sizes.
    perLevel && o.accuracy !== undefined ? [...perLevel.map((l) => l[c].size), recovered[c] ? recovered[c]!.size : pk.panel >= 0 ? Math.sqrt(P.areas[pk.panel]) : NaN] : undefined,
    recovered[c] !== null));
  return { excitation: fields.excitation, force, forcesComplete: fields.complete, peaks, critical, images, dielectric: fields.dielectric, sharp, peakAssessments };
}

/** The symmetry planes of a kernel, along which a half model is cut (peak-field.ts). */
function symmetryCuts(kernel: KernelSpec | undefined): CutPlane[] {
  if (!kernel) return [];
  const { offsets, kinds } = kernelPlanes(kernel);
  const cuts: CutPlane[] = [];
  for (let a = 0; a < 3; a++) if (kinds[a] === PLANE_EVEN || kinds[a] === PLANE_ODD) cuts.push({ axis: a, offset: offsets[a] });
  return cuts;
}

/**
 * The peak field of each conductor on each coarser level, computed as the finest level's is
 * (the same working potentials, the two-sided field on open sheets), so that the levels compare
 * like with like; coarsest first, each with its peak panel's size. Undefined without coarser levels.
 */
async function coarsePeaks(coarse: LevelSolves["coarse"], K: number, working: Float64Array, closed: boolean[],
  kernel: KernelSpec | undefined, o: ResolvedOptions, recover: boolean[], cuts: CutPlane[]): Promise<Array<Array<{ value: number; size: number }>> | undefined> {
  if (!coarse || coarse.length === 0) return undefined;
  const quiet: ResolvedOptions = { ...o, progress: undefined };
  const out: Array<Array<{ value: number; size: number }>> = [];
  for (const level of coarse) {
    const P = level.unit.panels;
    const images = kernel ? imageSet(P, kernel, { shared: true }) : undefined;
    const f = await conductorFields(level.unit.x, P, K, working, level.mesh.conductor, closed, images, quiet);
    // The peak panel's size (√area) with its value: adaptive levels do not halve every panel.
    // Recovered on the levels where the finest peak is (recoveredPeaks), like with like.
    const rec = recover.some((r) => r) ? recoveredPeaks(f.excitation.field, level.mesh, P.areas, sharpVertices(level.mesh, closed, cuts), recover) : [];
    out.push(peakFields(f.excitation.field, level.mesh.conductor, K, P).map((pk, c) => {
      const r = rec[c];
      return r ? { value: r.value, size: r.size } : { value: pk.value, size: pk.panel >= 0 ? Math.sqrt(P.areas[pk.panel]) : NaN };
    }));
  }
  return out;
}

interface Fields {
  excitation: PanelExcitation;
  /** Forces on the meshed conductors, not yet folded over the mirror copies. */
  rawForce: Float64Array;
  complete: boolean;
  dielectric?: DielectricResult;
}

/**
 * Conductors in a uniform medium of permittivity o.permittivity. Open sheets need the two-sided
 * (principal-value) field of all the charge at their panels, for their stronger face's field and
 * their force.
 */
async function conductorFields(x: Float64Array, P: PanelSet, K: number, working: Float64Array, conductorOf: Uint32Array,
  closed: boolean[], images: ImageSet | undefined, o: ResolvedOptions): Promise<Fields> {
  const eps = o.permittivity;
  const openPanel = new Uint8Array(P.n);
  for (let p = 0; p < P.n; p++) openPanel[p] = closed[conductorOf[p]] ? 0 : 1;
  let excitation = panelExcitation(x, K, P, working, eps, openPanel);
  let nOpen = 0;
  for (let p = 0; p < P.n; p++) nOpen += openPanel[p];
  let fieldPv: Float64Array | undefined;
  if (nOpen > 0) {
    o.progress?.("fields", 0, o.refine, o.refine + 1);
    const list = new Uint32Array(nOpen);
    for (let p = 0, a = 0; p < P.n; p++) if (openPanel[p]) list[a++] = p;
    const e = await centroidFieldsFast(P, excitation.charge, eps, list, images, o.pool, compressionTolerance(o.tolerance));
    fieldPv = new Float64Array(3 * P.n);
    const normalPv = new Float64Array(P.n);
    for (let a = 0; a < nOpen; a++) {
      const p = list[a];
      fieldPv[3 * p] = e[3 * a]; fieldPv[3 * p + 1] = e[3 * a + 1]; fieldPv[3 * p + 2] = e[3 * a + 2];
      normalPv[p] = e[3 * a] * P.normals[3 * p] + e[3 * a + 1] * P.normals[3 * p + 1] + e[3 * a + 2] * P.normals[3 * p + 2];
    }
    excitation = panelExcitation(x, K, P, working, eps, openPanel, normalPv);
    o.progress?.("fields", 1, o.refine, o.refine + 1);
  }
  const forces = conductorForces(excitation.sigma, P, conductorOf, K, eps, openPanel, fieldPv);
  return { excitation, rawForce: forces.force, complete: forces.complete };
}

/** Conductors and dielectric bodies: every charge, free and polarisation, radiates in vacuum. */
function dielectricFields(d: DielectricSolution, K: number, working: Float64Array, conductorOf: Uint32Array,
  kernel: KernelSpec | undefined, o: ResolvedOptions, warnings: string[]): Fields {
  const { model, panels, totalX } = d;
  const allImages = kernel ? imageSet(panels, kernel) : undefined;
  const e = dielectricExcitation(model, panels, totalX, K, working, conductorOf, K, allImages, d.openNormalField);
  const totalCharge = new Float64Array(panels.n);
  totalCharge.set(scaleCopy(xAtWorking(totalX, K, working), 4 * Math.PI * EPSILON_0));
  const forces = dielectricBodyForces(model, panels, totalCharge, allImages).map((f) => {
    if (!f || !kernel) return f;
    const g = foldVectors(kernel, Float64Array.from(f));
    return [g[0], g[1], g[2]] as [number, number, number];
  });
  if (model.removedInterfacePanels > 0) warnings.push(`${model.removedInterfacePanels} dielectric interface panel(s) covered by or inside a conductor (or in the ground plane) were removed`);
  return {
    excitation: e.excitation, rawForce: e.force, complete: true,
    dielectric: {
      bodies: model.bodies, interfacePanels: model.ni, mergedInterfacePanels: model.mergedInterfacePanels, testing: o.testing,
      conductorPermittivity: model.conductorPlus, panels, totalCharge, model, forces,
    },
  };
}

/** Of the media on a panel's two faces, the one with the lower breakdown strength. */
function weakerMedium(a: number, b: number, strengths: Float64Array): number {
  if (a === b) return a;
  return (b < 0 ? Infinity : strengths[b]) < (a < 0 ? Infinity : strengths[a]) ? b : a;
}

/** Σ_j x[p·k + j] V_j per row p. */
function xAtWorking(x: Float64Array, k: number, potentials: ArrayLike<number>): Float64Array {
  const n = x.length / k, out = new Float64Array(n);
  for (let p = 0; p < n; p++) { let s = 0; for (let j = 0; j < k; j++) s += x[p * k + j] * potentials[j]; out[p] = s; }
  return out;
}

/** a·s, a new array. */
export function scaleCopy(a: Float64Array, s: number): Float64Array {
  const out = new Float64Array(a.length);
  for (let i = 0; i < a.length; i++) out[i] = a[i] * s;
  return out;
}
