/**
 * The human-readable summary of a mesh check: one aligned row per conductor, then the
 * notes on each, then what lies between conductors, then the verdict. Lengths are in
 * the user's unit, which is always stated.
 */
import { type LengthUnit, metresPer } from "../io/units.js";
import type { CheckReport, ConductorCheck, PairCheck } from "../mesh/check.js";
import { THIN_ASPECT } from "../mesh/check.js";
import { formatNumber, formatLength, formatPoint, lengthValue, unitLabel } from "../io/si.js";
import { pairSentence, selfOverlapSentence, type SceneSurroundingsCheck } from "../extract/scene-check.js";
import { displayText } from "../io/display-text.js";
import { remeshSentence, type RemeshSummary } from "../mesh/remesh.js";

export interface CheckSummaryOptions {
  unit: LengthUnit;
  /** True when the unit is the default rather than chosen by the user. */
  unitAssumed: boolean;
  /** True when the unit is the one the (CAD) files declare. */
  unitDeclared?: boolean;
  files?: string[];
  /** A scene's dielectric bodies and planes (`checkSceneSurroundings`), reported before the verdict. */
  scene?: { file: string; check: SceneSurroundingsCheck };
  /** What extract's remeshing of CAD-style flat faces would change (src/mesh/remesh.ts), when anything. */
  remesh?: RemeshSummary;
}

/**
 * Pad cells to column widths; numeric-looking columns are right-aligned. Cells are escaped
 * for the terminal (`displayText`) before they are measured.
 */
export function alignTable(headerCells: string[], cells: string[][], rightAligned: boolean[]): string[] {
  const header = headerCells.map(displayText), rows = cells.map((r) => r.map(displayText));
  const width = header.map((h, i) => Math.max([...h].length, ...rows.map((r) => [...r[i]].length)));
  const line = (cells: string[]) => cells.map((c, i) => {
    const pad = " ".repeat(width[i] - [...c].length);
    return rightAligned[i] ? pad + c : c + pad;
  }).join("  ").trimEnd();
  return [line(header), ...rows.map(line)];
}

function range(lo: number, hi: number, unit: LengthUnit): string {
  return `${lengthValue(lo, unit)}..${lengthValue(hi, unit)}`;
}

function conductorNotes(c: ConductorCheck, unit: LengthUnit): string[] {
  const notes: string[] = [];
  const n = c.name;
  if (c.triangles === 0) notes.push(`${n}: no triangles`);
  switch (c.orientation) {
    case "inward-flipped": notes.push(`${n}: surface was oriented inward; ${c.flippedTriangles} triangle windings reversed to face outward`); break;
    case "repaired": notes.push(`${n}: ${c.inconsistentEdges} edges had disagreeing windings; ${c.flippedTriangles} triangles reversed to make the surface consistent and outward`); break;
    case "inconsistent": notes.push(`${n}: windings cannot be made consistent (a one-sided, Möbius-like surface); normals and field sides are undefined there`); break;
    case "non-manifold": notes.push(`${n}: ${c.nonManifoldEdges} edges are shared by three or more triangles; the inside of the surface is undefined there`); break;
    default: break;
  }
  if (c.orientation === "open" && c.flippedTriangles > 0) notes.push(`${n}: ${c.flippedTriangles} triangles reversed to agree with their neighbours`);
  if (!c.closed && c.triangles > 0 && c.nonManifoldEdges === 0) notes.push(`${n}: open surface with ${c.boundaryEdges} boundary edges (legal: treated as a zero-thickness sheet)`);
  if (c.degenerateTriangles > 0) notes.push(`${n}: ${c.degenerateTriangles} degenerate (zero-area) triangles; remove or re-mesh them before solving`);
  else if (c.worstAspect !== null && c.worstAspect > THIN_ASPECT && c.worstAspectAt) {
    notes.push(`${n}: thin triangles, worst aspect ratio ${formatNumber(c.worstAspect, 3)} at ${formatPoint(c.worstAspectAt, unit)}; accuracy suffers above about ${THIN_ASPECT}`);
  }
  return notes;
}

/**
 * The check as text for a terminal. Names and paths come from files: each line is escaped
 * (`displayText`), so a name can neither send control sequences nor break a line.
 */
