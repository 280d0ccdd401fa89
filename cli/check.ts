/**
 * `sigmesh check <files...>`: load conductor meshes and report what would stop or spoil
 * a solve. A thin shell over `loadMeshFiles`, `checkMesh` and `formatCheckSummary`.
 *
 * Exit codes: 0 clean (warnings allowed); 2 bad input, and also when conductors
 * intersect or touch or a conductor covers itself (the check failed; the report is still
 * printed and written); 1 internal error.
 *
 * The JSON report's fields are listed in src/report/check-report.ts.
 */
import type { Command } from "commander";
import { loadMeshFiles } from "../src/io/load.js";
import { parseUnit, DEFAULT_UNIT } from "../src/io/units.js";
import { InputError } from "../src/errors.js";
import { checkMeshParallel } from "../src/mesh/check.js";
import { formatCheckSummary } from "../src/report/check-summary.js";
import { pairSentence, selfOverlapSentence } from "../src/extract/scene-check.js";
import { checkReport } from "../src/report/check-report.js";
import { jsonText } from "../src/report/outputs.js";
import { displayText } from "../src/io/display-text.js";
import { checkOutputPaths } from "../src/io/atomic.js";
import { action, printWarnings, writeOutput, EXIT_BAD_INPUT } from "./common.js";

interface CheckCliOptions {
  unit: string;
  split?: boolean;
  merge?: boolean;
  weldTolerance?: string;
  json?: string;
  quiet?: boolean;
}

export function registerCheck(program: Command): void {
  program
    .command("check")
    .description("check conductor meshes: closed or open, orientation, panel quality, and intersections, contacts and narrow gaps between conductors")
    .argument("<files...>", "mesh files (STL, OBJ, Gmsh MSH)")
    .option("--unit <unit>", "length unit of the files: m, cm, mm, um, in, mil (or spelled out: millimetre, micron, inch, thou, ...)", DEFAULT_UNIT)
    .option("--split", "make each connected component a conductor of its own")
    .option("--merge", "make all groups of a file one conductor")
    .option("--weld-tolerance <relative>", "weld vertices closer than this fraction of the bounding-box diagonal (default 1e-6)")
    .option("--json <path>", "write the report as JSON to a file, or - for standard output")
    .option("--quiet", "print nothing but errors")
    .action(action(async (files: string[], opts: CheckCliOptions, cmd: Command) => {
      const unit = parseUnit(opts.unit, "--unit");
      const unitAssumed = cmd.getOptionValueSource("unit") === "default";
      if (opts.split && opts.merge) throw new InputError("--split and --merge cannot be used together");
      if (opts.json !== undefined) checkOutputPaths([{ path: opts.json, option: "--json" }]);
      let weldTolerance: number | undefined;
      if (opts.weldTolerance !== undefined) {
        weldTolerance = Number(opts.weldTolerance);
        if (opts.weldTolerance.trim() === "" || !Number.isFinite(weldTolerance) || weldTolerance < 0) {
          throw new InputError(`--weld-tolerance "${opts.weldTolerance}" must be a number >= 0`);
        }
      }
      const loaded = loadMeshFiles(files, { unit, split: opts.split, merge: opts.merge, weldTolerance });
      printWarnings(loaded.warnings, opts.quiet);
      const report = await checkMeshParallel(loaded.mesh);
      const summary = formatCheckSummary(report, { unit, unitAssumed, files: loaded.files });
      if (opts.json !== undefined) {
        writeOutput(opts.json, jsonText(checkReport(loaded, report, unit, unitAssumed)));
      }
      if (!opts.quiet) (opts.json === "-" ? process.stderr : process.stdout).write(summary);
      else {
        for (const c of report.conductors) if (c.selfOverlap) process.stderr.write(`sigmesh: FAILED: ${displayText(selfOverlapSentence(c.name, c.selfOverlap, unit))}\n`);
        for (const p of report.pairs) if (p.severity === "error") process.stderr.write(`sigmesh: FAILED: ${displayText(pairSentence(p, unit))}\n`);
      }
      if (report.failed) process.exitCode = EXIT_BAD_INPUT;
    }));
}
