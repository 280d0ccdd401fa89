/**
 * The terminal summary of an extraction: aligned tables with engineering prefixes,
 * the field check with margins, the accuracy estimate and the cautions.
 */
import { remeshSentence } from "../mesh/remesh.js";
import type { ExtractionResult } from "../extract/result.js";
import { governingError } from "../extract/adaptive.js";
import type { SceneExtraction } from "../extract/extract.js";
import type { LengthUnit } from "../io/units.js";
import { formatSI, formatNumber, formatArea, formatPoint, formatFieldStrength, formatLength, unitLabel, digitsFor, derivedErrors } from "../io/si.js";
import { displayText } from "../io/display-text.js";
import { cautionsFor } from "./cautions.js";
import { accuracyRequest } from "./csv.js";

/**
 * Lay out rows as columns; `right` marks right-aligned columns. Cells are escaped for the
 * terminal (`displayText`) before they are measured.
 */
export function table(cells: string[][], right: boolean[] = []): string[] {
  const rows = cells.map((r) => r.map(displayText));
  const widths: number[] = [];
  for (const r of rows) r.forEach((cell, i) => { widths[i] = Math.max(widths[i] ?? 0, [...cell].length); });
  return rows.map((r) => r.map((cell, i) => {
    const pad = " ".repeat(widths[i] - [...cell].length);
    return right[i] ? pad + cell : cell + pad;
  }).join("  ").trimEnd());
}

export interface SummaryContext {
  unit: LengthUnit;
  unitAssumed: boolean;
  source: string;
  /** Wall-clock seconds of the whole run and of writing its reports (the command line measures them). */
  timing?: { total: number; reports: number };
}

/**
 * The terminal summary of an extraction. A scene's extraction (`extract`) names its own input
 * and unit; a bare mesh's (`extractMesh`) needs them given. Names, paths and warnings come
 * from files: each line is escaped for the terminal (`displayText`), so a name can neither
 * send control sequences nor break a line.
 */
