/**
 * The extraction pipeline of the library: a scene as `loadScene` returns it in, everything the
 * scene asks for out — capacitance matrices, charges, fields, forces, the field check, the error
 * estimate and the probes. `sigmesh extract`, `sigmesh sweep` (in process and in its child
 * processes) and library scripts all go through `extract`; the files of a run are then written
 * by `writeOutputs` (src/report/outputs.ts).
 *
 *   const scene = loadScene("board.json");
 *   const result = await extract(scene, { refine: 1 });
 *
 * The steps: check the conductors (touching or intersecting ones are refused, narrow gaps
 * warned of), solve on the scene's mesh with all its surroundings (`extractMesh`), evaluate the
 * probes. `extractMesh` stays available for a bare mesh with loose options.
 */
import type { RemeshSummary } from "../mesh/remesh.js";
import type { LoadedScene } from "../io/inputs.js";
import type { LengthUnit } from "../io/units.js";
import { metresPer } from "../io/units.js";
import type { Discretisation } from "../bem/assembly.js";
import type { InterfaceTesting } from "../bem/interface.js";
import type { WorkerPool } from "../linalg/pool.js";
import { probePoints, type ProbeSpec } from "../io/probe-spec.js";
import { probeExtraction, type ProbeResult } from "./probe.js";
import type { SolverChoice } from "./solve.js";
import { extractMesh } from "./extract-mesh.js";
import { checkedRefinement } from "./options.js";
import type { ExtractionResult } from "./result.js";
import { checkConductors, implausibleSize } from "./scene-check.js";
import { physicalSizeFault } from "../mesh/physical-size.js";
import { locatePoints, type PointLocations } from "../mesh/point-location.js";
import { InputError } from "../errors.js";

/** What a run adds to the scene: how to solve it, and how to follow and stop it. */
export interface ExtractSettings {
  /** Discretisation (default galerkin). */
  method?: Discretisation;
  /** Solver (default auto: by a cost model). */
  solver?: SolverChoice;
  /** Requested relative accuracy of C (default 1e-4): sets the solver tolerances. */
  tolerance?: number;
  /** Uniform refinements for the Richardson error estimate (0 to 4; default 0). */
  refine?: number;
  /** Convergence order assumed when only two meshes are solved (default: by the geometry). */
  assumedOrder?: number;
  /**
   * Requested relative accuracy of the capacitances (e.g. 1e-3): adaptive refinement until every
   * diagonal entry and every coupling above 5 % of its row's diagonal is estimated within it. Excludes `refine`.
   */
  accuracy?: number;
  /** With `accuracy`: the most panels the refinement may reach (default 200,000). */
  maxPanels?: number;
  /** Probe requests added to the scene's own (coordinates in the scene's unit). */
  probes?: ProbeSpec[];
  /** Progress: phase ("tree", "near field", "far field", "solve", "fields", ...), its fraction done, the solve's index and count. */
  progress?: (phase: string, fraction: number, level: number, levels: number) => void;
  /** Called once for each warning about the input (narrow gaps, cavities) as soon as it is found, before the solve. */
  warn?: (message: string) => void;
  /** Cancels the run: it rejects with the signal's reason (an AbortError) at the next progress step. */
  signal?: AbortSignal;
  /** Largest memory the run may plan for, bytes (default: what the machine has). */
  memoryLimit?: number;
  /** Worker pool (default: the shared pool of every core). */
  pool?: WorkerPool;
  /** Testing of the dielectric interface rows (default galerkin). */
  interfaceTesting?: InterfaceTesting;
}

/** A probe request with its points (metres) and the potential and field there. */
/** A probe request evaluated: its points (metres), the potential and field there, and where the points lie against the conductors. */
export interface ProbeRun { spec: ProbeSpec; points: Float64Array; result: ProbeResult; location: PointLocations }

/** What was read: enough to name the input in every output. */
export interface ExtractionInput {
  files: string[];
  /** The scene file, when the input was one. */
  scene?: string;
  /** How the input is named in messages and reports: the scene file, else the mesh files. */
  source: string;
  /** The length unit of the input and of every length in the summaries. */
  unit: LengthUnit;
  /** True when no scene or option chose the unit (mm assumed). */
  unitAssumed: boolean;
  /** The scene's named parameters with the values used. */
  parameters: Record<string, number>;
  /** The scene's title, if it gives one. */
  title?: string;
  /** Warnings from loading and checking, before the solve. */
  warnings: string[];
  /** What remeshing the mesh files' CAD-style flat faces changed (src/mesh/remesh.ts); absent when nothing. */
  remesh?: RemeshSummary;
}

/** An extraction of a scene: the solve's results, the input it came from and the probes. */
export interface SceneExtraction extends ExtractionResult {
  input: ExtractionInput;
  probes: ProbeRun[];
}

/** A scene extraction's warnings, each once: the input's (the checks before the solve), then the solve's. */
export function extractionWarnings(r: { warnings: readonly string[]; input: { warnings: readonly string[] } }): string[] {
  return [...new Set([...r.input.warnings, ...r.warnings])];
}

