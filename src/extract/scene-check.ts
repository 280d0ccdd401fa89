/**
 * The check an extraction makes of its input before any solve: conductors that intersect or
 * touch are refused (touching conductors are one net), narrow gaps and conductors inside
 * another's closed surface are warned of. Findings are phrased in the user's length unit.
 */
import { checkMesh, type PairCheck, type SelfOverlapCheck } from "../mesh/check.js";
import { InputError } from "../errors.js";
import { formatLength, formatPoint, unitLabel } from "../io/si.js";
import type { LengthUnit } from "../io/units.js";
import type { SurfaceMesh } from "../mesh/model.js";
import { physicalSizeFault } from "../mesh/physical-size.js";
import { triangleCount, boundingDiagonal } from "../mesh/model.js";
import { conductorTopology } from "../mesh/topology.js";
import type { LoadedScene } from "../io/inputs.js";
import { kernelPlanes, conductorRanges, checkSides, trianglesInSymmetryPlanes, type AxisPlane, type SymmetryPlane } from "../bem/images.js";
import { prepareBodies, bodyOverlaps, overlapSentence } from "./dielectric-bodies.js";
import { symmetryLayout, withoutTriangles, unfolding, type SymmetryLayout } from "./symmetry-unfold.js";

/** One finding between two conductors as a sentence, positions and lengths in `unit`. */
export function pairSentence(p: PairCheck, unit: LengthUnit): string {
  const at = formatPoint(p.position, unit);
  switch (p.kind) {
    case "intersect": return `conductors ${p.a} and ${p.b} intersect at ${at}`;
    case "touch": return `conductors ${p.a} and ${p.b} touch at ${at}${p.distance > 0 ? ` (gap ${formatLength(p.distance, unit)}, within the contact tolerance)` : ""}; touching conductors are one net: merge them or separate them`;
    case "inside": return `conductor ${p.a} lies inside the closed surface of conductor ${p.b} (at ${at}): ${p.b} is taken as a zero-thickness shell around a cavity; if ${p.b} is solid there, the model is wrong`;
    case "gap": return `conductors ${p.a} and ${p.b} are only ${formatLength(p.distance, unit)} apart at ${at}, less than the local panel size ${formatLength(p.panelSize ?? NaN, unit)}; the boundary-element answer loses accuracy there: refine the mesh near the gap`;
  }
}

/** A conductor covering itself (repeated faces, coplanar overlaps) as a sentence, the place in `unit`. */
export function selfOverlapSentence(name: string, f: SelfOverlapCheck, unit: LengthUnit): string {
  const what: string[] = [];
  if (f.repeated > 0) what.push(`${f.repeated} triangle${f.repeated === 1 ? " repeats another" : "s repeat others"} (the same three corners)`);
  if (f.overlapping > 0) what.push(`${f.lowerBound ? "at least " : ""}${f.overlapping} pair${f.overlapping === 1 ? "" : "s"} of triangles overlap in one plane`);
  return `conductor ${name} covers itself: ${what.join(" and ")}, the first at ${formatPoint(f.position, unit)}; ` +
    "two panels on one surface would carry one charge: remove the repeated or overlapping faces";
}

/**
 * Refuse a model outside the physical range of sizes (physical-size.ts), conductors that cover themselves (repeated or overlapping faces; before anything else,
 * as it is cheap and a million repeats would slow the rest) and conductors that intersect or
 * touch (InputError naming `source`, the first finding and how many more); return the warnings
 * (narrow gaps, cavities) as sentences.
 */
export function checkConductors(mesh: SurfaceMesh, unit: LengthUnit, source: string): string[] {
  // The files were checked as read; a placement (scale, translation) can still leave the range.
  const sizeFault = physicalSizeFault(mesh.positions, mesh.triangles, 1, (_, t) => `conductor ${mesh.names[mesh.conductor[t]]} as placed`);
  if (sizeFault) throw new InputError(sizeFault, source);
  const report = checkMesh(mesh);
  const covering = report.conductors.filter((c) => c.selfOverlap !== null);
  if (covering.length > 0) {
    const more = covering.length > 1 ? ` (and ${covering.length - 1} more conductor${covering.length > 2 ? "s" : ""}; run sigmesh check)` : "";
    throw new InputError(selfOverlapSentence(covering[0].name, covering[0].selfOverlap!, unit) + more, source);
  }
  const pairs = report.pairs;
  const errors = pairs.filter((p) => p.severity === "error");
  if (errors.length > 0) {
    throw new InputError(`${pairSentence(errors[0], unit)}${errors.length > 1 ? ` (and ${errors.length - 1} more; run sigmesh check)` : ""}`, source);
  }
  return pairs.filter((p) => p.severity === "warning").map((p) => pairSentence(p, unit));
}

/**
 * Overall sizes (bounding-box diagonal of the conductors) taken as plausible for the parts
 * sigmesh serves, from MEMS combs to high-voltage electrodes: our own bounds, not a standard.
 * With the unit assumed (mm) the range is narrower, since a file in metres read as mm (a 90 mm
 * part shrunk to 90 µm) is the common slip.
 */
export const PLAUSIBLE_SIZE = { assumed: [0.5e-3, 10], given: [1e-6, 100] } as const;

/**
 * A warning when the model's overall size is implausible for its unit, naming the unit and how
 * to set it; null when it is plausible.
 */
export function implausibleSize(mesh: SurfaceMesh, unit: LengthUnit, assumed: boolean): string | null {
  if (mesh.triangles.length === 0) return null;
  const d = boundingDiagonal(mesh.positions);
  const [lo, hi] = assumed ? PLAUSIBLE_SIZE.assumed : PLAUSIBLE_SIZE.given;
  if (!(d < lo || d > hi)) return null;
  const how = `set the unit with --unit (in a scene, its "unit")`;
  const label = unitLabel(unit);
  return `the model is ${formatLength(d, unit)} across with lengths read in ${label}${assumed ? " (assumed)" : ""}, `
    + `${d < lo ? "unusually small" : "unusually large"} for a part: if the file's lengths are in another unit, ${how}`;
}

