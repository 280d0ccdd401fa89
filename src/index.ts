/**
 * The sigmesh library API. The command-line tool is built on these functions and nothing else.
 *
 *   import { loadScene, extract } from "sigmesh";
 *   const scene = loadScene("board.json");
 *   const result = await extract(scene.mesh, { potentials: scene.potentials, permittivity: scene.permittivity });
 */
export type { SurfaceMesh } from "./mesh/model.js";
export { concatMeshes, conductorSubmesh, conductorAreas, boundingBox, triangleCount } from "./mesh/model.js";
export { loadScene, type LoadedScene, type InputOptions } from "./io/inputs.js";
export { loadSceneFile, parseScene, loadSceneMesh, type Scene, type SceneConductor } from "./io/scene.js";
export { loadMeshFile, loadMeshFiles, parseMeshBytes, type LoadOptions, type LoadedMesh } from "./io/load.js";
export { encodeMesh, writeMeshFile, outputFormatFromPath, type OutputFormat } from "./io/write.js";
export { InputError, type Warning } from "./errors.js";
export { parseUnit, metresPer, DEFAULT_UNIT, type LengthUnit } from "./io/units.js";
export { checkMesh, type CheckReport } from "./mesh/check.js";
export { refineUniform } from "./mesh/refine.js";
export { surfaceArea, signedVolume } from "./mesh/measure.js";
export * from "./mesh/primitives/index.js";
export { probeField, probeExtraction, type ProbeResult } from "./extract/probe.js";
export { extractMesh, type MeshExtractOptions, type ExtractionResult, type ConductorResult } from "./extract/extract-mesh.js";
export { EPSILON_0, AIR_BREAKDOWN_FIELD } from "./extract/constants.js";
export { extractionReport } from "./report/json.js";
export { extractionSummary } from "./report/extract-summary.js";
export { formatSI } from "./report/si.js";
export { closeSharedPool } from "./linalg/pool.js";
export {
  parseVary, sweepGrid, parseShard, shardPoints, parseEntries, defaultEntries, entryValue, entryLabel,
  extractPoint, runSweep, runSweepPoints, isPointFailure, sweepCsv, mergeSweepCsv,
  type SweepAxis, type Shard, type MatrixEntry, type PointMatrices, type SweepRunOptions, type SweepPointsOptions, type PointFailure,
} from "./extract/sweep.js";
