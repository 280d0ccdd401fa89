/**
 * The outputs of an extraction, written as one set: the JSON report, the HTML report with the 3D
 * view, the SPICE subcircuit, CSV and Markdown tables, the probe table with a field plot per
 * probe line, and the convergence plot. The targets are checked before any work
 * (`checkOutputTargets`); every file is built in memory and then written all or none
 * (src/io/atomic.ts `writeFilesAtomic`); `-` sends one of them to the caller instead (the CLI
 * prints it on standard output).
 */
import { basename, dirname, extname, join } from "node:path";
import type { SceneExtraction } from "../extract/extract.js";
import { distanceAlong } from "../io/probe-spec.js";
import { probeCsv, fieldMagnitude } from "./probe-csv.js";
import { metresPer } from "../io/units.js";
import { InputError } from "../errors.js";
import { writeFilesAtomic, checkOutputPaths, type OutputData } from "../io/atomic.js";
import { version } from "../version.js";
import { spiceSubcircuit } from "./spice.js";
import { csvReport, markdownReport, reportData } from "./csv.js";
import { fieldAlongLineSvg, convergencePlotSvg } from "./svg-plot.js";
import { unitLabel } from "../io/si.js";
import { jsonDisplaySafe } from "../io/display-text.js";
import { htmlReport } from "./html.js";
import { viewerData, viewerDataJson, packViewerData } from "./viewer-data.js";
import { extractionReport, nonFiniteAsNull } from "./json.js";

/** One file of the set; `option` is the option that named it, for messages. */
export type OutputFile = OutputData;

/** Where each output goes: a path, `-` for the caller (at most one), or nothing. */
export interface OutputTargets {
  /** The JSON report. */
  json?: string;
  /** Include the panel geometry, charges and fields in the JSON report (for `sigmesh view`). */
  jsonPanels?: boolean;
  /** Self-contained HTML report with the 3D viewer. */
  html?: string;
  /** SPICE subcircuit of the two-terminal capacitances, named after the file. */
  spice?: string;
  /** Capacitors below this fraction of the largest are left out of the netlist (default 1e-4). */
  spiceThreshold?: number;
  csv?: string;
  markdown?: string;
  /** CSV of all probes; a field plot per line probe is written beside it (`<stem>-<name>.svg`). */
  probeCsv?: string;
  /** Convergence plot of the first Maxwell diagonal entry (needs a refined run). */
  convergenceSvg?: string;
}

const TARGET_OPTIONS: Array<[keyof OutputTargets, string]> = [
  ["json", "--json"], ["html", "--html"], ["spice", "--spice"], ["csv", "--csv"], ["markdown", "--markdown"], ["probeCsv", "--probe-csv"], ["convergenceSvg", "--convergence-svg"],
];

/**
 * Where probe results go when no `probeCsv` is given: beside the first report written to a file
 * (JSON, HTML, CSV, Markdown, SPICE), else in the current folder, named after the input
 * (`board.json` → `board-probes.csv`), so that runs of different scenes do not overwrite each
 * other's results.
 */
export function defaultProbeCsv(targets: OutputTargets, input: string): string {
  const report = [targets.json, targets.html, targets.csv, targets.markdown, targets.spice].find((p) => typeof p === "string" && p !== "-");
  const stem = basename(input, extname(input)) || "sigmesh";
  return join(report === undefined ? "." : dirname(report), `${stem}-probes.csv`);
}

/**
 * Refuse targets that cannot all be written, before any work: two outputs to the caller (`-`),
 * a convergence plot without refinement (`refine` = the run's refinements), and any path that
 * `checkOutputPaths` refuses (a missing folder above the output's own, a folder not writable,
 * a target that is a folder or a device, one file named twice).
 */
export function checkOutputTargets(targets: OutputTargets, refine?: number): void {
  const given = TARGET_OPTIONS.filter(([key]) => typeof targets[key] === "string") as Array<[keyof OutputTargets, string]>;
  const piped = given.filter(([key]) => targets[key] === "-").map(([, option]) => option);
  if (piped.length > 1) throw new InputError(`${piped.join(" and ")} ask for standard output (-); only one output can go there`);
  if (targets.convergenceSvg && refine !== undefined && refine === 0) throw new InputError("--convergence-svg needs --refine 1 or more");
  checkOutputPaths(given.map(([key, option]) => ({ path: targets[key] as string, option })));
}

/** The JSON report of an extraction as an object (SI units; fields documented in README.md). */
export function sceneReport(result: SceneExtraction, opts: { panels?: boolean } = {}): Record<string, unknown> {
  const report = extractionReport(result, {
    version: version(), files: result.input.files, scene: result.input.scene, unit: result.input.unit, inputWarnings: result.input.warnings,
    title: result.input.title, parameters: result.input.parameters, remesh: result.input.remesh,
  });
  if (opts.panels) report.viewer = viewerDataJson(result);
  return report;
}

/**
 * JSON text with non-finite numbers as null (JSON has no NaN or Infinity), and control and
 * format characters in strings as `\u` escapes: the same names when read, safe to show.
 */
