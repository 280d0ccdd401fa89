/**
 * The files an extraction writes besides the terminal summary, built in memory first so that
 * the CLI can write them all or none (src/io/atomic.ts `writeFilesAtomic`).
 */
import { basename, dirname, extname, join } from "node:path";
import type { ExtractionResult } from "../extract/extract-mesh.js";
import { probeExtraction, type ProbeResult } from "../extract/probe.js";
import { probePoints, distanceAlong, type ProbeSpec } from "../io/probe-spec.js";
import { probeCsv, fieldMagnitude } from "./probe-csv.js";
import { metresPer, type LengthUnit } from "../io/units.js";
import { spiceSubcircuit } from "./spice.js";
import { csvReport, markdownReport, reportData } from "./csv.js";
import { fieldAlongLineSvg, convergencePlotSvg } from "./svg-plot.js";
import { unitLabel } from "./si.js";
import { htmlReport } from "./html.js";
import { viewerData } from "./viewer-data.js";

export interface OutputFile { path: string; data: string | Uint8Array }

export interface OutputRequest {
  /** Self-contained HTML report with the 3D viewer. */
  html?: string;
  spice?: string;
  spiceThreshold?: number;
  csv?: string;
  markdown?: string;
  /** CSV of all probes; a field plot per line probe is written beside it (`<stem>-<name>.svg`). */
  probeCsv?: string;
  probes?: ProbeSpec[];
  /** Convergence plot of the first Maxwell diagonal entry (needs --refine). */
  convergenceSvg?: string;
}

export interface ProbeRun { spec: ProbeSpec; points: Float64Array; result: ProbeResult }

/** Evaluate probe requests on an extraction (points in the user's unit). */
export function runProbes(result: ExtractionResult, specs: ProbeSpec[], unit: LengthUnit): ProbeRun[] {
  return specs.map((spec) => {
    const points = probePoints(spec, metresPer(unit));
    return { spec, points, result: probeExtraction(result, points) };
  });
}

function safeStem(name: string): string {
  return name.replace(/[^A-Za-z0-9._-]+/g, "_").replace(/^_+|_+$/g, "") || "probe";
}

export function extractionOutputs(result: ExtractionResult, report: Record<string, unknown>, unit: LengthUnit, req: OutputRequest, title?: string): OutputFile[] {
  const files: OutputFile[] = [];
  const plots: Array<{ title: string; svg: string }> = [];
  if (req.spice) {
    // With floating conductors the circuit sees only the driven ones: the reduced matrix.
    files.push({ path: req.spice, data: spiceSubcircuit(result.reducedNames, result.reducedMutual, {
      reference: result.reference, relativeThreshold: req.spiceThreshold, title, eliminated: result.floatingNames,
      // Named after the file, so that several extracted netlists can be included in one deck.
      subcktName: req.spice === "-" ? undefined : basename(req.spice, extname(req.spice)),
    }) });
  }
  if (req.csv || req.markdown) {
    const data = reportData(JSON.parse(JSON.stringify(report, (_k, v) => (typeof v === "number" && !Number.isFinite(v) ? null : v))));
    if (req.csv) files.push({ path: req.csv, data: csvReport(data) });
    if (req.markdown) files.push({ path: req.markdown, data: markdownReport(data, { title }) });
  }
  if (req.probes && req.probes.length > 0 && req.probeCsv) {
    const runs = runProbes(result, req.probes, unit);
    // One header for all requests: the distance column when any is a line, i and j when any is a grid.
    const columns = { distance: runs.some((r) => r.spec.kind === "line"), grid: runs.some((r) => r.spec.kind === "grid") };
    const parts = runs.map((r, i) => {
      const text = probeCsv(r.spec, r.points, r.result, unit, columns);
      return i === 0 ? text : text.slice(text.indexOf("\n") + 1);
    });
    files.push({ path: req.probeCsv, data: parts.join("") });
    const stem = req.probeCsv === "-" ? "probes" : join(dirname(req.probeCsv), basename(req.probeCsv, extname(req.probeCsv)));
    for (const r of runs) {
      if (r.spec.kind !== "line") continue;
      const d = distanceAlong(r.points), s = metresPer(unit);
      const dist = Float64Array.from(d, (x) => x / s);
      const svg = fieldAlongLineSvg(dist, fieldMagnitude(r.result), { lengthUnit: unitLabel(unit), breakdownField: result.breakdownField, title: `Field along ${r.spec.name}` });
      files.push({ path: `${stem}-${safeStem(r.spec.name)}.svg`, data: svg });
      plots.push({ title: `Field along probe line ${r.spec.name}`, svg });
    }
  }
  if (result.accuracy && (req.convergenceSvg || req.html)) {
    const svg = convergencePlotSvg(result.accuracy.levels.map((l) => ({ panels: l.panels, value: l.maxwell[0] })), result.maxwell[0], `C(${result.names[0]})`, { unit: "F" });
    if (req.convergenceSvg) files.push({ path: req.convergenceSvg, data: svg });
    plots.push({ title: `Convergence of C(${result.names[0]}) under refinement`, svg });
  }
  if (req.html) files.push({ path: req.html, data: htmlReport(report, viewerData(result), undefined, plots) });
  return files;
}
