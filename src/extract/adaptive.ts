/**
 * Refinement to a requested accuracy (`accuracy` R): solve, estimate, mark, refine, until the
 * estimated relative error of every capacitance entry that matters is at most R.
 *
 * Entries that matter: every diagonal entry, and every coupling whose size is at least
 * `COUPLING_THRESHOLD` of its row's diagonal (smaller couplings are reported with their estimate
 * but do not hold the refinement up).
 *
 * Each step (conductors in a uniform medium):
 *  1. solve on the current mesh (every conductor at 1 V, per symmetry pattern: levels.ts);
 *  2. estimate the error of the entries from the sequence of solves so far (accuracy.ts,
 *     `sequenceRichardson`): stop when every entry that matters is within R;
 *  3. per-panel indicators (error-indicator.ts: ZZ-type averaging of the charge density plus the
 *     geometric sag of curved panels), each unit solution weighted by 1/Σx over its own
 *     conductor (its diagonal entry) so that every conductor's relative error counts alike;
 *  4. Dörfler's marking with θ = `DORFLER_THETA`;
 *  5. newest-vertex bisection of the marked panels with its conforming closure, new points on the
 *     true surface as uniform refinement places them (mesh/adaptive-refine.ts).
 * With dielectric bodies every step is a uniform refinement of conductors and bodies alike (the
 * interface charges have no indicator yet), still stopping at R.
 *
 * The loop also stops, with a warning, when the next mesh would not fit in memory, after
 * `MAX_STEPS` steps, or when the panels passed `maxPanels`; the result then reports the accuracy
 * reached.
 */
import type { SurfaceMesh } from "../mesh/model.js";
import { refineLevel, edgePoints } from "../mesh/refine.js";
import { meshEdges } from "../mesh/edges.js";
import { refineMarked, withLongestRefinementEdges } from "../mesh/adaptive-refine.js";
import { InputError } from "../errors.js";
import type { PreparedBody } from "./dielectric-bodies.js";
import type { ResolvedOptions } from "./options.js";
import type { LevelResult, AdaptiveRecord } from "./result.js";

export type { AdaptiveRecord } from "./result.js";
import type { SymmetryLayout, BodyUnfolding } from "./symmetry-unfold.js";
import { solveConductorLevel, solveDielectricLevel, refineModel, type LevelSolve, type LevelSolves } from "./levels.js";
import { capacitanceMatrices, conductorCharges } from "./capacitance.js";
import { sequenceRichardson, type RichardsonResult } from "./accuracy.js";
import { panelIndicators, dorflerMarking, panelSag } from "./error-indicator.js";
import { resolveSolver } from "./solver-choice.js";
import { assertFinestFits } from "./memory.js";
import { PRECONDITIONER_CLUSTER } from "./preconditioner.js";
import type { UnitSolution } from "./unit-solution.js";

/** Couplings at least this fraction of their row's diagonal must also meet the requested accuracy. */
export const COUPLING_THRESHOLD = 0.05;
/** Dörfler's bulk parameter: the marked panels carry this share of the total indicator. */
export const DORFLER_THETA = 0.5;
/** When Dörfler marks at least this share of the panels, all are refined. */
export const UNIFORM_SHARE = 0.25;
/** Most solves of one adaptive run. */
export const MAX_STEPS = 40;
/** Most panels an adaptive run refines to unless told otherwise. */
export const DEFAULT_MAX_PANELS = 200_000;


/** Which entries must meet R: diagonals, and couplings ≥ threshold × their row's diagonal. */
export function governingEntries(maxwell: Float64Array, K: number, threshold = COUPLING_THRESHOLD): Uint8Array {
  const g = new Uint8Array(K * K);
  for (let i = 0; i < K; i++) {
    const d = Math.abs(maxwell[i * K + i]);
    for (let j = 0; j < K; j++) g[i * K + j] = i === j || Math.abs(maxwell[i * K + j]) >= threshold * d ? 1 : 0;
  }
  return g;
}

/** Largest estimated relative error over the governing entries (each entry against itself). */
export function governingError(r: RichardsonResult, governing: Uint8Array): number {
  let worst = 0;
  for (let e = 0; e < governing.length; e++) {
    if (!governing[e]) continue;
    const v = Math.abs(r.extrapolated[e]);
    worst = Math.max(worst, v > 0 ? r.errorEstimate[e] / v : Infinity);
  }
  return worst;
}

/** Whether a solve of n panels fits (the path the solver choice takes at that size). */
function fits(n: number, k: number, o: ResolvedOptions, entries: "conductors" | "interfaces"): boolean {
  const { solver } = resolveSolver(o.solver, n, k, entries);
  try {
    assertFinestFits(solver, n, k, 0, o.memoryLimit, 32, PRECONDITIONER_CLUSTER);
    return true;
  } catch (e) {
    if (e instanceof InputError) return false;
    throw e;
  }
}

