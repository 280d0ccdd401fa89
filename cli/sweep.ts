/**
 * `sigmesh sweep <scene.json> --vary NAME=...`: the scene extracted over a grid of its
 * parameters, a CSV table and an SVG plot of chosen matrix entries; `sigmesh sweep merge`
 * joins the tables of `--shard` slices. A thin shell over src/extract/sweep.ts.
 */
import type { Command } from "commander";
import { extname } from "node:path";
import { InputError } from "../src/errors.js";
import { writeFilesAtomic, checkOutputPaths } from "../src/io/atomic.js";
import { readInputText } from "../src/io/input-file.js";
import { closeSharedPool } from "../src/linalg/pool.js";
import { parseVary, sweepGrid, parseShard, shardPoints, parseEntries, defaultEntries, sceneConductorNames, sceneLengthUnit, describePoint } from "../src/extract/sweep.js";
import { planResume, runResumable, finishResumable } from "../src/extract/sweep-resume.js";
import { sweepFiles, mergeSweepCsv } from "../src/report/sweep-table.js";
import { displayText } from "../src/io/display-text.js";
import { unitLabel } from "../src/io/si.js";
import { action, printWarnings, reportFailure } from "./common.js";
import { accuracySettings, collect, countOption, solveSettings } from "./options.js";


export interface SweepCliOptions {
  vary: string[];
  entries?: string;
  csv: string;
  svg?: string;
  shard?: string;
  processes?: string;
  method: string;
  solver: string;
  tol: string;
  refine: string;
  accuracy?: string;
  maxPanels?: string;
  resume?: boolean;
  quiet?: boolean;
}

export async function runSweepCommand(scene: string, opts: SweepCliOptions): Promise<void> {
  if (extname(scene).toLowerCase() !== ".json") throw new InputError("a sweep takes a scene file (.json) with parameters", scene);
  if (opts.vary.length === 0) throw new InputError("--vary NAME=START:STOP:COUNT is required (e.g. --vary gap=1:5:9)");
  const { method, solver, tolerance, refine } = solveSettings(opts);
  const { accuracy, maxPanels } = accuracySettings(opts, refine);
  const processes = opts.processes === undefined ? 0 : countOption(opts.processes, "--processes", 256);
  const axes = opts.vary.map(parseVary);
  const points = sweepGrid(axes);
  const shard = opts.shard === undefined ? undefined : parseShard(opts.shard);
  const indices = shardPoints(points.length, shard);
  // The table's folder also takes the journal: checked before anything runs.
  checkOutputPaths([{ path: opts.csv, option: "--csv" }, ...(opts.svg === undefined ? [] : [{ path: opts.svg, option: "--svg" }])]);
  // Names and parameters are checked on the first point before anything runs.
  const names = sceneConductorNames(scene, points[0]);
  const entries = opts.entries === undefined ? defaultEntries(names) : parseEntries(opts.entries, names);
  // The journal keeps finished points across a failed or interrupted run; --resume reuses them.
  const runOpts = { method, solver, tolerance, refine, accuracy, maxPanels, processes } as const;
  const plan = planResume(scene, points, indices, runOpts, opts.csv, Boolean(opts.resume));
  const { journalFile, toRun } = plan;
  const kept = plan.kept.size;
  if (!opts.quiet) {
    process.stderr.write(`sigmesh: sweep of ${displayText(scene)}: ${points.length} point${points.length === 1 ? "" : "s"}${shard ? `, slice ${shard.index}/${shard.count}: ${indices.length} of them` : ""}`
      + `${kept > 0 ? `, ${kept} kept from ${displayText(journalFile)}, ${toRun.length} to run` : ""}, ${processes > 0 ? `${processes} processes at a time` : "one at a time on every core"}\n`);
  }
  const start = Date.now();
  let shown = 0;
  const controller = new AbortController();
  const interrupted = (signal: NodeJS.Signals): void => {
    controller.abort();
    if (shown > 0) process.stderr.write("\n");
    process.stderr.write(`sigmesh: interrupted (${signal}); the points finished are kept in ${displayText(journalFile)}: rerun with --resume to run only the others\n`);
    // In this process a point cannot be stopped half-way, and the journal is complete up to the last line: leave now.
    if (processes <= 0) process.exit(signal === "SIGINT" ? 130 : 143);
    process.exitCode = signal === "SIGINT" ? 130 : 143;
  };
  process.once("SIGINT", interrupted);
  process.once("SIGTERM", interrupted);
  let outcome;
  try {
    outcome = await runResumable(scene, points, plan, {
      ...runOpts, signal: controller.signal,
      // Each point's warnings once, with its parameter values (a gap narrower than the panels, say).
      onResult: (k, r) => {
        if (!r.warnings || r.warnings.length === 0) return;
        if (shown > 0) process.stderr.write("\n");
        printWarnings(r.warnings.map((w) => ({ message: `${describePoint(k, points[k])}: ${w}` })), false);
      },
      // A live counter only on a terminal; logs get the closing line alone.
      onPoint: opts.quiet || !process.stderr.isTTY ? undefined : (done, total) => { shown = done; process.stderr.write(`\rsigmesh: ${done}/${total} points`); },
    });
  } catch (err) {
    if (controller.signal.aborted) return;
    throw err;
  } finally {
    process.off("SIGINT", interrupted);
    process.off("SIGTERM", interrupted);
    if (shown > 0 && !controller.signal.aborted) process.stderr.write("\n");
    await closeSharedPool();
  }
  const { results, failures } = outcome;
  if (failures.length > 0) {
    let code = 0;
    for (const f of failures) code = Math.max(code, reportFailure(f.error));
    process.stderr.write(`sigmesh: ${failures.length} of ${indices.length} points failed and no table was written; the ${results.size} finished are kept in ${displayText(journalFile)}: fix the scene and rerun with --resume to run only the others\n`);
    process.exitCode = code;
    return;
  }
  const files = sweepFiles(axes, entries, points, indices, results, { csv: opts.csv, svg: opts.svg, title: `sweep of ${scene}`, lengthUnit: unitLabel(sceneLengthUnit(scene, points[0])) });
  writeFilesAtomic(files);
  finishResumable(plan);
  if (!opts.quiet) process.stderr.write(`sigmesh: ${indices.length} points (${toRun.length} run) in ${((Date.now() - start) / 1000).toFixed(1)} s -> ${files.map((f) => displayText(f.path)).join(", ")}\n`);
}

