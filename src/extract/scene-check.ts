/**
 * The check an extraction makes of its input before any solve: conductors that intersect or
 * touch are refused (touching conductors are one net), narrow gaps and conductors inside
 * another's closed surface are warned of. Findings are phrased in the user's length unit.
 */
import { checkMesh, type PairCheck, type SelfOverlapCheck } from "../mesh/check.js";
import { InputError } from "../errors.js";
import { formatLength, formatPoint } from "../io/si.js";
import type { LengthUnit } from "../io/units.js";
import type { SurfaceMesh } from "../mesh/model.js";
import { physicalSizeFault } from "../mesh/physical-size.js";

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
