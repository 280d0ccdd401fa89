/**
 * The refinement levels' solves: the unit-potential solutions of the conductors on the oriented
 * mesh and on each uniform refinement of it, once per even/odd pattern of the planes with images
 * "both" (symmetry-unfold.ts), with or without dielectric bodies. Each level yields the Maxwell
 * matrix of the (unfolded) model; the finest keeps its panel solutions for the excitation.
 * Each level records how far its refinement moved new points off the straight midpoints
 * (refine.ts), which decides whether the levels are nested (accuracy.ts).
 */
import type { SurfaceMesh } from "../mesh/model.js";
import { refineLevel } from "../mesh/refine.js";
import { panelSet, type PanelSet } from "../bem/panels.js";
import { imageSet, type KernelSpec } from "../bem/images.js";
import { EPSILON_0 } from "./constants.js";
import { solveUnitPotentials, solveUnitPotentialsWithInterfaces, type UnitSolution } from "./solve.js";
import { conductorCharges } from "./capacitance.js";
import { dielectricModel, type DielectricModel } from "./dielectric-model.js";
import { freeCharges, openFieldPanels } from "./dielectric-charges.js";
import type { PreparedBody } from "./dielectric-bodies.js";
import type { ResolvedOptions } from "./options.js";
import type { LevelResult, FinestSolution, DielectricSolution } from "./result.js";
import { unfoldMatrix, type SymmetryLayout, type BodyUnfolding } from "./symmetry-unfold.js";
import { resolveSolver } from "./solver-choice.js";
import { assertFinestFits } from "./memory.js";
import { PRECONDITIONER_CLUSTER } from "./preconditioner.js";

export interface LevelSolves extends FinestSolution {
  levels: LevelResult[];
  /** The finest level's unit solutions per solve pattern (of all panels with dielectrics). */
  patterns: Float64Array[];
  /** The dielectric bodies as refined for the finest level. */
  bodies?: PreparedBody[];
  /**
   * The coarser levels' meshes and unit solutions, coarsest first, for the peak field per level
   * (peak-field.ts): conductors in a uniform medium solved in one pattern only; undefined otherwise.
   */
  coarse?: Array<{ mesh: SurfaceMesh; unit: UnitSolution }>;
}

/** One level's solves: its Maxwell matrix and its panel solutions. */
export interface LevelSolve {
  level: LevelResult;
  unit: UnitSolution;
  patterns: Float64Array[];
  dielectric?: DielectricSolution;
}

/** Solves the mesh (and dielectric bodies) as given and on `o.refine` uniform refinements. */
export async function solveLevels(oriented: SurfaceMesh, bodies: PreparedBody[] | undefined, unfold: BodyUnfolding | undefined,
  layout: SymmetryLayout, o: ResolvedOptions): Promise<LevelSolves> {
  const levels: LevelResult[] = [];
  let mesh = oriented;
  let solve: LevelSolve | undefined;
  const coarse: Array<{ mesh: SurfaceMesh; unit: UnitSolution }> | undefined = !bodies && layout.nets === 1 ? [] : undefined;
  for (let level = 0; level <= o.refine; level++) {
    if (coarse && solve) coarse.push({ mesh, unit: solve.unit });
    // How far this refinement moved the geometry off the coarse panels (conductors and bodies).
    let displacement = 0;
    if (level > 0) ({ mesh, bodies, displacement } = refineModel(mesh, bodies));
    solve = bodies ? await solveDielectricLevel(mesh, bodies, unfold, level, layout, o) : await solveConductorLevel(mesh, level, layout, o);
    levels.push({ ...solve.level, displacement });
  }
  if (!solve) throw new Error("no level solved");
  return { levels, mesh, unit: solve.unit, patterns: solve.patterns, dielectric: solve.dielectric, bodies, coarse };
}

/**
 * One uniform refinement of the conductors and of the dielectric bodies, with the largest
 * displacement of a new point off its straight midpoint over all of them (refine.ts).
 */
export function refineModel(mesh: SurfaceMesh, bodies: PreparedBody[] | undefined): { mesh: SurfaceMesh; bodies: PreparedBody[] | undefined; displacement: number } {
  const r = refineLevel(mesh);
  let displacement = r.displacement;
  const refined = bodies?.map((b) => {
    const rb = refineLevel(b.mesh);
    displacement = Math.max(displacement, rb.displacement);
    return { ...b, mesh: rb.mesh };
  });
  return { mesh: r.mesh, bodies: refined, displacement };
}

/**
 * With refinements, check before the first solve that the finest level fits: n0 panels (conductor
 * and interface) on the first level, 4^refine times as many on the last (refineLevel splits
 * each triangle in four), solved on the path the solver choice takes at that size.
 */
