/**
 * `sigmesh check <files... | scene.json>`: load conductor meshes, or one scene with its shapes,
 * parts, dielectric bodies and planes, and report what would stop or spoil a solve. A thin
 * shell over `loadMeshFiles` / `loadScene`, `checkMesh`, `checkSceneSurroundings` and
 * `formatCheckSummary`; `--write-mesh` writes what was built (`writeMeshFile`).
 *
 * Exit codes: 0 clean (warnings allowed); 2 bad input, and also when conductors
 * intersect or touch or a conductor covers itself, or a scene's dielectric body or planes would
 * be refused (the check failed; the report is still printed and written); 1 internal error.
 *
 * The JSON report's fields are listed in src/report/check-report.ts.
 */
import type { Command } from "commander";
import { loadMeshFiles, type LoadedMesh } from "../src/io/load.js";
import { extname } from "node:path";
import { loadScene } from "../src/io/inputs.js";
import { concatMeshes, type SurfaceMesh } from "../src/mesh/model.js";
import { outputFormatFromPath, writeMeshFile } from "../src/io/write.js";
import { checkSceneSurroundings, implausibleSize, type SceneSurroundingsCheck } from "../src/extract/scene-check.js";
import { parseUnit, metresPer, DEFAULT_UNIT } from "../src/io/units.js";
import { remeshFlatPatches, type RemeshSummary } from "../src/mesh/remesh.js";
import { numberOption } from "./options.js";
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
  panelSize?: string;
  json?: string;
  quiet?: boolean;
  writeMesh?: string;
  keepMesh?: boolean;
}

/** The conductors, then each dielectric body as a further body named `dielectric:NAME`. */
function meshForInspection(conductors: SurfaceMesh, dielectrics: Array<{ name: string; mesh: SurfaceMesh }>): SurfaceMesh {
  return concatMeshes([conductors, ...dielectrics.map((d) => ({
    positions: d.mesh.positions, triangles: d.mesh.triangles, conductor: new Uint32Array(d.mesh.triangles.length / 3), names: [`dielectric:${d.name}`],
  }))]);
}

