/**
 * Extraction: conductor surfaces in, capacitance matrices, charges, fields, energy, forces and
 * an accuracy estimate out. This is the library entry the CLI is built on.
 *
 * `extractMesh` runs these phases in order, each a function of its own:
 *  1. options checked and resolved, working potentials and floating flags per net (options.ts),
 *     over the nets and per-pattern kernels of the symmetry planes (symmetry-unfold.ts);
 *  2. surroundings: the cut faces of a half model dropped, the conductors checked against the
 *     ground plane and symmetry planes, dielectric bodies prepared (unfolded with planes);
 *  3. orientation and closedness of the conductors (closed by symmetry where cut only along planes);
 *  4. the refinement levels' solves, conductor-only or with dielectrics (levels.ts), and the
 *     finest solution unfolded into explicit mirror copies for planes with images "both";
 *  5. the reported matrices: Richardson extrapolation and its accuracy (accuracy.ts), floating
 *     conductors eliminated (floating.ts);
 *  6. the excitation at the working potentials: fields, forces, field check (working-point.ts);
 *  7. the result assembled (result.ts).
 *
 * Surroundings: a grounded plane and mirror symmetry planes enter through the image kernel
 * (bem/images.ts). With symmetry planes the mesh is the meshed part of a model 2^m times as
 * large: each conductor stands for itself together with its mirror images (one body when it
 * meets the plane, copies tied to the same potential when it does not), and its charge, area,
 * capacitances and energy are reported for the full model (the meshed part's times 2^m; net
 * forces are the sum over the copies, so components normal to a symmetry plane cancel).
 * An odd plane puts the mirror half at the opposite potential: the conductor no longer includes
 * that mirror (C is the antisymmetric excitation's, C11 − C12 of a pair; the energy is still the
 * full model's). Planes with images "both" are solved once per even/odd pattern and unfolded
 * (symmetry-unfold.ts). Panel-level results (charges, densities, fields) stay those of the
 * meshed panels (of the unfolded mesh with "both").
 */
import type { SurfaceMesh } from "../mesh/model.js";
import { triangleCount, conductorAreas } from "../mesh/model.js";
import { orientSurfaces, conductorTopology, buildEdgeTable } from "../mesh/topology.js";
import { hasFeatureEdges } from "../mesh/edges.js";
import { NESTED_DISPLACEMENT } from "../mesh/refine.js";
import { InputError } from "../errors.js";
import { kernelPlanes, symmetryCopies, conductorRanges, checkSides, trianglesInSymmetryPlanes, evenCopies, type KernelSpec } from "../bem/images.js";
import { EPSILON_0 } from "./constants.js";
import { forceResolutions } from "./excitation.js";
import { capacitanceMatrices, chargesAt, storedEnergy, mutualFromMaxwell } from "./capacitance.js";
import { richardson, sequenceRichardson, type RichardsonResult } from "./accuracy.js";
import { runPeakMeter } from "./memory.js";
import { eliminateFloating, withFloatingPotentials } from "./floating.js";
import { prepareBodies, type PreparedBody } from "./dielectric-bodies.js";
import { resolveOptions, lengthDescriber, type MeshExtractOptions, type ResolvedOptions } from "./options.js";
import type { Accuracy, ConductorResult, ExtractionResult, LevelResult } from "./result.js";
import { symmetryLayout, unfoldedFinest, withoutTriangles, closeBySymmetry, unfolding, type SymmetryLayout, type BodyUnfolding } from "./symmetry-unfold.js";
import { solveLevels, type LevelSolves } from "./levels.js";
import { solveAdaptive, type AdaptiveRecord } from "./adaptive.js";
import type { FinestSolution } from "./result.js";
import { workingPointFields, scaleCopy, type WorkingPoint } from "./working-point.js";

export type { MeshExtractOptions } from "./options.js";
export type { ExtractionResult, ConductorResult, DielectricResult, LevelResult, Accuracy } from "./result.js";

/**
 * Convergence order assumed from two meshes. Piecewise-constant Galerkin on a smooth body
 * converges like h² in C (the flat facets' geometric error dominates the h³ of the charge
 * functional); edges and corners, where σ is singular, make it slower, near h¹ (observed on
 * cubes and plates in tests/reference). With three or more meshes the order is observed.
 */
