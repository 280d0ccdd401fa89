/**
 * Extraction: conductor surfaces in, capacitance matrices, charges, fields, energy,
 * forces and an accuracy estimate out. This is the library entry the CLI is built on.
 *
 * Surroundings: a grounded plane and mirror symmetry planes enter through the image kernel
 * (bem/images.ts). With symmetry planes the mesh is the meshed part of a model 2^m times as
 * large: each conductor stands for itself together with its mirror images (one body when it
 * meets the plane, copies tied to the same potential when it does not), and its charge, area,
 * capacitances and energy are reported for the full model (the meshed part's times 2^m; net
 * forces are the sum over the copies, so components normal to a symmetry plane cancel).
 * An odd plane puts the mirror half at the opposite potential: the conductor no longer includes
 * that mirror (C is the antisymmetric excitation's, C11 − C12 of a pair; the energy is still the
 * full model's). Planes with images "both" are solved once per even/odd pattern and unfolded:
 * the full Maxwell matrix by the character sum (`unfoldMatrix`), the mesh and unit solutions
 * into explicit mirror copies whose conductors are nets of their own (`name~x`).
 * Panel-level results (charges, densities, fields) stay those of the meshed panels (of the
 * unfolded mesh with "both").
 * Floating conductors are eliminated from the Maxwell matrix (floating.ts).
 */
import type { SurfaceMesh } from "../mesh/model.js";
import { triangleCount, conductorAreas } from "../mesh/model.js";
import { orientSurfaces, conductorTopology, buildEdgeTable } from "../mesh/topology.js";
import { refineUniform, hasFeatureEdges } from "../mesh/refine.js";
import type { Discretisation } from "../bem/assembly.js";
import { sharedPool, type WorkerPool } from "../linalg/pool.js";
import { EPSILON_0, AIR_BREAKDOWN_FIELD } from "./constants.js";
import { compressionTolerance, solveUnitPotentials, type SolverChoice, type SolveInfo, type UnitSolution } from "./solve.js";
import { conductorCharges, capacitanceMatrices, chargesAt, storedEnergy, mutualFromMaxwell } from "./capacitance.js";
import { richardson, type RichardsonResult } from "./accuracy.js";
import { panelExcitation, peakFields, conductorForces, criticalFields, type PanelExcitation, type PeakField } from "./excitation.js";
import { peakResidentBytes } from "./memory.js";
import { centroidFieldsFast } from "./probe.js";
import type { PanelSet } from "../bem/panels.js";
import { InputError } from "../errors.js";
import {
  AXES, mirrorNets, hasImages, kernelPlanes, imageSet, symmetryCopies, conductorRanges, checkSides, trianglesInSymmetryPlanes,
  edgeInSymmetryPlane, foldVectors, evenCopies, axisIndex, reflectSurface, mirrorSuffix,
  type AxisPlane, type KernelSpec, type ImageSet, type SymmetryPlane,
} from "../bem/images.js";
import { eliminateFloating, withFloatingPotentials } from "./floating.js";
import {
  prepareBodies, dielectricModel, freeCharges, dielectricExcitation, openFieldPanels,
  type DielectricBody, type BodySummary, type DielectricModel, type PreparedBody,
} from "./dielectric.js";
import { solveUnitPotentialsWithInterfaces } from "./solve.js";
import { dielectricBodyForces } from "./dielectric-force.js";
import { panelSet } from "../bem/panels.js";
import type { InterfaceTesting } from "../bem/interface.js";

export interface MeshExtractOptions {
  /** Relative permittivity of the uniform medium (default 1). */
  permittivity?: number;
  method?: Discretisation;
  solver?: SolverChoice;
  /** Requested relative accuracy of C (default 1e-4): sets solver tolerances. */
  tolerance?: number;
  /** Working potentials in volts, one per conductor (default: first 1 V, rest 0 V). */
  potentials?: ArrayLike<number>;
  /** Breakdown strength of the medium; V/m (default 3 MV/m, air). */
  breakdownField?: number;
  /** Uniform refinements for the error estimate (0 = none). */
  refine?: number;
  /** Convergence order assumed when only two meshes are solved (default: see `assumedOrder`). */
  assumedOrder?: number;
  pool?: WorkerPool;
  progress?: (phase: string, fraction: number, level: number, levels: number) => void;
  memoryLimit?: number;
  /** Grounded conducting plane (method of images); metres. Becomes the reference of the mutual matrix. */
  groundPlane?: AxisPlane;
  /**
   * Mirror symmetry planes; metres. At most one plane per axis, none on the ground plane's axis.
   * `images`: even (default; the mirror half tied to the same potential), odd (the mirror half at
   * the opposite potential; the plane is at 0 V) or both (an even and an odd solve per plane
   * rebuild the full model, each mirrored conductor its own net named `name~x`).
   */
  symmetry?: SymmetryPlane[];
  /** Per conductor: zero net charge at a potential solved for (its entry in `potentials` is ignored). */
  floating?: ArrayLike<boolean>;
  /**
   * Dielectric bodies: closed surfaces (metres) with their relative permittivity, in the background
   * `permittivity`; `breakdownField` (V/m) is the body's strength for the field check (default:
   * the background's `breakdownField`).
   */
  dielectrics?: Array<DielectricBody & { breakdownField?: number }>;
  /** Testing of the interface rows (default galerkin: measured more accurate, bem/interface.ts). */
  interfaceTesting?: InterfaceTesting;
}

/** What the dielectric model did, on the finest mesh. */
export interface DielectricResult {
  bodies: BodySummary[];
  /** Interface panels kept (unknowns besides the conductor panels). */
  interfacePanels: number;
  /** Coincident panels of touching bodies merged into one. */
  mergedInterfacePanels: number;
  testing: InterfaceTesting;
  /** Relative permittivity just outside each conductor panel (finest mesh). */
  conductorPermittivity: Float64Array;
  /** All panels of the finest model (conductors first, then interfaces) and their total charges at the working potentials; coulombs (for field probes: every charge radiates in vacuum). */
  panels: PanelSet;
  totalCharge: Float64Array;
  model: DielectricModel;
  /** Net force on each body (N; full model, folded like the conductors'), null where a conductor touches it or it faces several media (dielectric-force.ts). */
  forces: Array<[number, number, number] | null>;
}