/** Extract everything the scene holds. Bad input is an InputError naming the file and the fault. */
export async function extract(scene: LoadedScene, settings: ExtractSettings = {}): Promise<SceneExtraction> {
  const signal = settings.signal;
  signal?.throwIfAborted();
  const source = scene.scene ?? scene.files.join(", ");
  const warnings = scene.warnings.map((w) => (w.file ? `${w.file}: ` : "") + w.message);
  for (const d of scene.dielectrics) {
    const fault = physicalSizeFault(d.mesh.positions, d.mesh.triangles, 1, () => `dielectric ${d.name} as placed`);
    if (fault) throw new InputError(fault, source);
  }
  const found = checkConductors(scene.mesh, scene.unit, source);
  const size = implausibleSize(scene.mesh, scene.unit, scene.unitAssumed);
  if (size) found.unshift(`${source}: ${size}`);
  for (const w of found) settings.warn?.(w);
  warnings.push(...found);
  signal?.throwIfAborted();
  // A fault of the run's own settings names no file; every later one concerns the input.
  checkedRefinement(settings);
  const result = await extractMesh(scene.mesh, {
    permittivity: scene.permittivity,
    breakdownField: scene.breakdownField,
    potentials: scene.potentials,
    groundPlane: scene.groundPlane,
    symmetry: scene.symmetry,
    floating: scene.floating,
    dielectrics: scene.dielectrics.length > 0 ? scene.dielectrics : undefined,
    method: settings.method,
    solver: settings.solver,
    tolerance: settings.tolerance,
    refine: settings.refine,
    accuracy: settings.accuracy,
    maxPanels: settings.maxPanels,
    assumedOrder: settings.assumedOrder,
    memoryLimit: settings.memoryLimit,
    pool: settings.pool,
    interfaceTesting: settings.interfaceTesting,
    lengthUnit: scene.unit,
    progress: (phase, fraction, level, levels) => {
      signal?.throwIfAborted();
      settings.progress?.(phase, fraction, level, levels);
    },
  }).catch((err: unknown) => {
    // The solve knows the mesh, not the file: the ground-plane and symmetry checks and the
    // memory refusals are attributed here, where the source is known.
    throw err instanceof InputError ? err.inFile(source) : err;
  });
  signal?.throwIfAborted();
  const probes = runProbes(result, [...scene.probes, ...(settings.probes ?? [])], scene.unit);
  for (const w of probeWarnings(probes, result.mesh.names)) { settings.warn?.(w); warnings.push(w); }
  return {
    ...result,
    input: { files: scene.files, scene: scene.scene, source, unit: scene.unit, unitAssumed: scene.unitAssumed, parameters: { ...scene.parameters }, warnings, ...(scene.title !== undefined ? { title: scene.title } : {}), ...(scene.remesh?.applied ? { remesh: remeshFigures(scene.remesh) } : {}) },
    probes,
  };
}

/** Evaluate probe requests on an extraction (request coordinates in `unit`). */
export function runProbes(result: ExtractionResult, specs: readonly ProbeSpec[], unit: LengthUnit): ProbeRun[] {
  const closed = result.mesh.names.map((_, c) => result.conductors[c]?.closed ?? false);
  return specs.map((spec) => {
    const points = probePoints(spec, metresPer(unit));
    return { spec, points, result: probeExtraction(result, points), location: locatePoints(result.mesh, closed, points) };
  });
}

/**
 * A warning per probe request with points on a conductor's surface (they read about half the
 * surface field: the principal value) or inside a closed conductor (the model's interior:
 * the conductor's potential, a field near zero), naming the conductors and the point numbers.
 */
export function probeWarnings(runs: readonly ProbeRun[], names: readonly string[]): string[] {
  const out: string[] = [];
  const list = (ix: number[]): string => (ix.length <= 8 ? ix.join(", ") : `${ix.slice(0, 8).join(", ")}, ... (${ix.length} in all)`);
  for (const r of runs) {
    const m = r.points.length / 3;
    const parts: string[] = [];
    for (const [kind, at, note] of [
      ["on the surface of", r.location.onSurface, "they read about half the surface field there"],
      ["inside", r.location.inside, "they read the conductor's interior: its potential and a field near zero"],
    ] as const) {
      const by = new Map<number, number[]>();
      for (let i = 0; i < m; i++) if (at[i] >= 0) { const l = by.get(at[i]) ?? []; l.push(i); by.set(at[i], l); }
      for (const [c, ix] of by) parts.push(`point${ix.length === 1 ? "" : "s"} ${list(ix)} ${ix.length === 1 ? "lies" : "lie"} ${kind} conductor ${names[c]} (${note})`);
    }
    if (parts.length > 0) out.push(`probe ${r.spec.name}: ${parts.join("; ")}`);
  }
  return out;
}

/** The summary's figures alone (without the preview flag of `LoadedScene.remesh`). */
function remeshFigures(r: RemeshSummary): RemeshSummary {
  return {
    patches: r.patches, neighbours: r.neighbours, panelsBefore: r.panelsBefore, panelsAfter: r.panelsAfter,
    worstAspectBefore: r.worstAspectBefore, worstAspectAfter: r.worstAspectAfter, trianglesBefore: r.trianglesBefore, trianglesAfter: r.trianglesAfter,
  };
}