export function assumedOrder(hasSharpFeatures: boolean): number {
  return hasSharpFeatures ? 1 : 2;
}

/**
 * Capacitance matrices, charges, fields, energy and forces of the conductors of `input`
 * (metres; one conductor per name), with an accuracy estimate when `opts.refine` > 0.
 * InputError names any fault of the input or options.
 */
export async function extractMesh(input: SurfaceMesh, opts: MeshExtractOptions = {}): Promise<ExtractionResult> {
  const t0 = performance.now();
  const meter = runPeakMeter();
  try {
    return await extractMeshMetered(input, opts, t0, meter);
  } finally {
    meter.stop();
  }
}

async function extractMeshMetered(input: SurfaceMesh, opts: MeshExtractOptions, t0: number, meter: ReturnType<typeof runPeakMeter>): Promise<ExtractionResult> {
  const k = input.names.length;
  if (k === 0 || triangleCount(input) === 0) throw new InputError("nothing to extract: no conductor with triangles");
  const describe = lengthDescriber(opts.lengthUnit);
  const layout = symmetryLayout(input.names, opts.symmetry ?? [], opts.groundPlane, describe);
  const o = resolveOptions(opts, k, layout.nets, layout.copySign);
  const K = k * layout.nets;
  const warnings: string[] = [];

  const cut = surroundings(input, layout, warnings, describe);
  const { bodies, unfold } = dielectricBodies(o, layout, cut.sides, warnings);
  const oriented = orientedConductors(cut.mesh, layout.checkKernel, warnings);

  const solves: LevelSolves & { adaptive?: AdaptiveRecord } = o.accuracy !== undefined
    ? await solveAdaptive(oriented.mesh, bodies, unfold, layout, o, warnings)
    : await solveLevels(oriented.mesh, bodies, unfold, layout, o);
  const finest = layout.nets > 1 ? unfoldedFinest(solves, solves.patterns, layout, k) : solves;
  // Per net: a mirror copy is closed, and has as many triangles, as the conductor it mirrors.
  const netClosed = layout.nets > 1 ? layout.names.map((_, i) => oriented.closed[i % k]) : oriented.closed;
  const netCounts = layout.nets > 1 ? Uint32Array.from(layout.names, (_, i) => oriented.counts[i % k]) : oriented.counts;

  const matrices = reportedMatrices(solves.levels, K, layout.names, oriented, bodies !== undefined, o, warnings, solves.adaptive);
  const reduced = floatingElimination(matrices.maxwell, K, o.floating, o.potentials, layout.names);
  const point = await workingPointFields(finest, K, reduced.working, netClosed, layout.kernel, o, warnings, solves.coarse);

  return assembledResult({ t0, peakMemory: meter.stop(), layout, o, cut, oriented, netClosed, netCounts, solves, finest, matrices, reduced, point, warnings });
}

interface Surroundings {
  /** The conductors without the triangles lying in a symmetry plane. */
  mesh: SurfaceMesh;
  removedInSymmetryPlane: number;
  /** Per axis, the side of its plane the conductors lie on (with images only). */
  sides?: Int8Array;
}

/**
 * The ground plane and symmetry planes against the conductors: the cut faces of a half model
 * dropped (they are no conductor surface), every conductor on one side of each plane and off the
 * odd planes (checked as if every both-plane were odd: its odd solve needs that).
 */
function surroundings(input: SurfaceMesh, layout: SymmetryLayout, warnings: string[], describe: (metres: number) => string): Surroundings {
  const { checkKernel } = layout;
  if (!checkKernel) return { mesh: input, removedInSymmetryPlane: 0 };
  try { kernelPlanes(checkKernel); } catch (e) { throw new InputError((e as Error).message); }
  let mesh = input, removedInSymmetryPlane = 0;
  const cut = trianglesInSymmetryPlanes(checkKernel, input.positions, input.triangles);
  if (cut.count > 0) {
    mesh = withoutTriangles(input, cut.flags);
    removedInSymmetryPlane = cut.count;
    warnings.push(`${cut.count} triangle(s) lying in a symmetry plane were removed (the cut face of a half model is not a conductor surface)`);
  }
  const ranges = conductorRanges(mesh.positions, mesh.triangles, mesh.conductor, mesh.names.length);
  const sides = checkSides(checkKernel, ranges, mesh.names, describe);
  if (sides.fault) throw new InputError(layout.both.length > 0 ? sides.fault.replace("odd symmetry plane", "symmetry plane with both images") : sides.fault);
  return { mesh, removedInSymmetryPlane, sides: sides.sides };
}