export interface ConductorResult {
  name: string;
  triangles: number;
  /** m². */
  area: number;
  closed: boolean;
  /** V. */
  potential: number;
  /** C. */
  charge: number;
  /** Peak normal surface field; V/m. */
  peakField: number;
  /** Centroid of the panel with the peak field; metres. */
  peakFieldAt: [number, number, number];
  /** Largest ratio over its panels of the field to the breakdown strength of the medium just outside. */
  fieldRatio: number;
  /** The panel deciding `fieldRatio`: its field (V/m), centroid (metres), medium and that medium's strength (V/m). */
  criticalField: number;
  criticalFieldAt: [number, number, number];
  medium: string;
  mediumBreakdownField: number;
  /** Net electrostatic force; newtons. */
  force: [number, number, number];
  /** Zero net charge at a solved potential. */
  floating: boolean;
}

export interface LevelResult {
  panels: number;
  maxwell: Float64Array;
  info: SolveInfo;
}

export interface Accuracy {
  levels: Array<{ panels: number; maxwell: Float64Array }>;
  richardson: RichardsonResult;
  /** The matrix reported is the extrapolated one. */
  extrapolated: true;
}

export interface ExtractionResult {
  names: string[];
  conductors: ConductorResult[];
  k: number;
  /** Absolute permittivity of the medium; F/m. */
  permittivity: number;
  relativePermittivity: number;
  breakdownField: number;
  /** The media of the field check: the background, then each dielectric body, with relative permittivity and breakdown strength (V/m). */
  media: Array<{ name: string; relativePermittivity: number; breakdownField: number }>;
  /** Maxwell matrix reported (extrapolated when refinement was asked for); F, row-major k×k. */
  maxwell: Float64Array;
  mutual: Float64Array;
  asymmetry: number;
  /** J. */
  energy: number;
  potentials: Float64Array;
  /** On the finest mesh solved. */
  mesh: SurfaceMesh;
  panelConductor: Uint32Array;
  excitation: PanelExcitation;
  /** Panels of the finest mesh (for probes). */
  panels: PanelSet;
  /** Unit-potential solutions on the finest mesh, n×k: Q = 4πε x (the columns of the Maxwell matrix per panel). */
  unitCharges: Float64Array;
  peaks: PeakField[];
  forcesComplete: boolean;
  accuracy?: Accuracy;
  solver: SolveInfo & { seconds: number; peakMemory: number; levels: LevelResult[] };
  /** Orientation fixes made to the input. */
  orientation: { flippedComponents: number; unorientable: number };
  /** What the mutual matrix's diagonal (capacitance to the reference) refers to. */
  reference: "ground plane" | "infinity";
  groundPlane?: AxisPlane;
  /** The symmetry planes with their images (even, odd, both). */
  symmetry: SymmetryPlane[];
  /**
   * Copies of the meshed part in the full model (2^symmetry planes). Each conductor reported
   * stands for itself with its even mirrors (charges, areas, C summed over them); odd mirrors
   * are at the opposite potential and not included; with `both` planes the mirrors are
   * conductors of their own (`name~x`) and the mesh is the unfolded model. Energy is the full model's.
   */
  symmetryCopies: number;
  /** Nets per meshed conductor: 2^(planes with both images). */
  mirrorNets: number;
  /** Mirror images of the finest panels (for probes: probeExtraction includes them). */
  images?: ImageSet;
  /** Triangles dropped because they lay in a symmetry plane (the cut face of a half model). */
  removedInSymmetryPlane: number;
  /** Names of the floating conductors and their solved potentials (V), in conductor order. */
  floatingNames: string[];
  floatingPotentials: Float64Array;
  /** Interface panels removed because a conductor covers or encloses them, or they lie in the ground plane (0 without dielectrics). */
  removedInterfacePanels: number;
  dielectric?: DielectricResult;
  /** Maxwell matrix with the floating conductors eliminated (Schur complement), over `reducedNames`; F. Equals `maxwell` when none floats. */
  reducedMaxwell: Float64Array;
  reducedMutual: Float64Array;
  reducedNames: string[];
  warnings: string[];
}

/**
 * Convergence order assumed from two meshes. Piecewise-constant Galerkin on a smooth body
 * converges like h² in C (the flat facets' geometric error dominates the h³ of the charge
 * functional); edges and corners, where σ is singular, make it slower, near h¹ (observed on
 * cubes and plates in tests/reference). With three or more meshes the order is observed.
 */
export function assumedOrder(hasSharpFeatures: boolean): number {
  return hasSharpFeatures ? 1 : 2;
}

