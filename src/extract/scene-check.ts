/**
 * The check an extraction makes of its input before any solve: conductors that intersect or
 * touch are refused (touching conductors are one net), narrow gaps and conductors inside
 * another's closed surface are warned of. Findings are phrased in the user's length unit.
 */
import { checkMesh, type PairCheck } from "../mesh/check.js";
import { InputError } from "../errors.js";
import { formatLength, formatPoint } from "../io/si.js";
import type { LengthUnit } from "../io/units.js";
import type { SurfaceMesh } from "../mesh/model.js";

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

/**
 * Refuse conductors that intersect or touch (InputError naming `source`, the first pair and how
 * many more); return the warnings (narrow gaps, cavities) as sentences.
 */
export function checkConductors(mesh: SurfaceMesh, unit: LengthUnit, source: string): string[] {
  const pairs = checkMesh(mesh).pairs;
  const errors = pairs.filter((p) => p.severity === "error");
  if (errors.length > 0) {
    throw new InputError(`${pairSentence(errors[0], unit)}${errors.length > 1 ? ` (and ${errors.length - 1} more; run sigmesh check)` : ""}`, source);
  }
  return pairs.filter((p) => p.severity === "warning").map((p) => pairSentence(p, unit));
}