function checkFinestLevel(n0: number, k: number, o: ResolvedOptions, entries: "conductors" | "interfaces"): void {
  if (o.refine === 0 || o.accuracy !== undefined) return;
  const n = n0 * 4 ** o.refine;
  const { solver } = resolveSolver(o.solver, n, k, entries);
  assertFinestFits(solver, n, k, o.refine, o.memoryLimit, 32, PRECONDITIONER_CLUSTER);
}

/** Progress of pattern s of a level, counted over all levels' patterns. */
function patternProgress(o: ResolvedOptions, level: number, s: number, nets: number) {
  // Adaptive steps (adaptive.ts) are counted as they come: the last level is the current one.
  const levels = o.accuracy !== undefined ? level + 1 : o.refine + 1;
  return (phase: string, f: number) => o.progress?.(phase, f, level * nets + s, levels * nets);
}

/** Conductors in a uniform medium: per pattern, Q = 4πε x summed over each conductor (and its even mirrors). */
export async function solveConductorLevel(mesh: SurfaceMesh, level: number, layout: SymmetryLayout, o: ResolvedOptions): Promise<LevelSolve> {
  const { nets, tied } = layout, k = mesh.names.length;
  if (level === 0) checkFinestLevel(mesh.conductor.length, k, o, "conductors");
  const perPattern: Float64Array[] = [], xs: Float64Array[] = [];
  let last: UnitSolution | undefined;
  for (let s = 0; s < nets; s++) {
    const sol = await solveUnitPotentials(mesh.positions, mesh.triangles, mesh.conductor, k, {
      method: o.method, solver: o.solver, tolerance: o.tolerance, pool: o.pool, memoryLimit: o.memoryLimit, kernel: layout.kernelFor(s),
      progress: patternProgress(o, level, s, nets),
    });
    const q = conductorCharges(sol.x, mesh.conductor, k, sol.chargeCorrection);
    const scale = 4 * Math.PI * o.permittivity * tied;
    for (let i = 0; i < q.length; i++) q[i] *= scale;
    perPattern.push(q); xs.push(sol.x);
    last = sol;
  }
  return { level: { panels: last!.panels.n, maxwell: nets > 1 ? unfoldMatrix(perPattern, k, nets) : perPattern[0], info: last!.info }, unit: last!, patterns: xs };
}

/**
 * Conductors and dielectric interfaces: per pattern, the free charges (ε-weighted, bem/interface.ts)
 * summed over each conductor give Q; every charge, free and polarisation, radiates in vacuum.
 */
export async function solveDielectricLevel(mesh: SurfaceMesh, bodies: PreparedBody[], unfold: BodyUnfolding | undefined, level: number,
  layout: SymmetryLayout, o: ResolvedOptions): Promise<LevelSolve> {
  const { nets, tied } = layout, k = mesh.names.length, er = o.relativePermittivity;
  const model = unfold ? unfold.restrict(dielectricModel(unfold.surface(mesh), bodies, er, o.groundPlane), mesh.conductor.length)
    : dielectricModel(mesh, bodies, er, o.groundPlane);
  if (level === 0) checkFinestLevel(model.triangles.length / 3, k, o, "interfaces");
  const perPattern: Float64Array[] = [], xs: Float64Array[] = [];
  let dsol: UnitSolution | undefined;
  let unit: UnitSolution | undefined;
  for (let s = 0; s < nets; s++) {
    const ks: KernelSpec | undefined = layout.kernelFor(s);
    dsol = await solveUnitPotentialsWithInterfaces(model.positions, model.triangles, mesh.conductor, k, model.lambda, o.testing, {
      method: o.method, solver: o.solver, tolerance: o.tolerance, pool: o.pool, memoryLimit: o.memoryLimit, kernel: ks,
      progress: patternProgress(o, level, s, nets),
    }, openFieldPanels(model));
    const xFree = freeCharges(model, dsol.panels, dsol.x, k, ks ? imageSet(dsol.panels, ks) : undefined, dsol.normalField);
    const qd = conductorCharges(xFree, mesh.conductor, k);
    for (let i = 0; i < qd.length; i++) qd[i] *= 4 * Math.PI * EPSILON_0 * tied;
    perPattern.push(qd); xs.push(dsol.x);
    if (s === 0) unit = { x: xFree, panels: panelSet(mesh.positions, mesh.triangles), info: dsol.info };
  }
  return {
    level: { panels: dsol!.panels.n, maxwell: nets > 1 ? unfoldMatrix(perPattern, k, nets) : perPattern[0], info: dsol!.info },
    unit: unit!, patterns: xs,
    // The open sheets' normal field from the solver (compressed path) holds for the one
    // pattern; unfolded both-plane models sum it directly.
    dielectric: { model, panels: dsol!.panels, totalX: xs[0], openNormalField: nets === 1 ? dsol!.normalField : undefined },
  };
}