export async function extractMesh(input: SurfaceMesh, opts: MeshExtractOptions = {}): Promise<ExtractionResult> {
  const t0 = performance.now();
  const k = input.names.length;
  if (k === 0 || triangleCount(input) === 0) throw new InputError("nothing to extract: no conductor with triangles");
  const planes = checkedSymmetry(opts.symmetry ?? []);
  // Planes with both images are unfolded: copy h of the meshed part is reflected in the planes
  // of the set bits of h (bit b ↔ both[b]); solve pattern s makes the planes of its set bits odd.
  const both = planes.filter((p) => p.images === "both");
  const nets = 1 << both.length, K = k * nets;
  const unfoldedNets = mirrorNets(input.names, planes);
  const copyMask = (h: number) => unfoldedNets.masks[h];
  const kernelFor = (pattern: number): KernelSpec | undefined => {
    const spec: KernelSpec = {
      groundPlane: opts.groundPlane,
      symmetry: planes.map((p) => ({ axis: p.axis, offset: p.offset, images: p.images === "both" ? ((pattern >> both.indexOf(p)) & 1 ? "odd" : "even") : p.images })),
    };
    return hasImages(spec) ? spec : undefined;
  };
  // Side checks as if every both-plane were odd (its odd solve needs the conductors off it).
  const checkKernel = kernelFor(nets - 1);
  // The images of the reported (unfolded) model: the ground plane and the even and odd planes.
  const fixedSpec: KernelSpec = { groundPlane: opts.groundPlane, symmetry: planes.filter((p) => p.images !== "both").map((p) => ({ axis: p.axis, offset: p.offset, images: p.images })) };
  const kernel = hasImages(fixedSpec) ? fixedSpec : undefined;
  const tied = evenCopies(kernel), oddCopies = symmetryCopies(kernel) / tied;
  const netNames = unfoldedNets.names;
  if (nets > 1) {
    const seen = new Set<string>();
    for (const n of netNames) {
      if (seen.has(n)) throw new InputError(`conductor name ${n} is also the name of a mirrored conductor (symmetry images "both" name mirrors ${mirrorSuffix(copyMask(1))} etc.); rename it`);
      seen.add(n);
    }
  }
  // Working potential sign of copy h relative to the meshed part.
  const copySign = (h: number) => unfoldedNets.sign[h];

  const floating = new Array<boolean>(K).fill(false);
  if (opts.floating) {
    if (opts.floating.length !== k && opts.floating.length !== K) throw new InputError(`${opts.floating.length} floating flags given for ${k} conductors${K > k ? ` (or ${K} with their mirrors)` : ""}`);
    for (let i = 0; i < K; i++) floating[i] = Boolean(opts.floating[opts.floating.length === K ? i : i % k]);
    if (floating.every((f) => f)) throw new InputError("every conductor is floating: at least one must be held at a potential");
  }
  const er = opts.permittivity ?? 1;
  if (!(er >= 1) || !Number.isFinite(er)) throw new InputError(`relative permittivity must be a number of at least 1, got ${er}`);
  const eps = EPSILON_0 * er;
  const method = opts.method ?? "galerkin";
  const tolerance = opts.tolerance ?? 1e-4;
  const refine = opts.refine ?? 0;
  if (!Number.isInteger(refine) || refine < 0 || refine > 4) throw new InputError(`refine must be a whole number from 0 to 4, got ${refine}`);
  const breakdownField = opts.breakdownField ?? AIR_BREAKDOWN_FIELD;
  if (!(breakdownField > 0) || !Number.isFinite(breakdownField)) throw new InputError(`breakdown field must be a positive number of V/m, got ${breakdownField}`);
  const potentials = new Float64Array(K);
  if (opts.potentials) {
    const m = opts.potentials.length;
    if (m !== k && m !== K) throw new InputError(`${m} potentials given for ${k} conductors${K > k ? ` (or ${K} with their mirrors)` : ""}`);
    for (let i = 0; i < K; i++) potentials[i] = m === K ? opts.potentials[i] : copySign((i / k) | 0) * opts.potentials[i % k];
  } else {
    const first = floating.indexOf(false) % k;
    for (let h = 0; h < nets; h++) potentials[h * k + first] = copySign(h);
  }
  const pool = opts.pool ?? sharedPool();
  const warnings: string[] = [];
  const testing: InterfaceTesting = opts.interfaceTesting ?? "galerkin";
  if (testing !== "collocation" && testing !== "galerkin") throw new InputError(`interface testing must be collocation or galerkin, got ${String(testing)}`);
  const strengths = bodyStrengths(opts.dielectrics ?? [], breakdownField);
  const hasBodies = (opts.dielectrics?.length ?? 0) > 0;
  let bodies: PreparedBody[] | undefined;
  let model: DielectricModel | undefined;
  let totalX: Float64Array | undefined;
  let allPanels: PanelSet | undefined;
  let openNormalField: Float64Array | undefined;

  let removedInSymmetryPlane = 0;
  let conductorSides: Int8Array | undefined;
  if (checkKernel) {
    try { kernelPlanes(checkKernel); } catch (e) { throw new InputError((e as Error).message); }
    const cut = trianglesInSymmetryPlanes(checkKernel, input.positions, input.triangles);
    if (cut.count > 0) {
      input = withoutTriangles(input, cut.flags);
      removedInSymmetryPlane = cut.count;
      warnings.push(`${cut.count} triangle(s) lying in a symmetry plane were removed (the cut face of a half model is not a conductor surface)`);
    }
    const ranges = conductorRanges(input.positions, input.triangles, input.conductor, k);
    const sides = checkSides(checkKernel, ranges, input.names);
    if (sides.fault) throw new InputError(both.length > 0 ? sides.fault.replace("odd symmetry plane", "symmetry plane with both images") : sides.fault);
    conductorSides = sides.sides;
  }
  // Dielectric bodies of a symmetric model are meshed on the conductors' side; the media are
  // found on the unfolded bodies (a half body encloses nothing).
  const unfold = hasBodies && planes.length > 0 && checkKernel ? unfolding(checkKernel, conductorSides!) : undefined;
  if (hasBodies) {
    const given = unfold ? opts.dielectrics!.map((b, i) => ({ ...b, mesh: unfold.body(b.mesh, typeof b.name === "string" && b.name !== "" ? b.name : `dielectric ${i + 1}`) })) : opts.dielectrics!;
    bodies = prepareBodies(given, er);
    const flipped = bodies.filter((b) => b.flipped).map((b) => b.name);
    if (flipped.length > 0) warnings.push(`dielectric interface(s) ${flipped.join(", ")} were wound inward or inconsistently and have been reoriented`);
  }

  // Every conductor needs triangles of its own.
  const counts = new Uint32Array(k);
  for (let t = 0; t < input.conductor.length; t++) counts[input.conductor[t]]++;
  for (let c = 0; c < k; c++) if (counts[c] === 0) throw new InputError(`conductor ${input.names[c]} has no triangles`);

  const oriented = orientSurfaces(input);
  let flippedComponents = 0, unorientable = 0;
  for (const c of oriented.components) {
    if (c.status === "inward-flipped" || c.status === "repaired") flippedComponents++;
    if (c.status === "non-orientable" || c.status === "non-manifold") unorientable++;
  }
  if (flippedComponents > 0) warnings.push(`${flippedComponents} surface component(s) were wound inward or inconsistently and have been reoriented`);
  let orientedMesh = oriented.mesh;
  const table = buildEdgeTable(orientedMesh);
  const topo = conductorTopology(orientedMesh, table);
  // A part cut open only along even symmetry planes is closed in the full model.
  const closed = topo.map((t) => t.closed);
  if (checkKernel && evenCopies(checkKernel) > 1) {
    const half = closeBySymmetry(checkKernel, orientedMesh, table, oriented.componentOf, oriented.components.length);
    orientedMesh = half.mesh;
    for (let c = 0; c < k; c++) if (!closed[c] && topo[c].nonManifoldEdges === 0 && half.conductorClosed[c]) closed[c] = true;
    if (half.flipped > 0) flippedComponents += half.flipped;
  }

  const levels: LevelResult[] = [];
  let mesh = orientedMesh;
  let last: UnitSolution | undefined;
  let lastPatterns: Float64Array[] = [];
  const nLevels = refine + 1;
  for (let level = 0; level <= refine; level++) {
    if (level > 0) mesh = refineUniform(mesh);
    if (bodies) {
      if (level > 0) bodies = bodies.map((b) => ({ ...b, mesh: refineUniform(b.mesh) }));
      model = unfold ? unfold.restrict(dielectricModel(unfold.surface(mesh), bodies, er, opts.groundPlane), mesh.conductor.length)
        : dielectricModel(mesh, bodies, er, opts.groundPlane);
      const perPattern: Float64Array[] = [], xs: Float64Array[] = [];
      let dsol: UnitSolution | undefined;
      for (let s = 0; s < nets; s++) {
        const ks = kernelFor(s);
        dsol = await solveUnitPotentialsWithInterfaces(model.positions, model.triangles, mesh.conductor, k, model.lambda, testing, {
          method, solver: opts.solver ?? "auto", tolerance, pool, memoryLimit: opts.memoryLimit, kernel: ks,
          progress: (phase, f) => opts.progress?.(phase, f, level * nets + s, nLevels * nets),
        }, openFieldPanels(model));
        const xFree = freeCharges(model, dsol.panels, dsol.x, k, ks ? imageSet(dsol.panels, ks) : undefined, dsol.normalField);
        const qd = conductorCharges(xFree, mesh.conductor, k);
        for (let i = 0; i < qd.length; i++) qd[i] *= 4 * Math.PI * EPSILON_0 * tied;
        perPattern.push(qd); xs.push(dsol.x);
        if (s === 0) last = { x: xFree, panels: panelSet(mesh.positions, mesh.triangles), info: dsol.info };
      }
      levels.push({ panels: dsol!.panels.n, maxwell: nets > 1 ? unfoldMatrix(perPattern, k, nets) : perPattern[0], info: dsol!.info });
      totalX = xs[0]; allPanels = dsol!.panels; lastPatterns = xs;
      // The open sheets' normal field from the solver (compressed path) holds for the one
      // pattern; unfolded both-plane models sum it directly.
      openNormalField = nets === 1 ? dsol!.normalField : undefined;
      continue;
    }
    const perPattern: Float64Array[] = [], xs: Float64Array[] = [];
    for (let s = 0; s < nets; s++) {
      const sol = await solveUnitPotentials(mesh.positions, mesh.triangles, mesh.conductor, k, {
        method, solver: opts.solver ?? "auto", tolerance, pool, memoryLimit: opts.memoryLimit, kernel: kernelFor(s),
        progress: (phase, f) => opts.progress?.(phase, f, level * nets + s, nLevels * nets),
      });
      const q = conductorCharges(sol.x, mesh.conductor, k, sol.chargeCorrection);
      const scale = 4 * Math.PI * eps * tied;
      for (let i = 0; i < q.length; i++) q[i] *= scale;
      perPattern.push(q); xs.push(sol.x);
      last = sol;
    }
    levels.push({ panels: last!.panels.n, maxwell: nets > 1 ? unfoldMatrix(perPattern, k, nets) : perPattern[0], info: last!.info });
    lastPatterns = xs;
  }
  if (!last) throw new Error("no level solved");

  // With both-planes: the unfolded mesh, each copy's conductors their own nets, and the unit
  // solutions of every net on every panel from the per-pattern solutions.
  let netClosed = closed, netCounts = counts;
  if (nets > 1) {
    const n = last.panels.n;
    const { offsets } = kernelPlanes(checkKernel!);
    mesh = unfoldedMesh(mesh, nets, copyMask, offsets, netNames);
    if (model) {
      // The dielectric model unfolded the same way: conductor panels of every copy first, then
      // interface panels of every copy; total charges per net from the per-pattern solutions.
      const u = unfoldedDielectric(model, lastPatterns, k, nets, copyMask, offsets);
      model = u.model; totalX = u.x; allPanels = panelSet(u.model.positions, u.model.triangles);
      const x = freeCharges(model, allPanels, totalX, K, kernel ? imageSet(allPanels, kernel) : undefined);
      last = { x, panels: panelSet(mesh.positions, mesh.triangles), info: last.info };
    } else {
      const x = unfoldSolutions(lastPatterns, n, k, nets);
      last = { x, panels: panelSet(mesh.positions, mesh.triangles), info: last.info };
    }
    netClosed = netNames.map((_, i) => closed[i % k]);
    netCounts = Uint32Array.from(netNames, (_, i) => counts[i % k]);
  }

  const finest = capacitanceMatrices(levels[levels.length - 1].maxwell, K, netNames);
  let maxwell = finest.maxwell;
  let accuracy: Accuracy | undefined;
  if (refine > 0) {
    const sharp = closed.some((c) => !c) || hasFeatureEdges(orientedMesh);
    const sym = levels.map((l) => capacitanceMatrices(l.maxwell, K, netNames).maxwell);
    const r = richardson(sym, K, { assumedOrder: opts.assumedOrder ?? assumedOrder(sharp), fromBelow: method === "galerkin" && !bodies });
    accuracy = { levels: levels.map((l, i) => ({ panels: l.panels, maxwell: sym[i] })), richardson: r, extrapolated: true };
    maxwell = r.extrapolated;
    warnings.push(...r.warnings);
  }
  const checked = refine > 0 ? capacitanceMatrices(maxwell, K, netNames) : finest;
  warnings.push(...checked.warnings);
  const mutual = mutualFromMaxwell(maxwell, K);

  // Floating conductors: eliminated from the reported matrix, potentials solved at the working point.
  let reducedMaxwell = maxwell, reducedNames = netNames.slice();
  let working: Float64Array = potentials;
  const floatingNames: string[] = [];
  let floatingPotentials = new Float64Array(0);
  if (floating.some((f) => f)) {
    const red = eliminateFloating(maxwell, K, floating);
    reducedMaxwell = red.reducedMaxwell;
    reducedNames = Array.from(red.driven, (i) => netNames[i]);
    working = withFloatingPotentials(red, K, potentials);
    floatingPotentials = Float64Array.from(red.floating, (i) => working[i]);
    for (const i of red.floating) floatingNames.push(netNames[i]);
  }
  const reducedMutual = mutualFromMaxwell(reducedMaxwell, reducedNames.length);

  // Excitation on the finest mesh.
  const P = last.panels;
  // Shared, so the field workers read the mirror panels in place.
  const images = kernel ? imageSet(P, kernel, { shared: true }) : undefined;
  let excitation: PanelExcitation, rawForce: Float64Array, complete: boolean;
  let dielectric: DielectricResult | undefined;
  if (model && totalX && allPanels) {
    // Every charge radiates in vacuum: fields and forces from the total charges of all panels.
    const allImages = kernel ? imageSet(allPanels, kernel) : undefined;
    const d = dielectricExcitation(model, allPanels, totalX, K, working, mesh.conductor, K, allImages, openNormalField);
    excitation = d.excitation; rawForce = d.force; complete = true;
    const totalCharge = new Float64Array(allPanels.n);
    totalCharge.set(scaleCopy(xAtWorking(totalX, K, working), 4 * Math.PI * EPSILON_0));
    const forces = dielectricBodyForces(model, allPanels, totalCharge, allImages).map((f) => {
      if (!f || !kernel) return f;
      const g = foldVectors(kernel, Float64Array.from(f));
      return [g[0], g[1], g[2]] as [number, number, number];
    });
    dielectric = {
      bodies: model.bodies, interfacePanels: model.ni, mergedInterfacePanels: model.mergedInterfacePanels, testing,
      conductorPermittivity: model.conductorPlus, panels: allPanels, totalCharge, model, forces,
    };
    if (model.removedInterfacePanels > 0) warnings.push(`${model.removedInterfacePanels} dielectric interface panel(s) covered by or inside a conductor (or in the ground plane) were removed`);
  } else {
    const openPanel = new Uint8Array(P.n);
    for (let p = 0; p < P.n; p++) openPanel[p] = netClosed[mesh.conductor[p]] ? 0 : 1;
    // Open sheets need the two-sided (principal-value) field of all the charge at their panels,
    // for their stronger face's field and their force.
    excitation = panelExcitation(last.x, K, P, working, eps, openPanel);
    let nOpen = 0;
    for (let p = 0; p < P.n; p++) nOpen += openPanel[p];
    let fieldPv: Float64Array | undefined;
    if (nOpen > 0) {
      opts.progress?.("fields", 0, refine, nLevels);
      const list = new Uint32Array(nOpen);
      for (let p = 0, a = 0; p < P.n; p++) if (openPanel[p]) list[a++] = p;
      const e = await centroidFieldsFast(P, excitation.charge, eps, list, images, pool, compressionTolerance(tolerance));
      fieldPv = new Float64Array(3 * P.n);
      const normalPv = new Float64Array(P.n);
      for (let a = 0; a < nOpen; a++) {
        const p = list[a];
        fieldPv[3 * p] = e[3 * a]; fieldPv[3 * p + 1] = e[3 * a + 1]; fieldPv[3 * p + 2] = e[3 * a + 2];
        normalPv[p] = e[3 * a] * P.normals[3 * p] + e[3 * a + 1] * P.normals[3 * p + 1] + e[3 * a + 2] * P.normals[3 * p + 2];
      }
      excitation = panelExcitation(last.x, K, P, working, eps, openPanel, normalPv);
      opts.progress?.("fields", 1, refine, nLevels);
    }
    const forces = conductorForces(excitation.sigma, P, mesh.conductor, K, eps, openPanel, fieldPv);
    complete = forces.complete;
    rawForce = forces.force;
  }
  const peaks = peakFields(excitation.field, mesh.conductor, K, P);
  // The field check per medium: each panel against the strength of the medium just outside it
  // (on open sheets the weaker of its two faces' media).
  const mediumName = (m: number) => m < 0 ? "background" : model!.bodies[m].name;
  const critical = criticalFields(excitation.field, mesh.conductor, K, P,
    model ? (p) => weakerMedium(model!.conductorMediumPlus[p], model!.conductorMediumMinus[p], strengths) : () => -1,
    (m) => m < 0 ? breakdownField : strengths[m]);
  const force = kernel ? foldVectors(kernel, rawForce) : rawForce;
  const q = chargesAt(maxwell, K, working);
  // The full model's energy: odd mirrors store as much as the conductors they mirror.
  const energy = storedEnergy(maxwell, K, working) * oddCopies;
  const areas = conductorAreas(mesh);
  for (let i = 0; i < K; i++) areas[i] *= tied;

  const conductors: ConductorResult[] = netNames.map((name, i) => ({
    name,
    triangles: netCounts[i],
    area: areas[i],
    closed: netClosed[i],
    potential: working[i],
    charge: q[i],
    peakField: peaks[i].value,
    peakFieldAt: peaks[i].at,
    fieldRatio: critical[i].ratio,
    criticalField: critical[i].field,
    criticalFieldAt: critical[i].at,
    medium: mediumName(critical[i].medium),
    mediumBreakdownField: critical[i].strength,
    force: [force[3 * i], force[3 * i + 1], force[3 * i + 2]],
    floating: floating[i],
  }));
  const seconds = (performance.now() - t0) / 1e3;
  const lastInfo = levels[levels.length - 1].info;
  return {
    names: netNames.slice(), conductors, k: K, permittivity: eps, relativePermittivity: er, breakdownField,
    media: [{ name: "background", relativePermittivity: er, breakdownField },
      ...(bodies ?? []).map((b, i) => ({ name: b.name, relativePermittivity: b.permittivity, breakdownField: strengths[i] }))],
    maxwell, mutual, asymmetry: finest.asymmetry, energy, potentials: working, mesh, panelConductor: mesh.conductor,
    excitation, panels: P, unitCharges: scaleCopy(last.x, 4 * Math.PI * (model ? EPSILON_0 : eps)), peaks, forcesComplete: complete, accuracy,
    solver: { ...lastInfo, seconds, peakMemory: peakResidentBytes(), levels },
    orientation: { flippedComponents, unorientable },
    reference: kernel?.groundPlane ? "ground plane" : "infinity",
    groundPlane: opts.groundPlane, symmetry: planes, symmetryCopies: symmetryCopies(checkKernel), mirrorNets: nets, images, removedInSymmetryPlane,
    floatingNames, floatingPotentials, reducedMaxwell, reducedMutual, reducedNames,
    removedInterfacePanels: model?.removedInterfacePanels ?? 0, dielectric,
    warnings,
  };
}

