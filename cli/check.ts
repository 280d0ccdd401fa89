/**
 * `sigmesh check <files...>`: load conductor meshes and report what would stop or spoil
 * a solve. A thin shell over `loadMeshFiles`, `checkMesh` and `formatCheckSummary`.
 *
 * Exit codes: 0 clean (warnings allowed); 2 bad input, and also when conductors
 * intersect or touch (the check failed; the report is still
 * printed and written); 1 internal error.
 *
 * JSON report (`--json <path|->`, written atomically; every quantity in SI units:
 * lengths m, areas m², volumes m³; numbers that are undefined are null):
 *   tool            "sigmesh"
 *   command         "check"
 *   version         sigmesh version
 *   files           input files, as given
 *   inputUnit       unit the files were read in ("mm", ...); unitAssumed: true when it was the default
 *   ok              true when no pair is an error
 *   triangles, vertices        totals after welding and dropping degenerate triangles
 *   welded          vertices merged by welding; dropped: degenerate triangles removed on loading
 *   warnings        [{ file, message }] from loading
 *   conductors      one entry per conductor:
 *     name, triangles, area (m²),
 *     bbox          [minx, miny, minz, maxx, maxy, maxz] (m)
 *     closed        every edge shared by exactly two of its triangles (open sheets are legal)
 *     components    connected pieces
 *     boundaryEdges, nonManifoldEdges, inconsistentEdges (windings disagreeing across an edge, as given)
 *     orientation   "outward" | "inward-flipped" (was inward; reversed) | "repaired" (some triangles reversed)
 *                   | "open" | "inconsistent" (cannot be made consistent) | "non-manifold" | "empty"
 *     flippedTriangles  windings the orientation step reverses
 *     volume        enclosed volume (m³) after orientation, null unless closed and orientable
 *     edgeLength    { min, max } (m)
 *     worstAspect   largest radius ratio R/(2r), 1 = equilateral; null if a triangle is degenerate
 *     worstAspectAt centroid of that triangle (m)
 *     degenerateTriangles
 *   pairs           findings between conductors, worst first:
 *     kind          "intersect" | "touch" (errors) | "inside" (warning: inside the closed surface of b, taken as a shell) | "gap" (warning: narrower than the local panel size)
 *     severity      "error" | "warning"
 *     a, b          conductor names (for inside: a lies inside b)
 *     distance      smallest distance found (m); position: where (m)
 *     panelSize     local panel size there (m), null for inside
 */
import type { Command } from "commander";
import { createRequire } from "node:module";
import { loadMeshFiles } from "../src/io/load.js";
import { parseUnit, DEFAULT_UNIT } from "../src/io/units.js";
import { InputError } from "../src/errors.js";
import { checkMeshParallel } from "../src/mesh/check.js";
import { formatCheckSummary, pairSentence } from "../src/report/check-summary.js";
import { action, printWarnings, writeOutput, EXIT_BAD_INPUT } from "./common.js";

interface CheckCliOptions {
  unit: string;
  split?: boolean;
  merge?: boolean;
  weldTolerance?: string;
  json?: string;
  quiet?: boolean;
}

function version(): string {
  try {
    return (createRequire(import.meta.url)("../../package.json") as { version: string }).version;
  } catch {
    return "unknown";
  }
}

/** JSON with non-finite numbers as null (JSON has no NaN or Infinity). */
function toJson(value: unknown): string {
  return JSON.stringify(value, (_k, v) => (typeof v === "number" && !Number.isFinite(v) ? null : v), 2);
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
        writeOutput(opts.json, toJson({
          tool: "sigmesh", command: "check", version: version(),
          files: loaded.files, inputUnit: unit, unitAssumed,
          ok: !report.failed, triangles: report.triangles, vertices: report.vertices,
          welded: loaded.welded, dropped: loaded.dropped, warnings: loaded.warnings,
          conductors: report.conductors, pairs: report.pairs,
        }));
      }
      if (!opts.quiet) (opts.json === "-" ? process.stderr : process.stdout).write(summary);
      else for (const p of report.pairs) if (p.severity === "error") process.stderr.write(`sigmesh: FAILED: ${pairSentence(p, unit)}\n`);
      if (report.failed) process.exitCode = EXIT_BAD_INPUT;
    }));
}