export function extractionSummary(r: SceneExtraction, ctx?: SummaryContext): string;
export function extractionSummary(r: ExtractionResult, ctx: SummaryContext): string;
export function extractionSummary(r: ExtractionResult | SceneExtraction, given?: SummaryContext): string {
  const ctx = given ?? (r as SceneExtraction).input;
  const k = r.k;
  const out: string[] = [];
  // Digits: capacitances, charges and energy carry as many as the Richardson estimate supports
  // (per entry); without an estimate three, the accuracy a default mesh usually reaches.
  const err = r.accuracy?.richardson.errorEstimate;
  const cDigits = (v: number, e: number | undefined) => (err ? digitsFor(v, e) : 3);
  // The estimates of the two-terminal values, charges and energy, as every report derives them.
  const derived = err ? derivedErrors(Array.from({ length: k }, (_, i) => Array.from(err.subarray(i * k, (i + 1) * k))), r.conductors.map((c) => c.potential)) : undefined;
  const unitNote = ctx.unitAssumed ? `${unitLabel(ctx.unit)} (assumed; set with --unit)` : unitLabel(ctx.unit);
  out.push(`sigmesh extract: ${ctx.source}`);
  out.push(`  ${k} conductor${k === 1 ? "" : "s"}, ${r.solver.panels} panels, length unit ${unitNote}, εr = ${formatNumber(r.relativePermittivity)}`);
  const ref = r.reference === "ground plane" && r.groundPlane
    ? `grounded plane ${r.groundPlane.axis} = ${formatLength(r.groundPlane.offset, ctx.unit)} (the reference of the two-terminal values)`
    : r.symmetry.some((p) => p.images === "odd") ? "infinity and the odd symmetry plane (0 V)" : "infinity (no ground plane)";
  out.push(`  reference: ${ref}`);
  if (r.symmetryCopies > 1) {
    const how = (p: ExtractionResult["symmetry"][number]) => p.images === "odd" ? "odd: its mirror half at the opposite potential, the plane at 0 V"
      : p.images === "both" ? `both: even and odd solves, its mirror half conductors of their own (~${p.axis}) at the ${p.mirrored === "opposite" ? "opposite" : "same"} working potential`
        : "even: its mirror half tied to the same potential";
    out.push(`  symmetry: ${r.symmetryCopies} copies of the meshed part in the full model`);
    for (const p of r.symmetry) out.push(`    plane ${p.axis} = ${formatLength(p.offset, ctx.unit)}, ${how(p)}`);
    if (r.symmetry.some((p) => p.images === "odd")) out.push("    capacitances are those of the antisymmetric excitation (each conductor with its odd mirror at the opposite potential); energy is the full model's");
  }
  if (r.dielectric) {
    for (const b of r.dielectric.bodies) out.push(`  dielectric ${b.name}: εr = ${formatNumber(b.permittivity)} inside, ${b.outside} (εr = ${formatNumber(b.outsidePermittivity)}) outside, ${b.panels} interface panels`);
    if (r.removedInterfacePanels > 0) out.push(`  ${r.removedInterfacePanels} interface panels covered by conductors were removed`);
    if (r.dielectric.mergedInterfacePanels > 0) out.push(`  ${r.dielectric.mergedInterfacePanels} coincident interface panels of touching bodies were merged`);
  }
  for (let i = 0; i < r.floatingNames.length; i++) out.push(`  floating: ${r.floatingNames[i]} settles at ${formatSI(r.floatingPotentials[i], "V")}`);
  out.push("");

  out.push("Conductors");
  const rows = [["name", "triangles", "area", "closed", "potential", "charge", "peak |E|", "at", "E/Eb"]];
  for (const c of r.conductors) {
    rows.push([c.name, String(c.triangles), formatArea(c.area, ctx.unit), c.closed ? "yes" : "sheet", formatSI(c.potential, "V"),
      c.floating ? "0 (floating)" : formatSI(c.charge, "C", cDigits(c.charge, derived?.charge[r.conductors.indexOf(c)])), formatFieldStrength(c.peakField), formatPoint(c.peakFieldAt, ctx.unit, 3), formatNumber(c.fieldRatio, 3)]);
  }
  out.push(...table(rows, [false, true, true, false, true, true, true, false, true]).map((l) => "  " + l));
  out.push("");

  out.push(`Maxwell capacitance matrix${r.accuracy ? " (extrapolated)" : ""}`);
  const mrows = [["", ...r.names]];
  for (let i = 0; i < k; i++) mrows.push([r.names[i], ...Array.from({ length: k }, (_, j) => formatSI(r.maxwell[i * k + j], "F", cDigits(r.maxwell[i * k + j], err?.[i * k + j])))]);
  out.push(...table(mrows, [false, ...r.names.map(() => true)]).map((l) => "  " + l));
  out.push("");
  out.push("Two-terminal capacitances (circuit values)");
  const crows: string[][] = [];
  const refName = r.reference === "ground plane" ? "ground plane" : "reference (infinity)";
  for (let i = 0; i < k; i++) crows.push([`${r.names[i]} – ${refName}`, formatSI(r.mutual[i * k + i], "F", cDigits(r.mutual[i * k + i], derived?.mutual[i][i]))]);
  for (let i = 0; i < k; i++) for (let j = i + 1; j < k; j++) crows.push([`${r.names[i]} – ${r.names[j]}`, formatSI(r.mutual[i * k + j], "F", cDigits(r.mutual[i * k + j], err?.[i * k + j]))]);
  out.push(...table(crows, [false, true]).map((l) => "  " + l));
  out.push("");
  if (r.floatingNames.length > 0) {
    const m = r.reducedNames.length;
    out.push(`Maxwell matrix with the floating conductors (${r.floatingNames.join(", ")}) eliminated`);
    const rrows = [["", ...r.reducedNames]];
    for (let i = 0; i < m; i++) rrows.push([r.reducedNames[i], ...Array.from({ length: m }, (_, j) => formatSI(r.reducedMaxwell[i * m + j], "F", err ? digitsFor(r.reducedMaxwell[i * m + j], r.accuracy!.richardson.relativeError * Math.abs(r.reducedMaxwell[i * m + i])) : 3))]);
    out.push(...table(rrows, [false, ...r.reducedNames.map(() => true)]).map((l) => "  " + l));
    out.push("");
  }
  out.push(`Stored energy at the working potentials: ${formatSI(r.energy, "J", cDigits(r.energy, derived?.energy))}`);
  // Dielectric bodies: a net force far below energy / size is what is left of a sum of large,
  // cancelling panel forces after a solve to a relative residual of about 1e-6.
  const size = Math.sqrt(r.conductors.reduce((a, c) => a + c.area, 0));
  const forceNoise = 1e-5 * Math.abs(r.energy) / Math.max(size, 1e-300);
  // Conductors: one rule whatever surrounds them (FORCE_RESOLUTION of the panels' gross force).
  for (const c of r.conductors) {
    const f = Math.hypot(...c.force);
    if (f > c.forceResolution) out.push(`  force on ${c.name}: ${formatSI(f, "N", 3)} along (${c.force.map((x) => formatNumber(x / f, 3)).join(", ")})`);
    else if (r.energy !== 0) out.push(`  force on ${c.name}: none resolved (below ${formatSI(c.forceResolution, "N", 1)}, the resolution of the solve)`);
  }
  if (!r.forcesComplete) out.push("  (forces on open sheets are not included)");
  r.dielectric?.bodies.forEach((b, i) => {
    const f = r.dielectric!.forces[i];
    if (!f) return;
    const m = Math.hypot(...f);
    if (m > forceNoise) out.push(`  force on dielectric ${b.name}: ${formatSI(m, "N", 3)} along (${f.map((x) => formatNumber(x / m, 3)).join(", ")})`);
  });
  out.push("");

  if (r.accuracy) {
    const a = r.accuracy;
    out.push(`Accuracy: estimated error ±${formatNumber(100 * a.richardson.relativeError, 2)} % of the largest entry in each row`);
    const ad = a.adaptive;
    if (ad) {
      out.push(`  requested ${accuracyRequest(ad)}, worst ${formatNumber(100 * governingError(a.richardson, ad.governing), 2)} %`);
      out.push(`  ${ad.marking === "dorfler" ? "adaptive" : "uniform"} refinement over ${a.levels.map((l) => l.panels).join(" → ")} panels; extrapolated with a fitted order ${Number.isFinite(a.richardson.order) ? formatNumber(a.richardson.order, 3) : "(none: no steady convergence)"}`);
    } else if (!Number.isFinite(a.richardson.order)) out.push(`  over ${a.levels.map((l) => l.panels).join(" → ")} panels: no steady convergence, the finest values are reported with twice their last change as the error`);
    else out.push(`  Richardson extrapolation over ${a.levels.map((l) => l.panels).join(" → ")} panels, order ${formatNumber(a.richardson.order, 3)} ${a.richardson.orderObserved ? "(observed)" : "(assumed; use --refine 2 to observe it)"}`);
    out.push("  capacitances, charges and energy are printed to the digits this estimate supports");
    // Only nested refinements of the same flat panels bound from below (accuracy.ts).
    if (a.lowerBound) {
      // With the digits of the table's entry, rounded down so that it stays a bound.
      const finest = a.levels[a.levels.length - 1].maxwell[0];
      const d = cDigits(r.maxwell[0], err?.[0]);
      const step = 10 ** (Math.floor(Math.log10(Math.abs(finest))) - d + 1);
      out.push(`  Galerkin values converge from below: the finest-mesh diagonal ${formatSI(Math.floor(finest / step) * step, "F", d)} is a lower bound for ${r.names[0]}`);
    }
    else if (r.solver.method === "galerkin" && !r.dielectric && !a.nested) out.push("  refinement moved the panels toward the curved surface, so the finest-mesh values are not lower bounds");
  } else {
    out.push("Accuracy: not estimated (run with --refine 1 or more for a Richardson error estimate); values printed to 3 significant digits");
  }
  out.push("");

  const s = r.solver;
  const solverLine = s.solver === "direct"
    ? `direct (factorisation ${formatNumber(s.factorGflops ?? NaN, 3)} GFLOP/s)`
    : s.compressionRatio !== undefined
      ? `compressed (storage ${formatNumber(100 * s.compressionRatio, 3)} % of dense, ranks ≤ ${s.maxRank}, operator ${formatSI(s.operatorBytes ?? NaN, "B", 3)}; ${s.iterations} iterations, residual ${s.residual?.toExponential(1)})`
      : `iterative (${s.iterations} iterations, residual ${s.residual?.toExponential(1)})`;
  out.push(`Solver: ${s.method}, ${solverLine}; ${s.panels} panels, ${formatNumber(s.seconds, 3)} s of solve and fields, peak memory ${formatSI(s.peakMemory, "B", 3)}`);
  const t = (ctx as Partial<SummaryContext>).timing;
  if (t) out.push(`Time: ${formatNumber(t.total, 3)} s in all (solve and fields ${formatNumber(s.seconds, 3)} s, reports ${formatNumber(t.reports, 3)} s, reading and checks ${formatNumber(Math.max(0, t.total - s.seconds - t.reports), 3)} s)`);
  out.push("");

  const perMedium = r.media.length > 1;
  out.push(perMedium
    ? `Field check (each panel against the medium just outside it: ${r.media.map((m) => `${m.name} ${formatFieldStrength(m.breakdownField)}`).join(", ")})`
    : `Field check (breakdown field ${formatFieldStrength(r.breakdownField)})`);
  for (const c of r.conductors) out.push(`  ${c.name}: ${fieldCheckLine(c, perMedium, ctx.unit, r.accuracy !== undefined)}`);
  out.push("");
  out.push("Cautions");
  for (const line of cautionsFor(r.potentials, { perMedium: r.media.length > 1 })) out.push(`  - ${line}`);
  const remeshed = (r as SceneExtraction).input?.remesh;
  const warnings = remeshed ? [remeshSentence(remeshed, (r as SceneExtraction).input.scene !== undefined), ...r.warnings] : r.warnings;
  if (warnings.length) {
    out.push("");
    out.push("Warnings");
    for (const w of warnings) out.push(`  - ${w}`);
  }
  return out.map(displayText).join("\n") + "\n";
}