/** Symmetry planes with their images filled in and checked; InputError naming the plane. */
function checkedSymmetry(list: SymmetryPlane[]): SymmetryPlane[] {
  return list.map((p) => {
    const images = p.images ?? "even";
    const at = `symmetry plane ${p.axis} = ${p.offset} m`;
    if (images !== "even" && images !== "odd" && images !== "both") throw new InputError(`${at}: images must be even, odd or both, got ${String(images)}`);
    if (p.mirrored !== undefined) {
      if (images !== "both") throw new InputError(`${at}: "mirrored" (the mirror conductors' working potentials) needs images "both"`);
      if (p.mirrored !== "same" && p.mirrored !== "opposite") throw new InputError(`${at}: mirrored must be same or opposite, got ${String(p.mirrored)}`);
    }
    const out: SymmetryPlane = { axis: p.axis, offset: p.offset, images };
    if (images === "both") out.mirrored = p.mirrored ?? "same";
    return out;
  });
}

/** Breakdown strength per body (V/m): its own, else the background's. */
function bodyStrengths(bodies: Array<DielectricBody & { breakdownField?: number }>, background: number): Float64Array {
  return Float64Array.from(bodies, (b, i) => {
    const e = b.breakdownField;
    if (e === undefined) return background;
    if (typeof e !== "number" || !(e > 0) || !Number.isFinite(e)) throw new InputError(`dielectric ${b.name ?? i + 1}: breakdown field must be a positive number of V/m, got ${String(e)}`);
    return e;
  });
}

