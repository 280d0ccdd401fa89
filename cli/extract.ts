/**
 * `sigmesh extract <scene.json | mesh files...>`: capacitance matrices, charges, surface
 * fields, energy, forces and (with --refine) an error estimate. Argument parsing and printing
 * over the library: `loadScene`, `extract`, `writeOutputs`, `extractionSummary`.
 */
import type { Command } from "commander";
import { loadScene } from "../src/io/inputs.js";
import { parseUnit } from "../src/io/units.js";
import { InputError } from "../src/errors.js";
import { extract } from "../src/extract/extract.js";
import { parseProbeOption } from "../src/io/probe-spec.js";
import { extractionSummary } from "../src/report/extract-summary.js";
import { writeOutputs, checkOutputTargets, defaultProbeCsv, type OutputTargets } from "../src/report/outputs.js";
import { displayText } from "../src/io/display-text.js";
import { closeSharedPool } from "../src/linalg/pool.js";
import { action, printWarnings } from "./common.js";
import { accuracySettings, collect, numberOption, parsePotentials, solveSettings } from "./options.js";
import { progressBar } from "./progress.js";

export interface ExtractCliOptions {
  unit?: string;
  json?: string;
  potential: string[];
  method: string;
  solver: string;
  refine: string;
  accuracy?: string;
  maxPanels?: string;
  tol: string;
  permittivity?: string;
  breakdownField?: string;
  split?: boolean;
  merge?: boolean;
  quiet?: boolean;
  spice?: string;
  spiceThreshold?: string;
  csv?: string;
  markdown?: string;
  probe?: string[];
  probeCsv?: string;
  convergenceSvg?: string;
  html?: string;
  jsonPanels?: boolean;
  groundPlane?: string;
  symmetry?: string[];
  floating?: string[];
  panelSize?: string;
  keepMesh?: boolean;
}

export function registerExtract(program: Command): void {
  program
    .command("extract")
    .description("solve for the capacitance matrices, charges, surface fields, energy and forces of the conductors")
    .argument("<inputs...>", "a scene file (.json), or mesh or CAD files (STL, OBJ, Gmsh MSH, STEP, IGES, BREP) whose bodies or parts are the conductors")
    .option("--unit <unit>", "length unit of the mesh files: m, cm, mm, um, in, mil, or spelled out (default: the scene's, else mm)")
    .option("--potential <name=volts>", "working potential of a conductor (repeatable)", collect, [])
    .option("--method <method>", "discretisation: galerkin or collocation", "galerkin")
    .option("--solver <solver>", "auto, direct (dense factorisation), iterative (dense Krylov) or compressed (hierarchical low-rank + Krylov, for large models)", "auto")
    .option("--refine <K>", "also solve on K uniform refinements and extrapolate, with an error estimate", "0")
    .option("--accuracy <relative>", "refine where the error is until every capacitance that matters is estimated within this relative error, e.g. 1e-3 or 0.1% (instead of --refine)")
    .option("--max-panels <N>", "with --accuracy: the most panels the refinement may reach (default 200000)")
    .option("--tol <relative>", "requested relative accuracy of the capacitances (solver tolerance)", "1e-4")
    .option("--permittivity <er>", "relative permittivity of the medium (overrides the scene)")
    .option("--breakdown-field <V/m>", "breakdown strength of the medium for the field check (default 3e6, air)")
    .option("--ground-plane <axis=pos>", "an infinite grounded plane, e.g. z=0 (user unit); it becomes the reference")
    .option("--symmetry <axis=pos[:images]>", "a mirror symmetry plane of the model, e.g. x=0 (repeatable): mesh only one side; images even (default), odd (mirror half at the opposite potential) or both (mirror half its own conductors, name~x; x=0:both:opposite drives them at the opposite potential)", collect, [])
    .option("--floating <name>", "leave this conductor floating: no net charge, potential solved for (repeatable)", collect, [])
    .option("--panel-size <length>", "target panel size in the input unit: the largest panel where CAD-style flat faces of mesh files are remeshed, and the panel size on curved faces of CAD files (STEP, IGES, BREP) (default: from each face's and model's size, graded toward edges)")
    .option("--keep-mesh", "solve on the mesh files exactly as given: no remeshing of CAD-style flat faces (slivers)")
    .option("--split", "mesh files: each connected component is a conductor")
    .option("--merge", "mesh files: all groups of a file are one conductor")
    .option("--json <path>", "write the JSON report to a file, or - for standard output")
    .option("--json-panels", "include the panel geometry and charges in the JSON report (needed by sigmesh view)")
    .option("--html <file>", "write a self-contained HTML report with the 3D view of the charge and field")
    .option("--spice <file>", "write a SPICE subcircuit of the two-terminal capacitances")
    .option("--spice-threshold <relative>", "drop capacitors below this fraction of the largest (default 1e-4)")
    .option("--csv <file>", "write the matrices and conductor results as CSV")
    .option("--markdown <file>", "write Markdown tables for a design review")
    .option("--probe <spec>", "potential and field at points: point:x,y,z | line:x0,y0,z0:x1,y1,z1:n | grid:ox,oy,oz:ux,uy,uz:vx,vy,vz:nu,nv (user unit; NAME= prefix optional; repeatable)", collect, [])
    .option("--probe-csv <file>", "where the probe results go (default: NAME-probes.csv beside the first report file, NAME the input's; else in the current folder); line probes also get an SVG field plot beside it")
    .option("--convergence-svg <file>", "with --refine: plot the first conductor's capacitance against panel count")
    .option("--quiet", "print only errors and warnings")
    .action(action((inputs: string[], opts: ExtractCliOptions) => runExtract(inputs, opts)));
}