/**
 * The dielectric bodies checked and oriented. Those of a symmetric model are meshed on the
 * conductors' side; the media are found on the unfolded bodies (a half body encloses nothing).
 */
function dielectricBodies(o: ResolvedOptions, layout: SymmetryLayout, sides: Int8Array | undefined, warnings: string[]):
  { bodies?: PreparedBody[]; unfold?: BodyUnfolding } {
  if (o.dielectrics.length === 0) return {};
  const unfold = layout.planes.length > 0 && layout.checkKernel ? unfolding(layout.checkKernel, sides!, o.describeLength) : undefined;
  const given = unfold ? o.dielectrics.map((b, i) => ({ ...b, mesh: unfold.body(b.mesh, typeof b.name === "string" && b.name !== "" ? b.name : `dielectric ${i + 1}`) })) : o.dielectrics;
  const bodies = prepareBodies(given, o.relativePermittivity, o.describePoint);
  const flipped = bodies.filter((b) => b.flipped).map((b) => b.name);
  if (flipped.length > 0) warnings.push(`dielectric interface(s) ${flipped.join(", ")} were wound inward or inconsistently and have been reoriented`);
  return { bodies, unfold };
}

interface OrientedConductors {
  /** Every component wound outward. */
  mesh: SurfaceMesh;
  /** Per meshed conductor: closed (in the full model, for parts cut open along even planes). */
  closed: boolean[];
  /** Triangles per meshed conductor. */
  counts: Uint32Array;
  flippedComponents: number;
  unorientable: number;
}

/** The conductors' surfaces oriented outward, and which are closed; InputError for a conductor without triangles. */
function orientedConductors(input: SurfaceMesh, checkKernel: KernelSpec | undefined, warnings: string[]): OrientedConductors {
  const k = input.names.length;
  // Every conductor needs triangles of its own.
  const counts = new Uint32Array(k);
  for (let t = 0; t < input.conductor.length; t++) counts[input.conductor[t]]++;
  for (let c = 0; c < k; c++) if (counts[c] === 0) throw new InputError(`conductor ${input.names[c]} has no triangles`);

  const oriented = orientSurfaces(input);
  let flippedComponents = 0, unorientable = 0;
  const flippedIn = new Map<number, number>();
  for (const c of oriented.components) {
    if (c.status === "inward-flipped" || c.status === "repaired") { flippedComponents++; flippedIn.set(c.conductor, (flippedIn.get(c.conductor) ?? 0) + 1); }
    if (c.status === "non-orientable" || c.status === "non-manifold") unorientable++;
  }
  if (flippedComponents > 0) {
    const which = [...flippedIn].map(([c, n]) => (n > 1 ? `${input.names[c]} (${n} pieces)` : input.names[c]));
    warnings.push(`the surface of ${which.length === 1 ? "conductor" : "conductors"} ${which.join(", ")} was wound inward or inconsistently and has been reoriented`);
  }
  let mesh = oriented.mesh;
  const table = buildEdgeTable(mesh);
  const topo = conductorTopology(mesh, table);
  // A part cut open only along even symmetry planes is closed in the full model.
  const closed = topo.map((t) => t.closed);
  if (checkKernel && evenCopies(checkKernel) > 1) {
    const half = closeBySymmetry(checkKernel, mesh, table, oriented.componentOf, oriented.components.length);
    mesh = half.mesh;
    for (let c = 0; c < k; c++) if (!closed[c] && topo[c].nonManifoldEdges === 0 && half.conductorClosed[c]) closed[c] = true;
    if (half.flipped > 0) flippedComponents += half.flipped;
  }
  return { mesh, closed, counts, flippedComponents, unorientable };
}