/** Of the media on a panel's two faces, the one with the lower breakdown strength. */
function weakerMedium(a: number, b: number, strengths: Float64Array): number {
  if (a === b) return a;
  return (b < 0 ? Infinity : strengths[b]) < (a < 0 ? Infinity : strengths[a]) ? b : a;
}

/**
 * The full model's Maxwell matrix from the per-pattern matrices of the meshed part (k×k each,
 * pattern s odd in the both-planes of its set bits): with χ_s(m) = (−1)^popcount(s & m),
 *   C[(g,i),(h,j)] = 2^−b Σ_s χ_s(g ⊕ h) C_s[i,j]
 * (the character decomposition of the reflection group Z₂^b; for one plane
 * C = [[(Ce + Co)/2, (Ce − Co)/2], [(Ce − Co)/2, (Ce + Co)/2]]). Nets are ordered copy-major.
 */
export function unfoldMatrix(perPattern: Float64Array[], k: number, nets: number): Float64Array {
  const K = k * nets, out = new Float64Array(K * K);
  for (let g = 0; g < nets; g++) for (let h = 0; h < nets; h++) {
    const m = g ^ h;
    for (let s = 0; s < nets; s++) {
      const w = (popcount(s & m) & 1 ? -1 : 1) / nets, C = perPattern[s];
      for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) out[(g * k + i) * K + h * k + j] += w * C[i * k + j];
    }
  }
  return out;
}