export async function runSweepMerge(inputs: string[], opts: { csv: string; quiet?: boolean }): Promise<void> {
  checkOutputPaths([{ path: opts.csv, option: "--csv" }]);
  const files = inputs.map((file) => {
    return { file, text: readInputText(file, "table") };
  });
  const merged = mergeSweepCsv(files);
  writeFilesAtomic([{ path: opts.csv, option: "--csv", data: merged.text }]);
  if (merged.missing.length > 0) {
    const shown = merged.missing.slice(0, 20).join(", ") + (merged.missing.length > 20 ? `, ... (${merged.missing.length} in all)` : "");
    printWarnings([{ message: `${merged.missing.length} of ${merged.total} points are missing: ${shown}` }], false);
  } else if (!opts.quiet) {
    process.stderr.write(`sigmesh: ${merged.total} points from ${inputs.length} file${inputs.length === 1 ? "" : "s"} -> ${displayText(opts.csv)}\n`);
  }
}

export function registerSweep(program: Command): void {
  const sweep = program
    .command("sweep")
    .description("extract a scene over a grid of its parameters: a CSV table and an SVG plot of chosen capacitances")
    .argument("<scene>", "scene file (.json) with \"parameters\"")
    .option("--vary <spec>", "NAME=START:STOP:COUNT (linear), NAME=log:START:STOP:COUNT or NAME=V1,V2,...; repeat for a grid (the first varies slowest)", collect, [])
    .option("--entries <list>", "matrix entries by conductor names, e.g. \"C(pad,pad),Cm(pad,ground)\" (C Maxwell, Cm two-terminal; default: every C(i,i) and Cm(first,j))")
    .option("--csv <file>", "the table: one row per point", "sweep.csv")
    .option("--svg <file>", "plot of the entries against the first parameter")
    .option("--shard <I/N>", "run only points numbered I mod N (0-based), for a job array; join with sigmesh sweep merge")
    .option("--processes <N>", "points run as N child processes of one thread each; 0 (the default, measured faster for small scenes) runs them one at a time in this process on every core")
    .option("--method <method>", "galerkin or collocation", "galerkin")
    .option("--solver <solver>", "auto, direct, iterative or compressed", "auto")
    .option("--tol <relative>", "requested relative accuracy of the capacitances", "1e-4")
    .option("--refine <K>", "solve on K uniform refinements at each point and extrapolate", "0")
    .option("--accuracy <relative>", "refine each point where the error is until its capacitances are estimated within this relative error, e.g. 1e-3 or 0.1% (instead of --refine)")
    .option("--max-panels <N>", "with --accuracy: the most panels per point (default 200000)")
    .option("--resume", "keep the points an earlier, failed or interrupted run finished (kept in <csv>.journal) and run only the others")
    .option("--quiet", "print only errors and warnings")
    .action(action((scene: string, opts: SweepCliOptions) => runSweepCommand(scene, opts)));
  sweep
    .command("merge")
    .description("join the CSV tables of --shard slices into the table of the whole sweep")
    .argument("<tables...>", "CSV files written by sigmesh sweep --shard")
    .option("--csv <file>", "the joined table", "sweep.csv")
    .option("--quiet", "print only errors and warnings")
    .action(action((tables: string[], opts: { csv: string; quiet?: boolean }, cmd: Command) => {
      // The program reads options anywhere on the line, so `--csv` and `--quiet` after "merge" land on `sweep`, whose options they also are.
      const parent = cmd.parent!;
      const given = (key: string): boolean => parent.getOptionValueSource(key) === "cli";
      return runSweepMerge(tables, {
        csv: given("csv") ? (parent.opts().csv as string) : opts.csv,
        quiet: opts.quiet || (given("quiet") && Boolean(parent.opts().quiet)),
      });
    }));
}