interface ReportedMatrices {
  /** The Maxwell matrix reported: the finest level's, or extrapolated over the levels; F. */
  maxwell: Float64Array;
  mutual: Float64Array;
  /** Of the finest level's matrix. */
  asymmetry: number;
  accuracy?: Accuracy;
}

/** The K×K Maxwell matrix of the finest level, or Richardson-extrapolated over all levels with its error estimate. */
function reportedMatrices(levels: LevelResult[], K: number, names: string[], oriented: OrientedConductors, withBodies: boolean,
  o: ResolvedOptions, warnings: string[], adaptive?: AdaptiveRecord): ReportedMatrices {
  const finest = capacitanceMatrices(levels[levels.length - 1].maxwell, K, names);
  let maxwell = finest.maxwell;
  let accuracy: Accuracy | undefined;
  if (levels.length > 1) {
    const sym = levels.map((l) => capacitanceMatrices(l.maxwell, K, names).maxwell);
    // Galerkin values rise toward the limit only over nested levels (accuracy.ts).
    const displacement = levels.reduce((m, l) => Math.max(m, l.displacement ?? 0), 0);
    const nested = displacement <= NESTED_DISPLACEMENT;
    const lowerBound = o.method === "galerkin" && !withBodies && nested;
    // Three or more solves, adaptive or uniform: the power law in the panel count fitted over the
    // last ones (sequenceRichardson); two uniform levels assume the order by the geometry. An
    // adaptive run stopped after two solves has no estimate.
    let r: RichardsonResult | undefined;
    if (adaptive || (levels.length >= 3 && o.assumedOrder === undefined)) {
      if (levels.length >= 3) r = sequenceRichardson(sym, levels.map((l) => l.panels), K, { fromBelow: lowerBound });
    } else {
      const sharp = oriented.closed.some((c) => !c) || hasFeatureEdges(oriented.mesh);
      r = richardson(sym, K, { assumedOrder: o.assumedOrder ?? assumedOrder(sharp), fromBelow: lowerBound });
    }
    if (r) {
      accuracy = { levels: levels.map((l, i) => ({ panels: l.panels, maxwell: sym[i] })), richardson: r, nested, displacement, lowerBound, extrapolated: true, adaptive };
      maxwell = r.extrapolated;
      warnings.push(...r.warnings);
    }
  }
  const checked = accuracy ? capacitanceMatrices(maxwell, K, names) : finest;
  warnings.push(...checked.warnings);
  return { maxwell, mutual: mutualFromMaxwell(maxwell, K), asymmetry: finest.asymmetry, accuracy };
}

interface FloatingElimination {
  reducedMaxwell: Float64Array;
  reducedMutual: Float64Array;
  reducedNames: string[];
  /** Working potentials with the floating conductors' solved ones; V. */
  working: Float64Array;
  floatingNames: string[];
  floatingPotentials: Float64Array;
}

/** Floating conductors: eliminated from the reported matrix, potentials solved at the working point. */
function floatingElimination(maxwell: Float64Array, K: number, floating: boolean[], potentials: Float64Array, names: string[]): FloatingElimination {
  let reducedMaxwell = maxwell, reducedNames = names.slice();
  let working: Float64Array = potentials;
  const floatingNames: string[] = [];
  let floatingPotentials = new Float64Array(0);
  if (floating.some((f) => f)) {
    const red = eliminateFloating(maxwell, K, floating);
    reducedMaxwell = red.reducedMaxwell;
    reducedNames = Array.from(red.driven, (i) => names[i]);
    working = withFloatingPotentials(red, K, potentials);
    floatingPotentials = Float64Array.from(red.floating, (i) => working[i]);
    for (const i of red.floating) floatingNames.push(names[i]);
  }
  const reducedMutual = mutualFromMaxwell(reducedMaxwell, reducedNames.length);
  return { reducedMaxwell, reducedMutual, reducedNames, working, floatingNames, floatingPotentials };
}

/** The phases' outputs, in the order they ran. */
interface Phases {
  t0: number;
  /** The run's own peak resident memory (runPeakMeter); bytes. */
  peakMemory: number;
  layout: SymmetryLayout;
  o: ResolvedOptions;
  cut: Surroundings;
  oriented: OrientedConductors;
  netClosed: boolean[];
  netCounts: Uint32Array;
  solves: LevelSolves;
  finest: FinestSolution;
  matrices: ReportedMatrices;
  reduced: FloatingElimination;
  point: WorkingPoint;
  warnings: string[];
}