/** Unit solutions of every net on every panel of the unfolded model, (n·nets)×(k·nets), from the per-pattern n×k solutions. */
function unfoldSolutions(xs: Float64Array[], n: number, k: number, nets: number): Float64Array {
  const K = k * nets, out = new Float64Array(n * nets * K);
  for (let h = 0; h < nets; h++) for (let g = 0; g < nets; g++) {
    const m = h ^ g;
    for (let s = 0; s < nets; s++) {
      const w = (popcount(s & m) & 1 ? -1 : 1) / nets, x = xs[s];
      for (let p = 0; p < n; p++) {
        const row = (h * n + p) * K + g * k;
        for (let j = 0; j < k; j++) out[row + j] += w * x[p * k + j];
      }
    }
  }
  return out;
}

/** The meshed part and its mirror copies as one mesh, copy h's conductor j numbered h·k + j. */
function unfoldedMesh(mesh: SurfaceMesh, nets: number, copyMask: (h: number) => number, offsets: Float64Array, names: string[]): SurfaceMesh {
  const nv = mesh.positions.length / 3, nt = mesh.conductor.length, k = mesh.names.length;
  const positions = new Float64Array(3 * nv * nets), triangles = new Uint32Array(3 * nt * nets), conductor = new Uint32Array(nt * nets);
  for (let h = 0; h < nets; h++) {
    const r = reflectSurface(mesh.positions, mesh.triangles, copyMask(h), offsets);
    positions.set(r.positions, 3 * nv * h);
    for (let t = 0; t < 3 * nt; t++) triangles[3 * nt * h + t] = r.triangles[t] + nv * h;
    for (let t = 0; t < nt; t++) conductor[nt * h + t] = h * k + mesh.conductor[t];
  }
  return { positions, triangles, conductor, names: names.slice() };
}

function popcount(x: number): number {
  let c = 0;
  for (; x; x &= x - 1) c++;
  return c;
}

/** The mesh without the flagged triangles (vertices kept: unused ones are harmless). */
function withoutTriangles(mesh: SurfaceMesh, drop: Uint8Array): SurfaceMesh {
  const nt = mesh.conductor.length;
  let keep = 0;
  for (let t = 0; t < nt; t++) if (!drop[t]) keep++;
  const triangles = new Uint32Array(3 * keep), conductor = new Uint32Array(keep);
  for (let t = 0, a = 0; t < nt; t++) {
    if (drop[t]) continue;
    triangles[3 * a] = mesh.triangles[3 * t]; triangles[3 * a + 1] = mesh.triangles[3 * t + 1]; triangles[3 * a + 2] = mesh.triangles[3 * t + 2];
    conductor[a++] = mesh.conductor[t];
  }
  return { ...mesh, triangles, conductor };
}

/**
 * Components open only along symmetry planes are closed bodies in the full model: orient each
 * outward by its signed volume taken about a point on those planes (the missing cut faces lie
 * in planes through that point, so they add nothing to the volume), and report which
 * conductors are closed that way.
 */
