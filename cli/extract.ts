/**
 * `sigmesh extract <scene.json | mesh files...>`: capacitance matrices, charges, surface
 * fields, energy, forces and (with --refine) an error estimate. A thin shell over
 * `loadScene`, `checkMesh`, `extract`, `extractionReport` and `extractionSummary`.
 */
import type { Command } from "commander";
import { createRequire } from "node:module";
import { loadScene } from "../src/io/inputs.js";
import { parseUnit } from "../src/io/units.js";
import { InputError } from "../src/errors.js";
import { checkMesh } from "../src/mesh/check.js";
import { pairSentence } from "../src/report/check-summary.js";
import { extractMesh } from "../src/extract/extract-mesh.js";
import { extractionReport } from "../src/report/json.js";
import { extractionSummary } from "../src/report/extract-summary.js";
import { closeSharedPool } from "../src/linalg/pool.js";
import { action, printWarnings, collect } from "./common.js";
import { progressBar } from "./progress.js";
import { extractionOutputs } from "../src/report/outputs.js";
import { viewerDataJson } from "../src/report/viewer-data.js";
import { parseProbeOption } from "../src/io/probe-spec.js";
import { writeFilesAtomic } from "../src/io/atomic.js";

export interface ExtractCliOptions {
  unit?: string;
  json?: string;
  potential: string[];
  method: string;
  solver: string;
  refine: string;
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
}

function version(): string {
  return (createRequire(import.meta.url)("../../package.json") as { version: string }).version;
}

function number(text: string, option: string, check: (x: number) => boolean, what: string): number {
  const x = Number(text);
  if (text.trim() === "" || !Number.isFinite(x) || !check(x)) throw new InputError(`${option} "${text}": expected ${what}`);
  return x;
}

/** Parse repeated NAME=VOLTS options. */
export function parsePotentials(items: string[]): Record<string, number> {
  const out: Record<string, number> = {};
  for (const item of items) {
    const eq = item.lastIndexOf("=");
    if (eq <= 0) throw new InputError(`--potential "${item}": expected NAME=VOLTS, e.g. --potential pad=5`);
    const name = item.slice(0, eq).trim();
    const volts = number(item.slice(eq + 1), `--potential ${name}`, () => true, "a number of volts");
    out[name] = volts;
  }
  return out;
}

function toJson(value: unknown): string {
  return JSON.stringify(value, (_k, v) => (typeof v === "number" && !Number.isFinite(v) ? null : v), 2);
}

export function registerExtract(program: Command): void {
  program
    .command("extract")
    .description("solve for the capacitance matrices, charges, surface fields, energy and forces of the conductors")
    .argument("<inputs...>", "a scene file (.json) or mesh files (STL, OBJ, Gmsh MSH) whose bodies are the conductors")
    .option("--unit <unit>", "length unit of the mesh files: m, cm, mm, um, in, mil, or spelled out (default: the scene's, else mm)")
    .option("--potential <name=volts>", "working potential of a conductor (repeatable)", collect, [])
    .option("--method <method>", "discretisation: galerkin or collocation", "galerkin")
    .option("--solver <solver>", "auto, direct (dense factorisation), iterative (dense Krylov) or compressed (hierarchical low-rank + Krylov, for large models)", "auto")
    .option("--refine <K>", "also solve on K uniform refinements and extrapolate, with an error estimate", "0")
    .option("--tol <relative>", "requested relative accuracy of the capacitances (solver tolerance)", "1e-4")
    .option("--permittivity <er>", "relative permittivity of the medium (overrides the scene)")
    .option("--breakdown-field <V/m>", "breakdown strength of the medium for the field check (default 3e6, air)")
    .option("--ground-plane <axis=pos>", "an infinite grounded plane, e.g. z=0 (user unit); it becomes the reference")
    .option("--symmetry <axis=pos[:images]>", "a mirror symmetry plane of the model, e.g. x=0 (repeatable): mesh only one side; images even (default), odd (mirror half at the opposite potential) or both (mirror half its own conductors, name~x; x=0:both:opposite drives them at the opposite potential)", collect, [])
    .option("--floating <name>", "leave this conductor floating: no net charge, potential solved for (repeatable)", collect, [])
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
    .option("--probe-csv <file>", "where the probe results go (default probes.csv); line probes also get an SVG field plot beside it")
    .option("--convergence-svg <file>", "with --refine: plot the first conductor's capacitance against panel count")
    .option("--quiet", "print only errors and warnings")
    .action(action((inputs: string[], opts: ExtractCliOptions) => runExtract(inputs, opts)));
}

