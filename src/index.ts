/**
 * The sigmesh library API. The command-line tool is built on these functions and nothing else.
 *
 *   import { loadScene, extract, writeOutputs } from "sigmesh";
 *   const scene = loadScene("board.json");                 // a scene file, or mesh files
 *   const result = await extract(scene, { refine: 1 });    // everything the scene holds
 *   writeOutputs(result, { json: "board.report.json", html: "board.html", spice: "board.cir" });
 *
 * The worker threads are shared between calls and let the process exit when idle.
 */
// Reading
export { loadScene, parsePlane, parseSymmetryPlane, type LoadedScene, type InputOptions } from "./io/inputs.js";
export { loadSceneFile, parseScene, type Scene } from "./io/scene.js";
export type { SceneConductor } from "./io/scene-entries.js";
export { loadSceneMesh } from "./io/scene-mesh.js";
export { loadMeshFile, loadMeshFiles, parseMeshBytes, type LoadOptions, type LoadedMesh } from "./io/load.js";
export { encodeMesh, writeMeshFile, outputFormatFromPath, type OutputFormat } from "./io/write.js";
export { InputError, type Warning } from "./errors.js";
export { parseUnit, metresPer, DEFAULT_UNIT, type LengthUnit } from "./io/units.js";
export { formatSI, formatArea, formatLength, formatPoint, unitLabel } from "./io/si.js";
export { readInputBytes, readInputText } from "./io/input-file.js";
export { writeFileAtomic, writeFilesAtomic, checkOutputPaths, fileFault, outputOfHidden } from "./io/atomic.js";
export { displayText } from "./io/display-text.js";
export { parseProbeOption, type ProbeSpec } from "./io/probe-spec.js";

// Meshes
export type { SurfaceMesh } from "./mesh/model.js";
export { concatMeshes, conductorSubmesh, conductorAreas, boundingBox, triangleCount } from "./mesh/model.js";
export { checkMesh, checkMeshParallel, type CheckReport } from "./mesh/check.js";
export { checkConductors, checkSceneSurroundings, implausibleSize, PLAUSIBLE_SIZE, pairSentence, selfOverlapSentence, type SceneSurroundingsCheck, type DielectricCheck } from "./extract/scene-check.js";
export { refineUniform } from "./mesh/refine.js";
export { remeshFlatPatches, remeshSentence, type RemeshOptions, type RemeshSummary } from "./mesh/remesh.js";
export { surfaceArea, signedVolume } from "./mesh/measure.js";
export * from "./mesh/primitives/index.js";

// Extraction
export { extract, extractionWarnings, runProbes, type ExtractSettings, type SceneExtraction, type ExtractionInput, type ProbeRun } from "./extract/extract.js";
export { extractMesh } from "./extract/extract-mesh.js";
export type { MeshExtractOptions } from "./extract/options.js";
export type { ExtractionResult, ConductorResult } from "./extract/result.js";
export { probeField, probeExtraction, type ProbeResult } from "./extract/probe.js";
export { EPSILON_0, AIR_BREAKDOWN_FIELD } from "./extract/constants.js";
export {
  parseVary, sweepGrid, parseShard, shardPoints, parseEntries, defaultEntries, entryValue, entryLabel, sceneConductorNames,
  extractPoint, runSweep, runSweepPoints, isPointFailure, sweepPointKey, describePoint, sceneLengthUnit,
  type SweepAxis, type Shard, type MatrixEntry, type PointMatrices, type SweepRunOptions, type SweepPointsOptions, type PointFailure,
} from "./extract/sweep.js";

// Outputs
export { writeOutputs, extractionFiles, checkOutputTargets, defaultProbeCsv, sceneReport, jsonText, type OutputTargets, type OutputFile, type WrittenOutputs } from "./report/outputs.js";
export { extractionReport } from "./report/json.js";
export { extractionSummary } from "./report/extract-summary.js";
export { checkReport, type CheckReportJson, type SceneCheckJson } from "./report/check-report.js";
export { formatCheckSummary } from "./report/check-summary.js";
export { sweepCsv, sweepSvg, sweepFiles, mergeSweepCsv } from "./report/sweep-table.js";
export { planResume, runResumable, finishResumable, type ResumePlan } from "./extract/sweep-resume.js";
export { viewPage, serveViewPage, type ViewPage } from "./report/view-server.js";
export { version } from "./version.js";

// Threads
export { closeSharedPool } from "./linalg/pool.js";