export function jsonText(value: unknown): string {
  return jsonDisplaySafe(JSON.stringify(value, nonFiniteAsNull, 2)) + "\n";
}

/** What `writeOutputs` did: the files written, and the text of the output sent to `-`, if any. */
export interface WrittenOutputs { written: string[]; piped?: string }

/** Write a result's outputs as one set, all or none. */
export function writeOutputs(result: SceneExtraction, targets: OutputTargets): WrittenOutputs {
  checkOutputTargets(targets, result.accuracy ? result.accuracy.levels.length - 1 : 0);
  const files = extractionFiles(result, targets);
  const piped = files.find((f) => f.path === "-");
  const written = files.filter((f) => f.path !== "-");
  // Checked again with the plots beside the probe table, whose names come from the probes.
  writeFilesAtomic(written);
  return { written: written.map((f) => f.path), piped: piped ? (typeof piped.data === "string" ? piped.data : Buffer.from(piped.data).toString("utf8")) : undefined };
}

function safeStem(name: string): string {
  return name.replace(/[^A-Za-z0-9._-]+/g, "_").replace(/^_+|_+$/g, "") || "probe";
}

/** Every file of the set, in memory (paths as given; `-` for the caller). */
export function extractionFiles(result: SceneExtraction, req: OutputTargets): OutputFile[] {
  const unit = result.input.unit, title = result.input.source;
  const report = sceneReport(result);
  // The panel data is computed once, for the HTML and for the JSON report's `viewer` field.
  const viewer = req.html || req.jsonPanels ? viewerData(result) : undefined;
  const files: OutputFile[] = [];
  const plots: Array<{ title: string; svg: string }> = [];
  if (req.spice) {
    // With floating conductors the circuit sees only the driven ones: the reduced matrix.
    files.push({ path: req.spice, option: "--spice", data: spiceSubcircuit(result.reducedNames, result.reducedMutual, {
      // The deck's first line: the scene's own title with the input's name, else the name alone.
      reference: result.reference, relativeThreshold: req.spiceThreshold, eliminated: result.floatingNames,
      title: result.input.title && result.input.title.trim() !== "" ? `${result.input.title} (${title})` : title,
      // Named after the file, so that several extracted netlists can be included in one deck.
      subcktName: req.spice === "-" ? undefined : basename(req.spice, extname(req.spice)),
    }) });
  }
  if (req.csv || req.markdown) {
    const data = reportData(JSON.parse(JSON.stringify(report, nonFiniteAsNull)));
    if (req.csv) files.push({ path: req.csv, option: "--csv", data: csvReport(data) });
    if (req.markdown) files.push({ path: req.markdown, option: "--markdown", data: markdownReport(data, { title }) });
  }
  if (result.probes.length > 0 && req.probeCsv) {
    const runs = result.probes;
    // One header for all requests: the distance column when any is a line, i and j when any is a grid.
    const columns = { distance: runs.some((r) => r.spec.kind === "line"), grid: runs.some((r) => r.spec.kind === "grid") };
    const parts = runs.map((r, i) => {
      const text = probeCsv(r.spec, r.points, r.result, unit, columns);
      return i === 0 ? text : text.slice(text.indexOf("\n") + 1);
    });
    files.push({ path: req.probeCsv, option: "--probe-csv", data: parts.join("") });
    const stem = req.probeCsv === "-" ? "probes" : join(dirname(req.probeCsv), basename(req.probeCsv, extname(req.probeCsv)));
    // Names that differ only in characters a file name cannot hold get a number, so that no plot replaces another.
    const used = new Set<string>();
    for (const r of runs) {
      if (r.spec.kind !== "line") continue;
      let name = safeStem(r.spec.name);
      for (let k = 2; used.has(name.toLowerCase()); k++) name = `${safeStem(r.spec.name)}-${k}`;
      used.add(name.toLowerCase());
      const d = distanceAlong(r.points), s = metresPer(unit);
      const dist = Float64Array.from(d, (x) => x / s);
      const svg = fieldAlongLineSvg(dist, fieldMagnitude(r.result), { lengthUnit: unitLabel(unit), breakdownField: result.breakdownField, title: `Field along ${r.spec.name}` });
      files.push({ path: `${stem}-${name}.svg`, option: `the plot of probe line ${r.spec.name}`, data: svg });
      plots.push({ title: `Field along probe line ${r.spec.name}`, svg });
    }
  }
  if (result.accuracy && (req.convergenceSvg || req.html)) {
    const svg = convergencePlotSvg(result.accuracy.levels.map((l) => ({ panels: l.panels, value: l.maxwell[0] })), result.maxwell[0], `C(${result.names[0]})`, { unit: "F" });
    if (req.convergenceSvg) files.push({ path: req.convergenceSvg, option: "--convergence-svg", data: svg });
    plots.push({ title: `Convergence of C(${result.names[0]}) under refinement`, svg });
  }
  if (req.html) files.push({ path: req.html, option: "--html", data: htmlReport(report, viewer!, undefined, plots) });
  if (req.json !== undefined) files.push({ path: req.json, option: "--json", data: jsonText(req.jsonPanels ? { ...report, viewer: packViewerData(viewer!) } : report) });
  return files;
}