function closeBySymmetry(spec: KernelSpec, mesh: SurfaceMesh, table: ReturnType<typeof buildEdgeTable>,
  componentOf: Uint32Array, components: number): { mesh: SurfaceMesh; conductorClosed: boolean[]; flipped: number } {
  const p = mesh.positions, tr = mesh.triangles, nt = mesh.conductor.length;
  let extent = 0;
  for (let i = 0; i < p.length; i++) extent = Math.max(extent, Math.abs(p[i]));
  const tol = 1e-9 * Math.max(extent, 1e-30);
  const open = new Uint8Array(components), strayEdge = new Uint8Array(components);
  for (let e = 0; e < table.edgeCount; e++) {
    if (table.edgeUses[e] !== 1) continue;
    const comp = componentOf[(table.edgeHalf[2 * e] / 3) | 0];
    open[comp] = 1;
    if (!edgeInSymmetryPlane(spec, p, table.edgeVertices[2 * e], table.edgeVertices[2 * e + 1], tol)) strayEdge[comp] = 1;
  }
  const { offsets } = kernelPlanes(spec);
  const sym = new Uint8Array(3);
  for (const s of spec.symmetry ?? []) if ((s.images ?? "even") === "even") sym[axisIndex(s.axis)] = 1;
  // Reference point per component: its vertex mean, moved onto every symmetry plane.
  const ref = new Float64Array(4 * components);
  for (let t = 0; t < nt; t++) {
    const c = componentOf[t];
    for (let k3 = 0; k3 < 3; k3++) for (let a = 0; a < 3; a++) ref[4 * c + a] += p[3 * tr[3 * t + k3] + a];
    ref[4 * c + 3] += 3;
  }
  for (let c = 0; c < components; c++) for (let a = 0; a < 3; a++) ref[4 * c + a] = sym[a] ? offsets[a] : ref[4 * c + a] / Math.max(1, ref[4 * c + 3]);
  const volume = new Float64Array(components);
  for (let t = 0; t < nt; t++) {
    const c = componentOf[t];
    if (!open[c] || strayEdge[c]) continue;
    const ox = ref[4 * c], oy = ref[4 * c + 1], oz = ref[4 * c + 2];
    const a = 3 * tr[3 * t], b = 3 * tr[3 * t + 1], d = 3 * tr[3 * t + 2];
    const ax = p[a] - ox, ay = p[a + 1] - oy, az = p[a + 2] - oz;
    const bx = p[b] - ox, by = p[b + 1] - oy, bz = p[b + 2] - oz;
    const cx = p[d] - ox, cy = p[d + 1] - oy, cz = p[d + 2] - oz;
    volume[c] += ax * (by * cz - bz * cy) + ay * (bz * cx - bx * cz) + az * (bx * cy - by * cx);
  }
  let flipped = 0;
  const flip = new Uint8Array(components);
  for (let c = 0; c < components; c++) if (open[c] && !strayEdge[c] && volume[c] < 0) { flip[c] = 1; flipped++; }
  let triangles = tr;
  if (flipped > 0) {
    triangles = tr.slice();
    for (let t = 0; t < nt; t++) if (flip[componentOf[t]]) { const x = triangles[3 * t + 1]; triangles[3 * t + 1] = triangles[3 * t + 2]; triangles[3 * t + 2] = x; }
  }
  const k = mesh.names.length;
  const conductorClosed = new Array<boolean>(k).fill(true);
  for (let t = 0; t < nt; t++) if (strayEdge[componentOf[t]]) conductorClosed[mesh.conductor[t]] = false;
  return { mesh: flipped > 0 ? { ...mesh, triangles } : mesh, conductorClosed, flipped };
}

/** Σ_j x[p·k + j] V_j per row p. */
function xAtWorking(x: Float64Array, k: number, potentials: ArrayLike<number>): Float64Array {
  const n = x.length / k, out = new Float64Array(n);
  for (let p = 0; p < n; p++) { let s = 0; for (let j = 0; j < k; j++) s += x[p * k + j] * potentials[j]; out[p] = s; }
  return out;
}

function scaleCopy(a: Float64Array, s: number): Float64Array {
  const out = new Float64Array(a.length);
  for (let i = 0; i < a.length; i++) out[i] = a[i] * s;
  return out;
}


/**
 * Dielectric bodies with symmetry planes. The bodies are meshed on the conductors' side (cut
 * faces in the planes, if any, are dropped: they are no interface); `body` welds a body and its
 * mirror copies into the closed surface of the full model, `surface` does the same for the
 * conductors, so the media of the full model are found by containment as without planes, and
 * `restrict` keeps of the full model the meshed part's panels: the conductors' own (the first
 * ones) and the interface panels on the conductors' side. Their mirror images come from the
 * image kernel as for the conductors (even or odd: the polarisation charge mirrors with the
 * free charge).
 */
