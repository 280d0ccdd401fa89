/**
 * `sigmesh sweep <scene.json> --vary NAME=...`: the scene extracted over a grid of its
 * parameters, a CSV table and an SVG plot of chosen matrix entries; `sigmesh sweep merge`
 * joins the tables of `--shard` slices. A thin shell over src/extract/sweep.ts.
 */
import type { Command } from "commander";
import { readFileSync } from "node:fs";
import { extname } from "node:path";
import { InputError } from "../src/io/errors.js";
import { writeFilesAtomic } from "../src/io/atomic.js";
import { closeSharedPool } from "../src/linalg/pool.js";
import {
  parseVary, sweepGrid, parseShard, shardPoints, parseEntries, defaultEntries, sceneConductorNames,
  runSweep, sweepCsv, sweepSvg, mergeSweepCsv,
} from "../src/extract/sweep.js";
import { collect, action, printWarnings } from "./common.js";

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
  quiet?: boolean;
}

function count(text: string, option: string, max: number): number {
  if (!/^\s*\d+\s*$/.test(text) || Number(text) > max) throw new InputError(`${option} "${text}": expected a whole number from 0 to ${max}`);
  return Number(text);
}

export async function runSweepCommand(scene: string, opts: SweepCliOptions): Promise<void> {
  if (extname(scene).toLowerCase() !== ".json") throw new InputError("a sweep takes a scene file (.json) with parameters", scene);
  if (opts.vary.length === 0) throw new InputError("--vary NAME=START:STOP:COUNT is required (e.g. --vary gap=1:5:9)");
  const method = opts.method, solver = opts.solver;
  if (method !== "galerkin" && method !== "collocation") throw new InputError(`--method "${method}": use galerkin or collocation`);
  if (solver !== "auto" && solver !== "direct" && solver !== "iterative" && solver !== "compressed") throw new InputError(`--solver "${solver}": use auto, direct, iterative or compressed`);
  const tolerance = Number(opts.tol);
  if (opts.tol.trim() === "" || !(tolerance > 0 && tolerance < 1)) throw new InputError(`--tol "${opts.tol}": expected a number between 0 and 1, e.g. 1e-4`);
  const refine = count(opts.refine, "--refine", 4);
  const processes = opts.processes === undefined ? 0 : count(opts.processes, "--processes", 256);
  const axes = opts.vary.map(parseVary);
  const points = sweepGrid(axes);
  const shard = opts.shard === undefined ? undefined : parseShard(opts.shard);
  const indices = shardPoints(points.length, shard);
  // Names and parameters are checked on the first point before anything runs.
  const names = sceneConductorNames(scene, points[0]);
  const entries = opts.entries === undefined ? defaultEntries(names) : parseEntries(opts.entries, names);
  if (!opts.quiet) process.stderr.write(`sigmesh: sweep of ${scene}: ${points.length} point${points.length === 1 ? "" : "s"}${shard ? `, slice ${shard.index}/${shard.count}: ${indices.length} of them` : ""}, ${processes > 0 ? `${processes} processes at a time` : "one at a time on every core"}\n`);
  const start = Date.now();
  let results;
  let shown = 0;
  try {
    results = await runSweep(scene, points, indices, {
      method, solver, tolerance, refine, processes,
      // A live counter only on a terminal; logs get the closing line alone.
      onPoint: opts.quiet || !process.stderr.isTTY ? undefined : (done, total) => { shown = done; process.stderr.write(`\rsigmesh: ${done}/${total} points`); },
    });
  } finally {
    if (shown > 0) process.stderr.write("\n");
    await closeSharedPool();
  }
  const files = [{ path: opts.csv, data: sweepCsv(axes, entries, points.length, indices, points, results) }];
  if (opts.svg) files.push({ path: opts.svg, data: sweepSvg(axes, entries, indices, points, results, `sweep of ${scene}`) });
  writeFilesAtomic(files);
  if (!opts.quiet) process.stderr.write(`sigmesh: ${indices.length} points in ${((Date.now() - start) / 1000).toFixed(1)} s -> ${files.map((f) => f.path).join(", ")}\n`);
}

export async function runSweepMerge(inputs: string[], opts: { csv: string; quiet?: boolean }): Promise<void> {
  const files = inputs.map((file) => {
    try { return { file, text: readFileSync(file, "utf8") }; } catch (err) {
      const code = (err as NodeJS.ErrnoException).code;
      throw new InputError(code === "ENOENT" ? "no such file" : `cannot read (${code ?? String(err)})`, file);
    }
  });
  const merged = mergeSweepCsv(files);
  writeFilesAtomic([{ path: opts.csv, data: merged.text }]);
  if (merged.missing.length > 0) {
    const shown = merged.missing.slice(0, 20).join(", ") + (merged.missing.length > 20 ? `, ... (${merged.missing.length} in all)` : "");
    printWarnings([{ message: `${merged.missing.length} of ${merged.total} points are missing: ${shown}` }], false);
  } else if (!opts.quiet) {
    process.stderr.write(`sigmesh: ${merged.total} points from ${inputs.length} file${inputs.length === 1 ? "" : "s"} -> ${opts.csv}\n`);
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