/** A dielectric body as `sigmesh check` reports it. */
export interface DielectricCheck {
  name: string;
  permittivity: number;
  triangles: number;
  /** Every edge shared by exactly two of its triangles (with symmetry planes: of the body unfolded across them, as a solve takes it). */
  closed: boolean;
  /** Enclosed volume (m³) once oriented outward (with symmetry planes: of the unfolded body); null when the body would be refused or the planes are. */
  volume: number | null;
  /** Why an extraction would refuse the body, or null. */
  fault: string | null;
}

/** The ground plane and symmetry planes of a scene against its conductors, as `sigmesh check` reports them. */
export interface SceneSurroundingsCheck {
  groundPlane: AxisPlane | null;
  symmetry: SymmetryPlane[];
  /** Triangles lying in a symmetry plane (the cut face of a half model), dropped by a solve. */
  inSymmetryPlane: number;
  /** Why an extraction would refuse the conductors against the planes (crossing, touching), or null. */
  fault: string | null;
  dielectrics: DielectricCheck[];
}

/**
 * What `extract` would refuse of a scene besides its conductors' contacts: dielectric bodies
 * that are open, non-manifold or enclose nothing (`prepareBodies`), and conductors crossing the
 * ground plane or a symmetry plane (the same `symmetryLayout` check kernel, cut-face removal and
 * `checkSides` as the solve), and bodies reaching across a symmetry plane (`unfolding`, which a
 * half body passes through before `prepareBodies`, as in the solve). Nothing is thrown for these faults: they are returned as sentences
 * in `unit`.
 */
export function checkSceneSurroundings(scene: LoadedScene): SceneSurroundingsCheck {
  const unit = scene.unit, mesh = scene.mesh;
  const out: SceneSurroundingsCheck = { groundPlane: scene.groundPlane ?? null, symmetry: scene.symmetry, inSymmetryPlane: 0, fault: null, dielectrics: [] };
  // The planes against the conductors, as extract-mesh.ts `surroundings` checks them.
  let layout: SymmetryLayout | undefined, sides: Int8Array | undefined;
  try {
    layout = symmetryLayout(mesh.names, scene.symmetry, scene.groundPlane, (m) => formatLength(m, unit));
    if (layout.checkKernel) kernelPlanes(layout.checkKernel);
  } catch (e) {
    // kernelPlanes throws a plain Error for a plane it cannot image; extract-mesh refuses it as input.
    if (!(e instanceof Error)) throw e;
    out.fault = e instanceof InputError ? e.fault : e.message;
    layout = undefined;
  }
  const checkKernel = layout?.checkKernel;
  if (checkKernel) {
    const cut = trianglesInSymmetryPlanes(checkKernel, mesh.positions, mesh.triangles);
    out.inSymmetryPlane = cut.count;
    const kept = cut.count > 0 ? withoutTriangles(mesh, cut.flags) : mesh;
    const ranges = conductorRanges(kept.positions, kept.triangles, kept.conductor, kept.names.length);
    const checked = checkSides(checkKernel, ranges, mesh.names, (m) => formatLength(m, unit));
    if (checked.fault) {
      out.fault = layout!.both.length > 0 ? checked.fault.replace("odd symmetry plane", "symmetry plane with both images") : checked.fault;
    } else sides = checked.sides;
  }
  // The bodies as extract-mesh.ts `dielectricBodies` prepares them: with symmetry planes, the
  // half body meshed on the conductors' side unfolded into the whole one first.
  const unfold = layout && layout.planes.length > 0 && checkKernel && sides ? unfolding(checkKernel, sides, (m) => formatLength(m, unit)) : undefined;
  const planesUnknown = out.fault !== null && scene.symmetry.length > 0;
  const judged: Array<{ name: string; mesh: SurfaceMesh }> = [];
  out.dielectrics = scene.dielectrics.map((d): DielectricCheck => {
    const n = triangleCount(d.mesh);
    let whole = d.mesh, volume: number | null = null;
    let fault: string | null = physicalSizeFault(d.mesh.positions, d.mesh.triangles, 1, () => `dielectric ${d.name} as placed`) ?? null;
    try {
      if (fault === null && unfold) whole = unfold.body(d.mesh, d.name);
      // With the planes refused, a half body cannot be unfolded: it is reported, not judged.
      if (fault === null && !planesUnknown) {
        const prepared = prepareBodies([{ ...d, mesh: whole }], scene.permittivity)[0];
        volume = prepared.volume;
        judged.push({ name: d.name, mesh: prepared.mesh });
      }
    } catch (e) {
      if (!(e instanceof InputError)) throw e;
      fault = e.fault;
    }
    const nw = triangleCount(whole);
    const topo = nw > 0 ? conductorTopology({ positions: whole.positions, triangles: whole.triangles, conductor: new Uint32Array(nw), names: [d.name] })[0] : undefined;
    return { name: d.name, permittivity: d.permittivity, triangles: n, closed: topo !== undefined && topo.boundaryEdges === 0 && topo.nonManifoldEdges === 0, volume, fault };
  });
  // Bodies that are sound each on their own (oriented outward), against each other, as prepareBodies
  // does for a solve (which refuses the first overlap).
  for (const o of bodyOverlaps(judged)) {
    for (const d of out.dielectrics) if ((d.name === o.a || d.name === o.b) && d.fault === null) d.fault = overlapSentence(o, (p) => formatPoint(p, unit));
  }
  return out;
}