function unfolding(spec: KernelSpec, sides: Int8Array) {
  const { offsets } = kernelPlanes(spec);
  const axes = (spec.symmetry ?? []).map((p) => axisIndex(p.axis));
  const copies = 1 << axes.length;
  const maskOf = (c: number) => { let m = 0; for (let b = 0; b < axes.length; b++) if ((c >> b) & 1) m |= 1 << axes[b]; return m; };
  const tolOf = (p: Float64Array) => { let e = 0; for (let i = 0; i < p.length; i++) e = Math.max(e, Math.abs(p[i])); return 1e-9 * Math.max(e, 1e-30); };
  const weld = (mesh: SurfaceMesh, keepTriangle: (t: number) => boolean): SurfaceMesh => {
    const p = mesh.positions, nv = p.length / 3, tol = tolOf(p);
    const onBits = new Uint8Array(nv);
    for (let v = 0; v < nv; v++) for (let b = 0; b < axes.length; b++) if (Math.abs(p[3 * v + axes[b]] - offsets[axes[b]]) <= tol) onBits[v] |= 1 << b;
    const positions = new Float64Array(3 * nv * copies);
    const tri: number[] = [], cond: number[] = [];
    for (let c = 0; c < copies; c++) {
      positions.set(reflectSurface(p, new Uint32Array(0), maskOf(c), offsets).positions, 3 * nv * c);
      const odd = popcount(c) & 1;
      for (let t = 0; t < mesh.conductor.length; t++) {
        if (!keepTriangle(t)) continue;
        const idx = [0, 1, 2].map((m) => { const v = mesh.triangles[3 * t + m]; return v + nv * (c & ~onBits[v]); });
        if (odd) tri.push(idx[0], idx[2], idx[1]); else tri.push(idx[0], idx[1], idx[2]);
        cond.push(mesh.conductor[t]);
      }
    }
    return { positions, triangles: Uint32Array.from(tri), conductor: Uint32Array.from(cond), names: mesh.names.slice() };
  };
  return {
    body(mesh: SurfaceMesh, name: string): SurfaceMesh {
      const p = mesh.positions, tol = tolOf(p);
      for (const a of axes) {
        let across = false, along = false;
        for (let t = 0; t < mesh.triangles.length; t++) {
          const d = (p[3 * mesh.triangles[t] + a] - offsets[a]) * sides[a];
          if (d < -tol) across = true; else if (d > tol) along = true;
        }
        if (across) {
          throw new InputError(`dielectric ${name} reaches across the symmetry plane ${AXES[a]} = ${offsets[a]} m${along ? "" : " (it lies on the other side)"}: `
            + "with symmetry planes, mesh the part of each body on the conductors' side only");
        }
      }
      // Cut faces in a plane are dropped (an even or an odd plane alike: no interface there).
      const inPlane = trianglesInSymmetryPlanes({ symmetry: (spec.symmetry ?? []).map((s) => ({ ...s, images: "even" as const })) }, p, mesh.triangles).flags;
      return weld(mesh, (t) => !inPlane[t]);
    },
    surface(mesh: SurfaceMesh): SurfaceMesh {
      return weld(mesh, () => true);
    },
    restrict(m: DielectricModel, nc: number): DielectricModel {
      const keep: number[] = [];
      const tol = tolOf(m.positions);
      for (let a = 0; a < m.ni; a++) {
        const t = m.nc + a;
        let inside = true;
        for (const ax of axes) {
          let c = 0;
          for (let k3 = 0; k3 < 3; k3++) c += m.positions[3 * m.triangles[3 * t + k3] + ax];
          if ((c / 3 - offsets[ax]) * sides[ax] <= tol) inside = false;
        }
        if (inside) keep.push(a);
      }
      const ni = keep.length, triangles = new Uint32Array(3 * (nc + ni));
      triangles.set(m.triangles.subarray(0, 3 * nc));
      keep.forEach((a, i) => triangles.set(m.triangles.subarray(3 * (m.nc + a), 3 * (m.nc + a) + 3), 3 * (nc + i)));
      const pick = <T extends Float64Array | Uint32Array>(x: T): T => { const out = new (x.constructor as { new(n: number): T })(ni); keep.forEach((a, i) => { out[i] = x[a]; }); return out; };
      const interfaceBody = pick(m.interfaceBody);
      const bodies = m.bodies.map((b, i) => ({ ...b, panels: interfaceBody.filter((x) => x === i).length }));
      return {
        ...m, triangles, nc, ni, interfaceBody, epsMinus: pick(m.epsMinus), epsPlus: pick(m.epsPlus), lambda: pick(m.lambda),
        conductorPlus: m.conductorPlus.slice(0, nc), conductorMinus: m.conductorMinus.slice(0, nc),
        conductorMediumPlus: m.conductorMediumPlus.slice(0, nc), conductorMediumMinus: m.conductorMediumMinus.slice(0, nc),
        openPanel: m.openPanel.slice(0, nc), bodies,
      };
    },
  };
}

/**
 * The restricted dielectric model of the meshed part unfolded into the copies of the
 * both-planes (copy h reflected in copyMask(h)): conductor panels of copies 0, 1, ... first
 * (conductor j of copy h is net h·k + j, as unfoldedMesh), then interface panels copy by copy;
 * and the total charges of every net, (N·nets)×(k·nets), from the per-pattern N×k solutions by
 * the character sum of unfoldSolutions.
 */
function unfoldedDielectric(m: DielectricModel, xs: Float64Array[], k: number, nets: number, copyMask: (h: number) => number,
  offsets: Float64Array): { model: DielectricModel; x: Float64Array } {
  const nc = m.nc, ni = m.ni, N = nc + ni, nv = m.positions.length / 3;
  const positions = new Float64Array(3 * nv * nets), triangles = new Uint32Array(3 * N * nets);
  const rowOf = (h: number, p: number) => (p < nc ? h * nc + p : nets * nc + h * ni + (p - nc));
  for (let h = 0; h < nets; h++) {
    const r = reflectSurface(m.positions, m.triangles, copyMask(h), offsets);
    positions.set(r.positions, 3 * nv * h);
    for (let p = 0; p < N; p++) for (let c = 0; c < 3; c++) triangles[3 * rowOf(h, p) + c] = r.triangles[3 * p + c] + nv * h;
  }
  const K = k * nets, x = new Float64Array(N * nets * K);
  for (let h = 0; h < nets; h++) for (let g = 0; g < nets; g++) {
    const mm = h ^ g;
    for (let s = 0; s < nets; s++) {
      const w = (popcount(s & mm) & 1 ? -1 : 1) / nets, xs_ = xs[s];
      for (let p = 0; p < N; p++) {
        const row = rowOf(h, p) * K + g * k;
        for (let j = 0; j < k; j++) x[row + j] += w * xs_[p * k + j];
      }
    }
  }
  const rep = <T extends Float64Array | Uint32Array | Int32Array | Uint8Array>(a: T): T => {
    const out = new (a.constructor as { new(n: number): T })(a.length * nets);
    for (let h = 0; h < nets; h++) out.set(a, a.length * h);
    return out;
  };
  return {
    model: {
      ...m, positions, triangles, nc: nc * nets, ni: ni * nets,
      interfaceBody: rep(m.interfaceBody), epsMinus: rep(m.epsMinus), epsPlus: rep(m.epsPlus), lambda: rep(m.lambda),
      conductorPlus: rep(m.conductorPlus), conductorMinus: rep(m.conductorMinus),
      conductorMediumPlus: rep(m.conductorMediumPlus), conductorMediumMinus: rep(m.conductorMediumMinus), openPanel: rep(m.openPanel),
      bodies: m.bodies.map((b) => ({ ...b, panels: b.panels * nets })),
    },
    x,
  };
}