/** The result: per conductor (net) its charge at the working point, area and field check; the run's matrices and record. */
function assembledResult(r: Phases): ExtractionResult {
  const { layout, o, finest, matrices, reduced, point } = r;
  const names = layout.names, K = names.length, mesh = finest.mesh;
  const { maxwell } = matrices, { working } = reduced;
  const model = finest.dielectric?.model;
  const mediumName = (m: number) => m < 0 ? "background" : model!.bodies[m].name;
  const q = chargesAt(maxwell, K, working);
  // The full model's energy: odd mirrors store as much as the conductors they mirror.
  const energy = storedEnergy(maxwell, K, working) * layout.oddCopies;
  const areas = conductorAreas(mesh);
  for (let i = 0; i < K; i++) areas[i] *= layout.tied;
  const { peaks, critical, force } = point;
  // Per meshed conductor; a mirror net (with images "both") takes its original's.
  const meshed = mesh.names.length;
  const resolution = forceResolutions(point.excitation.field, finest.unit.panels, mesh.conductor, meshed, o.permittivity);

  const conductors: ConductorResult[] = names.map((name, i) => ({
    name,
    triangles: r.netCounts[i],
    area: areas[i],
    closed: r.netClosed[i],
    potential: working[i],
    charge: q[i],
    peakField: peaks[i].value,
    peakFieldAt: peaks[i].at,
    peakFieldSingular: point.peakAssessments[i].singular,
    peakFieldError: point.peakAssessments[i].error,
    peakFieldGrowth: point.peakAssessments[i].growth,
    fieldRatio: critical[i].ratio,
    criticalField: critical[i].field,
    criticalFieldAt: critical[i].at,
    medium: mediumName(critical[i].medium),
    mediumBreakdownField: critical[i].strength,
    force: [force[3 * i], force[3 * i + 1], force[3 * i + 2]],
    forceResolution: resolution[i % meshed] * layout.tied,
    floating: o.floating[i],
  }));
  const seconds = (performance.now() - r.t0) / 1e3;
  const levels = r.solves.levels;
  const lastInfo = levels[levels.length - 1].info;
  return {
    names: names.slice(), conductors, k: K, permittivity: o.permittivity, relativePermittivity: o.relativePermittivity, breakdownField: o.breakdownField,
    media: [{ name: "background", relativePermittivity: o.relativePermittivity, breakdownField: o.breakdownField },
      ...(r.solves.bodies ?? []).map((b, i) => ({ name: b.name, relativePermittivity: b.permittivity, breakdownField: o.strengths[i] }))],
    maxwell, mutual: matrices.mutual, asymmetry: matrices.asymmetry, energy, potentials: working, mesh, panelConductor: mesh.conductor,
    excitation: point.excitation, panels: finest.unit.panels, sharpPanels: point.sharp,
    unitCharges: scaleCopy(finest.unit.x, 4 * Math.PI * (model ? EPSILON_0 : o.permittivity)), peaks, forcesComplete: point.forcesComplete,
    accuracy: matrices.accuracy,
    solver: { ...lastInfo, seconds, peakMemory: r.peakMemory, levels },
    orientation: { flippedComponents: r.oriented.flippedComponents, unorientable: r.oriented.unorientable },
    reference: layout.kernel?.groundPlane ? "ground plane" : "infinity",
    groundPlane: o.groundPlane, symmetry: layout.planes, symmetryCopies: symmetryCopies(layout.checkKernel), mirrorNets: layout.nets,
    images: point.images, removedInSymmetryPlane: r.cut.removedInSymmetryPlane,
    floatingNames: reduced.floatingNames, floatingPotentials: reduced.floatingPotentials,
    reducedMaxwell: reduced.reducedMaxwell, reducedMutual: reduced.reducedMutual, reducedNames: reduced.reducedNames,
    removedInterfacePanels: model?.removedInterfacePanels ?? 0, dielectric: point.dielectric,
    warnings: r.warnings,
  };
}