/**
 * One conductor's field check. A converged peak gets its value (to the digits its error supports,
 * with the error when refinement measured it) and the margin to breakdown. A peak at a sharp edge
 * is no breakdown verdict: the exact field there is unbounded and the computed one depends on the
 * mesh, so the line says so, with the growth exponent when refinement measured it.
 */
export function fieldCheckLine(c: ExtractionResult["conductors"][number], perMedium: boolean, unit: LengthUnit, refined = false): string {
  const where = perMedium
    ? `; critical in ${c.medium} (${formatFieldStrength(c.mediumBreakdownField)}): ${formatFieldStrength(c.criticalField)} at ${formatPoint(c.criticalFieldAt, unit, 3)}`
    : "";
  if (c.peakFieldSingular) {
    const growth = c.peakFieldGrowth !== null
      ? `the computed peak grows as the mesh is refined (exponent ${formatNumber(c.peakFieldGrowth, 2)})`
      : refined
        // Refined, yet no growth: per-level peaks are not computed with dielectric bodies or images
        // "both", and an adaptive step may have left the peak panel as it was.
        ? "the computed peak grows as the mesh is refined (its rate is not measured in this run)"
        : "the computed peak grows as the mesh is refined (run with --refine 1 or more to measure how fast)";
    return `peak ${formatFieldStrength(c.peakField)} at ${formatPoint(c.peakFieldAt, unit, 3)}${where} — sharp edge: ${growth}; model the real edge radius`;
  }
  const margin = c.fieldRatio > 0 ? 1 / c.fieldRatio : Infinity;
  const verdict = c.fieldRatio >= 1 ? "EXCEEDS the breakdown field" : `${formatNumber(margin, 3)}× below breakdown`;
  const error = c.peakFieldError !== null ? c.peakFieldError * c.peakField : undefined;
  const value = formatFieldStrength(c.peakField, digitsFor(c.peakField, error));
  const plusMinus = c.peakFieldError !== null ? ` ± ${formatNumber(100 * c.peakFieldError, 2)} %` : "";
  return `peak ${value}${plusMinus}${where} — ${verdict}`;
}