export function formatCheckSummary(report: CheckReport, opts: CheckSummaryOptions): string {
  const u = opts.unit, ul = unitLabel(u);
  const out: string[] = [];
  const files = opts.files && opts.files.length > 0 ? ` from ${opts.files.join(", ")}` : "";
  out.push(`mesh check: ${report.conductors.length} conductor${report.conductors.length === 1 ? "" : "s"}, ${report.triangles} triangles, ${report.vertices} vertices${files}`);
  out.push(`unit: ${ul} (${opts.scene && opts.unitAssumed ? "the scene's; --unit overrides it" : opts.unitAssumed ? "assumed; set with --unit" : opts.unitDeclared ? "declared by the files" : "given with --unit"})`);
  out.push("");
  const header = ["conductor", "triangles", `area (${ul}²)`, `bbox x (${ul})`, `y (${ul})`, `z (${ul})`, "closed", "boundary", "non-manifold", "orientation", `edge (${ul})`, "worst aspect"];
  const rows = report.conductors.map((c) => {
    const b = c.bbox;
    return [
      c.name,
      String(c.triangles),
      formatNumber(c.area / metresPer(u) ** 2),
      b ? range(b[0], b[3], u) : "-",
      b ? range(b[1], b[4], u) : "-",
      b ? range(b[2], b[5], u) : "-",
      c.closed ? "yes" : "no",
      String(c.boundaryEdges),
      String(c.nonManifoldEdges),
      c.orientation,
      c.triangles > 0 ? range(c.edgeLength.min, c.edgeLength.max, u) : "-",
      c.worstAspect === null ? (c.degenerateTriangles > 0 ? "degenerate" : "-") : formatNumber(c.worstAspect, 3),
    ];
  });
  out.push(...alignTable(header, rows, [false, true, true, false, false, false, false, true, true, false, false, true]));
  const notes = report.conductors.flatMap((c) => conductorNotes(c, u));
  if (opts.remesh) notes.push(remeshSentence(opts.remesh, opts.scene !== undefined, false));
  if (notes.length > 0) { out.push(""); out.push(...notes.map((n) => `note: ${n}`)); }
  out.push("");
  const errors = report.pairs.filter((p) => p.severity === "error");
  const warnings = report.pairs.filter((p) => p.severity === "warning");
  if (report.conductors.length < 2) out.push("between conductors: only one conductor");
  else if (report.pairs.length === 0) out.push("between conductors: no intersections, touches or narrow gaps");
  for (const w of warnings) out.push(`warning: ${pairSentence(w, u)}`);
  const covering = report.conductors.filter((c) => c.selfOverlap !== null);
  for (const c of covering) out.push(`FAILED: ${selfOverlapSentence(c.name, c.selfOverlap!, u)}`);
  for (const e of errors) out.push(`FAILED: ${pairSentence(e, u)}`);
  const sceneFaults = opts.scene ? sceneLines(opts.scene.file, opts.scene.check, u, out) : 0;
  if (errors.length === 0 && covering.length === 0 && sceneFaults === 0) out.push(`OK: ${opts.scene ? "scene" : "mesh"} can be solved${warnings.length + notes.length > 0 ? " (see notes and warnings above)" : ""}`);
  return out.map(displayText).join("\n") + "\n";
}

/** An axis plane as `z = 0 mm`. */
function planeText(p: { axis: string; offset: number }, unit: LengthUnit): string {
  return `${p.axis} = ${formatLength(p.offset, unit)}`;
}

/**
 * The scene's surroundings: one line per dielectric body, the ground plane and each symmetry
 * plane, then a FAILED line per refusal; pushed onto `out`. Returns the number of refusals.
 */
function sceneLines(file: string, s: SceneSurroundingsCheck, u: LengthUnit, out: string[]): number {
  let faults = 0;
  out.push("", `scene ${file}:`);
  if (s.dielectrics.length === 0) out.push("dielectric: none");
  for (const d of s.dielectrics) {
    const volume = d.volume === null ? "no volume" : `volume ${formatNumber(d.volume / metresPer(u) ** 3)} ${unitLabel(u)}³`;
    out.push(`dielectric ${d.name}: εr ${formatNumber(d.permittivity)}, ${d.triangles} triangles, ${d.closed ? "closed" : "not closed"}, ${volume}`);
  }
  out.push(`ground plane: ${s.groundPlane ? planeText(s.groundPlane, u) : "none"}`);
  if (s.symmetry.length === 0) out.push("symmetry plane: none");
  for (const p of s.symmetry) {
    out.push(`symmetry plane: ${planeText(p, u)}, images ${p.images}${p.mirrored ? ` (mirrored conductors ${p.mirrored})` : ""}`);
  }
  if (s.inSymmetryPlane > 0) out.push(`note: ${s.inSymmetryPlane} triangle(s) lie in a symmetry plane and are dropped by a solve (the cut face of a half model)`);
  for (const d of s.dielectrics) if (d.fault !== null) { out.push(`FAILED: ${file}: ${d.fault}`); faults++; }
  if (s.fault !== null) { out.push(`FAILED: ${file}: ${s.fault}`); faults++; }
  return faults;
}