/** The whole extract command for these inputs and options (also used by `sigmesh demo`). */
export async function runExtract(inputs: string[], opts: ExtractCliOptions): Promise<void> {
  const start = performance.now();
  const solve = solveSettings(opts);
  const settings = { ...solve, ...accuracySettings(opts, solve.refine) };
  const refining = settings.accuracy !== undefined ? 1 : settings.refine;
  const permittivity = opts.permittivity === undefined ? undefined : numberOption(opts.permittivity, "--permittivity", (x) => x >= 1, "a relative permittivity of at least 1");
  const breakdownField = opts.breakdownField === undefined ? undefined : numberOption(opts.breakdownField, "--breakdown-field", (x) => x > 0, "a positive field in V/m, e.g. 3e6");
  if (opts.split && opts.merge) throw new InputError("--split and --merge cannot be used together");
  const panelSize = opts.panelSize === undefined ? undefined : numberOption(opts.panelSize, "--panel-size", (x) => x > 0, "a positive length in the input unit");
  const probes = (opts.probe ?? []).map((text, i) => parseProbeOption(text, "--probe", i + 1));
  const spiceThreshold = opts.spiceThreshold === undefined ? undefined : numberOption(opts.spiceThreshold, "--spice-threshold", (x) => x >= 0 && x < 1, "a fraction between 0 and 1");
  const targets: OutputTargets = {
    json: opts.json, jsonPanels: opts.jsonPanels, html: opts.html, spice: opts.spice, spiceThreshold, csv: opts.csv, markdown: opts.markdown,
    probeCsv: opts.probeCsv, convergenceSvg: opts.convergenceSvg,
  };
  checkOutputTargets(targets, refining);

  const scene = loadScene(inputs, {
    unit: opts.unit === undefined ? undefined : parseUnit(opts.unit, "--unit"),
    split: opts.split, merge: opts.merge, potentials: parsePotentials(opts.potential),
    groundPlane: opts.groundPlane, symmetry: opts.symmetry && opts.symmetry.length ? opts.symmetry : undefined,
    floating: opts.floating && opts.floating.length ? opts.floating : undefined,
    permittivity, breakdownField, panelSize, keepMesh: opts.keepMesh,
  });
  printWarnings(scene.warnings, false);
  // Probe results go beside the report, named after the input, unless told otherwise.
  if (targets.probeCsv === undefined && scene.probes.length + probes.length > 0) {
    targets.probeCsv = defaultProbeCsv(targets, scene.scene ?? scene.files[0]);
    checkOutputTargets(targets, refining);
  }

  const bar = progressBar(!opts.quiet);
  let result;
  try {
    result = await extract(scene, {
      ...settings, probes,
      warn: (message) => printWarnings([{ message }], false),
      progress: (phase, f, level, levels) => bar.update(phase, f, level, levels),
    });
  } finally {
    bar.stop();
    await closeSharedPool();
  }
  // The reports (the HTML's field data above all) can take a while: say so, and count it.
  const reportStart = performance.now();
  if (!opts.quiet && process.stderr.isTTY && (targets.html || targets.jsonPanels)) process.stderr.write("sigmesh: writing the reports (the field data of the 3D view)…\n");
  const { piped, written } = writeOutputs(result, targets);
  const timing = { total: (performance.now() - start) / 1e3, reports: (performance.now() - reportStart) / 1e3 };
  // "-" is standard output (one output at most); the summary then goes to stderr.
  if (piped !== undefined) process.stdout.write(piped);
  if (!opts.quiet) {
    const text = extractionSummary(result, { unit: scene.unit, unitAssumed: scene.unitAssumed, source: result.input.source, timing });
    const files = written.length > 0 ? `Written: ${written.map(displayText).join(", ")}\n` : "";
    (piped !== undefined ? process.stderr : process.stdout).write(text + files);
  } else {
    printWarnings(result.warnings.map((message) => ({ message })), false);
  }
}