export function registerCheck(program: Command): void {
  program
    .command("check")
    .description("check conductor meshes: closed or open, orientation, panel quality, and intersections, contacts and narrow gaps between conductors")
    .argument("<inputs...>", "mesh files (STL, OBJ, Gmsh MSH), or one scene file (.json): its conductors, dielectric bodies, ground plane and symmetry planes")
    .option("--unit <unit>", "length unit of the files: m, cm, mm, um, in, mil (or spelled out: millimetre, micron, inch, thou, ...); overrides a scene's", DEFAULT_UNIT)
    .option("--split", "make each connected component a conductor of its own")
    .option("--merge", "make all groups of a file one conductor")
    .option("--weld-tolerance <relative>", "weld vertices closer than this fraction of the bounding-box diagonal (default 1e-6)")
    .option("--json <path>", "write the report as JSON to a file, or - for standard output")
    .option("--write-mesh <file>", "write the meshes checked (.stl as ASCII with one named solid per body, or .obj; in the input unit): conductors by name, a scene's dielectric bodies as dielectric:NAME")
    .option("--panel-size <length>", "target panel size as for extract, in the input unit: the largest panel where extract would remesh CAD-style flat faces of mesh files, and the panel size on curved faces of CAD files")
    .option("--keep-mesh", "say nothing of remeshing: the mesh is to be solved as given")
    .option("--quiet", "print only the failures, one line each (no summary, no warnings)")
    .action(action(async (files: string[], opts: CheckCliOptions, cmd: Command) => {
      const unit = parseUnit(opts.unit, "--unit");
      const unitAssumed = cmd.getOptionValueSource("unit") === "default";
      if (opts.split && opts.merge) throw new InputError("--split and --merge cannot be used together");
      const meshFormat = opts.writeMesh === undefined ? undefined : outputFormatFromPath(opts.writeMesh, true);
      checkOutputPaths([
        ...(opts.json !== undefined ? [{ path: opts.json, option: "--json" }] : []),
        ...(opts.writeMesh !== undefined ? [{ path: opts.writeMesh, option: "--write-mesh" }] : []),
      ]);
      const panelSize = opts.panelSize === undefined ? undefined : numberOption(opts.panelSize, "--panel-size", (x) => x > 0, "a positive length in the input unit");
      let weldTolerance: number | undefined;
      if (opts.weldTolerance !== undefined) {
        weldTolerance = Number(opts.weldTolerance);
        if (opts.weldTolerance.trim() === "" || !Number.isFinite(weldTolerance) || weldTolerance < 0) {
          throw new InputError(`--weld-tolerance "${opts.weldTolerance}" must be a number >= 0`);
        }
      }
      // A .json input is a scene, loaded exactly as extract loads it (--unit overrides its unit).
      const isScene = files.some((f) => extname(f).toLowerCase() === ".json");
      let loaded: LoadedMesh, scene: { file: string; check: SceneSurroundingsCheck } | undefined;
      let inspection: SurfaceMesh;
      let remesh: RemeshSummary | undefined;
      if (isScene) {
        const s = loadScene(files, { unit: unitAssumed ? undefined : unit, split: opts.split, merge: opts.merge, weldTolerance, panelSize, keepMesh: true, previewRemesh: !opts.keepMesh });
        remesh = s.remesh;
        // Welding counts are not kept per scene: NaN is written as null.
        loaded = { mesh: s.mesh, warnings: s.warnings, files: [s.scene!], unit: s.unit, dropped: s.dropped, welded: NaN };
        scene = { file: s.scene!, check: checkSceneSurroundings(s) };
        inspection = meshForInspection(s.mesh, s.dielectrics);
      } else {
        loaded = loadMeshFiles(files, { unit, split: opts.split, merge: opts.merge, weldTolerance, panelSize: panelSize === undefined ? undefined : panelSize * metresPer(unit) });
        inspection = loaded.mesh;
        // What extract would change (it remeshes the same way in loadScene).
        const preview = opts.keepMesh ? undefined : remeshFlatPatches(loaded.mesh, { panelSize: panelSize === undefined ? undefined : panelSize * metresPer(unit) }).summary;
        if (preview && preview.patches > 0) remesh = preview;
      }
      // CAD files that all declare one unit are shown in it unless --unit was given (as extract does).
      const declared = !isScene && unitAssumed ? loaded.declaredUnit : undefined;
      const u = declared ?? loaded.unit, assumed = isScene ? false : unitAssumed && declared === undefined;
      const size = implausibleSize(loaded.mesh, u, assumed);
      if (size) loaded.warnings.unshift({ file: loaded.files.join(", "), message: size });
      printWarnings(loaded.warnings, opts.quiet);
      const report = await checkMeshParallel(loaded.mesh);
      const summary = formatCheckSummary(report, { unit: u, unitAssumed: isScene ? unitAssumed : assumed, unitDeclared: declared !== undefined, files: loaded.files, scene, remesh });
      const json = checkReport(loaded, report, u, assumed, scene, remesh);
      if (opts.writeMesh !== undefined) writeMeshFile(opts.writeMesh, inspection, meshFormat!, u);
      if (opts.json !== undefined) writeOutput(opts.json, jsonText(json));
      if (!opts.quiet) (opts.json === "-" ? process.stderr : process.stdout).write(summary);
      else {
        for (const c of report.conductors) if (c.selfOverlap) process.stderr.write(`sigmesh: FAILED: ${displayText(selfOverlapSentence(c.name, c.selfOverlap, u))}\n`);
        for (const p of report.pairs) if (p.severity === "error") process.stderr.write(`sigmesh: FAILED: ${displayText(pairSentence(p, u))}\n`);
        for (const d of scene?.check.dielectrics ?? []) if (d.fault !== null) process.stderr.write(`sigmesh: FAILED: ${displayText(`${scene!.file}: ${d.fault}`)}\n`);
        if (scene?.check.fault) process.stderr.write(`sigmesh: FAILED: ${displayText(`${scene.file}: ${scene.check.fault}`)}\n`);
      }
      if (!json.ok) process.exitCode = EXIT_BAD_INPUT;
    }));
}