/** The whole extract command for these inputs and options (also used by `sigmesh demo`). */
export async function runExtract(inputs: string[], opts: ExtractCliOptions): Promise<void> {
  const method = opts.method;
  if (method !== "galerkin" && method !== "collocation") throw new InputError(`--method "${method}": use galerkin or collocation`);
  const solver = opts.solver;
  if (solver !== "auto" && solver !== "direct" && solver !== "iterative" && solver !== "compressed") throw new InputError(`--solver "${solver}": use auto, direct, iterative or compressed`);
  const refine = number(opts.refine, "--refine", (x) => Number.isInteger(x) && x >= 0 && x <= 4, "a whole number from 0 to 4");
  const tolerance = number(opts.tol, "--tol", (x) => x > 0 && x < 1, "a number between 0 and 1, e.g. 1e-4");
  const permittivity = opts.permittivity === undefined ? undefined : number(opts.permittivity, "--permittivity", (x) => x >= 1, "a relative permittivity of at least 1");
  const breakdown = opts.breakdownField === undefined ? undefined : number(opts.breakdownField, "--breakdown-field", (x) => x > 0, "a positive field in V/m, e.g. 3e6");
  if (opts.split && opts.merge) throw new InputError("--split and --merge cannot be used together");
  const probes = (opts.probe ?? []).map((text, i) => parseProbeOption(text, "--probe", i + 1));
  const spiceThreshold = opts.spiceThreshold === undefined ? undefined : number(opts.spiceThreshold, "--spice-threshold", (x) => x >= 0 && x < 1, "a fraction between 0 and 1");
  if (opts.convergenceSvg && refine === 0) throw new InputError("--convergence-svg needs --refine 1 or more");
  const toStdout = ([["--json", opts.json], ["--html", opts.html], ["--spice", opts.spice], ["--csv", opts.csv], ["--markdown", opts.markdown], ["--probe-csv", opts.probeCsv]] as const)
    .filter(([, v]) => v === "-").map(([name]) => name);
  if (toStdout.length > 1) throw new InputError(`${toStdout.join(" and ")} ask for standard output (-); only one output can go there`);

  const scene = loadScene(inputs, {
    unit: opts.unit === undefined ? undefined : parseUnit(opts.unit, "--unit"),
    split: opts.split, merge: opts.merge, potentials: parsePotentials(opts.potential),
    groundPlane: opts.groundPlane, symmetry: opts.symmetry && opts.symmetry.length ? opts.symmetry : undefined,
    floating: opts.floating && opts.floating.length ? opts.floating : undefined,
  });
  printWarnings(scene.warnings, false);
  const check = checkMesh(scene.mesh);
  const errors = check.pairs.filter((p) => p.severity === "error");
  if (errors.length > 0) throw new InputError(`${pairSentence(errors[0], scene.unit)}${errors.length > 1 ? ` (and ${errors.length - 1} more; run sigmesh check)` : ""}`, scene.scene ?? scene.files.join(", "));
  const inputWarnings = check.pairs.filter((p) => p.severity === "warning").map((p) => pairSentence(p, scene.unit));
  printWarnings(inputWarnings.map((message) => ({ message })), false);

  const bar = progressBar(!opts.quiet);
  let result;
  try {
    result = await extractMesh(scene.mesh, {
      permittivity: permittivity ?? scene.permittivity,
      method, solver, refine, tolerance, potentials: scene.potentials,
      breakdownField: breakdown ?? scene.breakdownField,
      groundPlane: scene.groundPlane, symmetry: scene.symmetry, floating: scene.floating,
      dielectrics: scene.dielectrics.length ? scene.dielectrics : undefined,
      progress: (phase, f, level, levels) => bar.update(phase, f, level, levels),
    });
  } finally {
    bar.stop();
    await closeSharedPool();
  }
  const report = extractionReport(result, {
    version: version(), files: scene.files, scene: scene.scene, unit: scene.unit,
    inputWarnings: [...scene.warnings.map((w) => (w.file ? `${w.file}: ` : "") + w.message), ...inputWarnings],
  });
  if (opts.jsonPanels) report.viewer = viewerDataJson(result);
  const files = extractionOutputs(result, report, scene.unit, {
    html: opts.html, spice: opts.spice, spiceThreshold, csv: opts.csv, markdown: opts.markdown,
    probes: [...scene.probes, ...probes], probeCsv: scene.probes.length + probes.length > 0 ? (opts.probeCsv ?? "probes.csv") : undefined, convergenceSvg: opts.convergenceSvg,
  }, scene.scene ?? scene.files.join(", "));
  if (opts.json !== undefined) files.push({ path: opts.json, data: toJson(report) + "\n" });
  // "-" is standard output (one output at most, checked above); the summary then goes to stderr.
  const piped = files.find((f) => f.path === "-");
  writeFilesAtomic(files.filter((f) => f.path !== "-"));
  if (piped) process.stdout.write(piped.data);
  if (!opts.quiet) {
    const text = extractionSummary(result, { unit: scene.unit, unitAssumed: scene.unitAssumed, source: scene.scene ?? scene.files.join(", ") });
    (piped ? process.stderr : process.stdout).write(text);
  } else {
    printWarnings(result.warnings.map((message) => ({ message })), false);
  }
}