/** Solves to the requested accuracy `o.accuracy` (see the file comment). */
export async function solveAdaptive(oriented: SurfaceMesh, bodies: PreparedBody[] | undefined, unfold: BodyUnfolding | undefined,
  layout: SymmetryLayout, o: ResolvedOptions, warnings: string[]): Promise<LevelSolves & { adaptive: AdaptiveRecord }> {
  const R = o.accuracy!;
  const K = oriented.names.length * layout.nets;
  const names = layout.names;
  const maxPanels = o.maxPanels ?? DEFAULT_MAX_PANELS;
  const marking: AdaptiveRecord["marking"] = bodies ? "uniform" : "dorfler";
  const levels: LevelResult[] = [];
  const sym: Float64Array[] = [];
  let mesh = bodies ? oriented : withLongestRefinementEdges(oriented);
  let previous: { mesh: SurfaceMesh; unit: UnitSolution } | undefined;
  let solve: LevelSolve | undefined;
  let solved = mesh;
  let displacement = 0;
  let stop: AdaptiveRecord["stop"] = "steps";
  let governing: Uint8Array = new Uint8Array(K * K);
  let reached = false;
  for (let step = 0; step < MAX_STEPS; step++) {
    if (solve) previous = { mesh: solved, unit: solve.unit };
    solved = mesh;
    solve = bodies ? await solveDielectricLevel(mesh, bodies, unfold, step, layout, o) : await solveConductorLevel(mesh, step, layout, o);
    levels.push({ ...solve.level, displacement });
    sym.push(capacitanceMatrices(solve.level.maxwell, K, names).maxwell);
    governing = governingEntries(sym[sym.length - 1], K);
    if (sym.length >= 3) {
      const r = sequenceRichardson(sym, levels.map((l) => l.panels), K, { fromBelow: false });
      if (governingError(r, governing) <= R) { reached = true; stop = "reached"; break; }
    }
    if (step === MAX_STEPS - 1) break;
    // The next mesh.
    const n = mesh.conductor.length;
    if (bodies) {
      const bodyPanels = bodies.reduce((s, b) => s + b.mesh.triangles.length / 3, 0);
      if (4 * (n + bodyPanels) > maxPanels) { stop = "panels"; break; }
      if (!fits(4 * (n + bodyPanels), K, o, "interfaces")) { stop = "memory"; break; }
      ({ mesh, bodies, displacement } = refineModel(mesh, bodies));
      continue;
    }
    // Each unit solution weighted by 1/Σx over its own conductor (its diagonal entry, up to 4πε):
    // every conductor's relative error counts alike.
    const k = oriented.names.length;
    const own = conductorCharges(solve.patterns[0], mesh.conductor, k);
    const weights = Float64Array.from({ length: k }, (_, j) => (own[j * k + j] !== 0 ? 1 / Math.abs(own[j * k + j]) : 0));
    // The new points refinement would place (without building the refined mesh): the curved panels' sag.
    const edges = meshEdges(mesh);
    const points = edgePoints(mesh, edges);
    const sag = points.displacement.some((d) => d > 0) ? panelSag(mesh, edges, points.positions) : undefined;
    const eta = panelIndicators(mesh, solve.unit.panels.areas, solve.patterns, k, weights, sag);
    const marked = dorflerMarking(eta, DORFLER_THETA);
    let count = 0;
    for (let t = 0; t < n; t++) count += marked[t];
    // Error spread evenly (a smooth surface): half the panels marked at random leave the other half
    // coarse, and the closure splits most of them anyway; every panel is split instead, which
    // keeps the mesh uniform and the sequence regular.
    if (count >= UNIFORM_SHARE * n) { marked.fill(1); count = n; }
    // NVB adds at least one panel per marked one and at most three (and the closure's).
    if (n + 3 * count > maxPanels) { stop = "panels"; break; }
    if (!fits(n + 3 * count, K, o, "conductors")) { stop = "memory"; break; }
    if (count === n) {
      // Every panel: the uniform split into four similar triangles (better shaped than bisection's
      // four), then the refinement edges set afresh.
      const uniform = refineLevel(mesh);
      mesh = withLongestRefinementEdges(uniform.mesh);
      displacement = uniform.displacement;
    } else {
      const next = refineMarked(mesh, marked);
      mesh = next.mesh;
      displacement = next.displacement;
    }
  }
  if (!solve) throw new Error("no level solved");
  if (!reached) {
    const r = sym.length >= 3 ? sequenceRichardson(sym, levels.map((l) => l.panels), K, { fromBelow: false }) : undefined;
    const got = r ? governingError(r, governing) : Infinity;
    const why = stop === "memory" ? "the next mesh would not fit in memory" : stop === "panels" ? `the next mesh would pass ${maxPanels} panels` : `${MAX_STEPS} solves`;
    warnings.push(`the requested accuracy ${R} was not reached: ${why}; the estimate reached is ${Number.isFinite(got) ? got.toPrecision(2) : "unknown (fewer than three solves)"}`);
  }
  const coarse = !bodies && layout.nets === 1 && previous ? [previous] : undefined;
  return {
    levels, mesh, unit: solve.unit, patterns: solve.patterns, dielectric: solve.dielectric, bodies, coarse,
    adaptive: { requested: R, couplingThreshold: COUPLING_THRESHOLD, reached, governing, marking, stop },
  };
}
