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
 * Panel-level results (charges, densities, fields) stay those of the meshed panels.
 * Floating conductors are eliminated from the Maxwell matrix (floating.ts).
 */
import type { SurfaceMesh } from "../mesh/model.js";
import { triangleCount, conductorAreas } from "../mesh/model.js";
import { orientSurfaces, conductorTopology, buildEdgeTable } from "../mesh/topology.js";
import { refineUniform, hasFeatureEdges } from "../mesh/refine.js";
import type { Discretisation } from "../bem/assembly.js";
import { sharedPool, type WorkerPool } from "../linalg/pool.js";
import { EPSILON_0, AIR_BREAKDOWN_FIELD } from "./constants.js";
import { solveUnitPotentials, type SolverChoice, type SolveInfo, type UnitSolution } from "./solve.js";
import { conductorCharges, capacitanceMatrices, chargesAt, storedEnergy, mutualFromMaxwell } from "./capacitance.js";
import { richardson, type RichardsonResult } from "./accuracy.js";
import { panelExcitation, peakFields, conductorForces, type PanelExcitation, type PeakField } from "./excitation.js";
import { peakResidentBytes } from "./memory.js";
import { centroidFields } from "./probe.js";
import type { PanelSet } from "../bem/panels.js";
import { InputError } from "../io/errors.js";
import {
  hasImages, kernelPlanes, imageSet, symmetryCopies, conductorRanges, checkSides, trianglesInSymmetryPlanes,
  edgeInSymmetryPlane, foldVectors, type AxisPlane, type KernelSpec, type ImageSet,
} from "../bem/images.js";
import { eliminateFloating, withFloatingPotentials } from "./floating.js";
import { prepareBodies, dielectricModel, freeCharges, dielectricExcitation, openFieldPanels, type DielectricBody, type BodySummary, type DielectricModel } from "./dielectric.js";
import { solveUnitPotentialsWithInterfaces } from "./solve.js";
import { panelSet } from "../bem/panels.js";
import type { InterfaceTesting } from "../bem/interface.js";

export interface ExtractOptions {
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
  /** Mirror symmetry planes (even images); metres. At most one plane per axis, none on the ground plane's axis. */
  symmetry?: AxisPlane[];
  /** Per conductor: zero net charge at a potential solved for (its entry in `potentials` is ignored). */
  floating?: ArrayLike<boolean>;
  /** Dielectric bodies: closed surfaces (metres) with their relative permittivity, in the background `permittivity`. */
  dielectrics?: DielectricBody[];
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
  /** Peak field over the breakdown strength. */
  fieldRatio: number;
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
  symmetry: AxisPlane[];
  /** Copies of the meshed part in the full model (2^symmetry planes); charges, areas, C are the full model's. */
  symmetryCopies: number;
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

export async function extract(input: SurfaceMesh, opts: ExtractOptions = {}): Promise<ExtractionResult> {
  const t0 = performance.now();
  const k = input.names.length;
  if (k === 0 || triangleCount(input) === 0) throw new InputError("nothing to extract: no conductor with triangles");
  const spec: KernelSpec = { groundPlane: opts.groundPlane, symmetry: opts.symmetry ?? [] };
  const kernel = hasImages(spec) ? spec : undefined;
  const floating = new Array<boolean>(k).fill(false);
  if (opts.floating) {
    if (opts.floating.length !== k) throw new InputError(`${opts.floating.length} floating flags given for ${k} conductors`);
    for (let i = 0; i < k; i++) floating[i] = Boolean(opts.floating[i]);
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
  const potentials = new Float64Array(k);
  if (opts.potentials) {
    if (opts.potentials.length !== k) throw new InputError(`${opts.potentials.length} potentials given for ${k} conductors`);
    for (let i = 0; i < k; i++) potentials[i] = opts.potentials[i];
  } else potentials[floating.indexOf(false)] = 1;
  const pool = opts.pool ?? sharedPool();
  const warnings: string[] = [];
  const testing: InterfaceTesting = opts.interfaceTesting ?? "galerkin";
  if (testing !== "collocation" && testing !== "galerkin") throw new InputError(`interface testing must be collocation or galerkin, got ${String(testing)}`);
  let bodies = opts.dielectrics && opts.dielectrics.length > 0 ? prepareBodies(opts.dielectrics, er) : undefined;
  if (bodies && (opts.symmetry?.length ?? 0) > 0) throw new InputError("dielectric bodies cannot be combined with symmetry planes yet: mesh the whole model");
  if (bodies) {
    const flipped = bodies.filter((b) => b.flipped).map((b) => b.name);
    if (flipped.length > 0) warnings.push(`dielectric interface(s) ${flipped.join(", ")} were wound inward or inconsistently and have been reoriented`);
  }
  let model: DielectricModel | undefined;
  let totalX: Float64Array | undefined;
  let allPanels: PanelSet | undefined;
  let openNormalField: Float64Array | undefined;

  let removedInSymmetryPlane = 0;
  if (kernel) {
    try { kernelPlanes(kernel); } catch (e) { throw new InputError((e as Error).message); }
    const cut = trianglesInSymmetryPlanes(kernel, input.positions, input.triangles);
    if (cut.count > 0) {
      input = withoutTriangles(input, cut.flags);
      removedInSymmetryPlane = cut.count;
      warnings.push(`${cut.count} triangle(s) lying in a symmetry plane were removed (the cut face of a half model is not a conductor surface)`);
    }
    const ranges = conductorRanges(input.positions, input.triangles, input.conductor, k);
    const sides = checkSides(kernel, ranges, input.names);
    if (sides.fault) throw new InputError(sides.fault);
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
  // A part cut open only along symmetry planes is closed in the full model.
  const closed = topo.map((t) => t.closed);
  if (kernel && (kernel.symmetry?.length ?? 0) > 0) {
    const half = closeBySymmetry(kernel, orientedMesh, table, oriented.componentOf, oriented.components.length);
    orientedMesh = half.mesh;
    for (let c = 0; c < k; c++) if (!closed[c] && topo[c].nonManifoldEdges === 0 && half.conductorClosed[c]) closed[c] = true;
    if (half.flipped > 0) flippedComponents += half.flipped;
  }

  const copies = symmetryCopies(kernel);
  const levels: LevelResult[] = [];
  let mesh = orientedMesh;
  let last: UnitSolution | undefined;
  const nLevels = refine + 1;
  for (let level = 0; level <= refine; level++) {
    if (level > 0) mesh = refineUniform(mesh);
    if (bodies) {
      if (level > 0) bodies = bodies.map((b) => ({ ...b, mesh: refineUniform(b.mesh) }));
      model = dielectricModel(mesh, bodies, er, opts.groundPlane);
      const dsol = await solveUnitPotentialsWithInterfaces(model.positions, model.triangles, mesh.conductor, k, model.lambda, testing, {
        method, solver: opts.solver ?? "auto", tolerance, pool, memoryLimit: opts.memoryLimit, kernel,
        progress: (phase, f) => opts.progress?.(phase, f, level, nLevels),
      }, openFieldPanels(model));
      const images = kernel ? imageSet(dsol.panels, kernel) : undefined;
      const xFree = freeCharges(model, dsol.panels, dsol.x, k, images, dsol.normalField);
      openNormalField = dsol.normalField;
      const qd = conductorCharges(xFree, mesh.conductor, k);
      for (let i = 0; i < qd.length; i++) qd[i] *= 4 * Math.PI * EPSILON_0 * copies;
      levels.push({ panels: dsol.panels.n, maxwell: qd, info: dsol.info });
      totalX = dsol.x; allPanels = dsol.panels;
      last = { x: xFree, panels: panelSet(mesh.positions, mesh.triangles), info: dsol.info };
      continue;
    }
    const sol = await solveUnitPotentials(mesh.positions, mesh.triangles, mesh.conductor, k, {
      method, solver: opts.solver ?? "auto", tolerance, pool, memoryLimit: opts.memoryLimit, kernel,
      progress: (phase, f) => opts.progress?.(phase, f, level, nLevels),
    });
    const q = conductorCharges(sol.x, mesh.conductor, k);
    const scale = 4 * Math.PI * eps * copies;
    for (let i = 0; i < q.length; i++) q[i] *= scale;
    levels.push({ panels: sol.panels.n, maxwell: q, info: sol.info });
    last = sol;
  }
  if (!last) throw new Error("no level solved");

  const finest = capacitanceMatrices(levels[levels.length - 1].maxwell, k, input.names);
  let maxwell = finest.maxwell;
  let accuracy: Accuracy | undefined;
  if (refine > 0) {
    const sharp = closed.some((c) => !c) || hasFeatureEdges(orientedMesh);
    const sym = levels.map((l) => capacitanceMatrices(l.maxwell, k, input.names).maxwell);
    const r = richardson(sym, k, { assumedOrder: opts.assumedOrder ?? assumedOrder(sharp), fromBelow: method === "galerkin" && !bodies });
    accuracy = { levels: levels.map((l, i) => ({ panels: l.panels, maxwell: sym[i] })), richardson: r, extrapolated: true };
    maxwell = r.extrapolated;
    warnings.push(...r.warnings);
  }
  const checked = refine > 0 ? capacitanceMatrices(maxwell, k, input.names) : finest;
  warnings.push(...checked.warnings);
  const mutual = mutualFromMaxwell(maxwell, k);

  // Floating conductors: eliminated from the reported matrix, potentials solved at the working point.
  let reducedMaxwell = maxwell, reducedNames = input.names.slice();
  let working: Float64Array = potentials;
  const floatingNames: string[] = [];
  let floatingPotentials = new Float64Array(0);
  if (floating.some((f) => f)) {
    const red = eliminateFloating(maxwell, k, floating);
    reducedMaxwell = red.reducedMaxwell;
    reducedNames = Array.from(red.driven, (i) => input.names[i]);
    working = withFloatingPotentials(red, k, potentials);
    floatingPotentials = Float64Array.from(red.floating, (i) => working[i]);
    for (const i of red.floating) floatingNames.push(input.names[i]);
  }
  const reducedMutual = mutualFromMaxwell(reducedMaxwell, reducedNames.length);

  // Excitation on the finest mesh.
  const P = last.panels;
  const images = kernel ? imageSet(P, kernel) : undefined;
  let excitation: PanelExcitation, rawForce: Float64Array, complete: boolean;
  let dielectric: DielectricResult | undefined;
  if (model && totalX && allPanels) {
    // Every charge radiates in vacuum: fields and forces from the total charges of all panels.
    const allImages = kernel ? imageSet(allPanels, kernel) : undefined;
    const d = dielectricExcitation(model, allPanels, totalX, k, working, mesh.conductor, k, allImages, openNormalField);
    excitation = d.excitation; rawForce = d.force; complete = true;
    const totalCharge = new Float64Array(allPanels.n);
    totalCharge.set(scaleCopy(xAtWorking(totalX, k, working), 4 * Math.PI * EPSILON_0));
    dielectric = {
      bodies: model.bodies, interfacePanels: model.ni, mergedInterfacePanels: model.mergedInterfacePanels, testing,
      conductorPermittivity: model.conductorPlus, panels: allPanels, totalCharge, model,
    };
    if (model.removedInterfacePanels > 0) warnings.push(`${model.removedInterfacePanels} dielectric interface panel(s) covered by or inside a conductor (or in the ground plane) were removed`);
  } else {
    const openPanel = new Uint8Array(P.n);
    for (let p = 0; p < P.n; p++) openPanel[p] = closed[mesh.conductor[p]] ? 0 : 1;
    // Open sheets need the two-sided (principal-value) field of all the charge at their panels,
    // for their stronger face's field and their force.
    excitation = panelExcitation(last.x, k, P, working, eps, openPanel);
    let nOpen = 0;
    for (let p = 0; p < P.n; p++) nOpen += openPanel[p];
    let fieldPv: Float64Array | undefined;
    if (nOpen > 0) {
      opts.progress?.("fields", 0, refine, nLevels);
      const list = new Uint32Array(nOpen);
      for (let p = 0, a = 0; p < P.n; p++) if (openPanel[p]) list[a++] = p;
      const e = centroidFields(P, excitation.charge, eps, list, images);
      fieldPv = new Float64Array(3 * P.n);
      const normalPv = new Float64Array(P.n);
      for (let a = 0; a < nOpen; a++) {
        const p = list[a];
        fieldPv[3 * p] = e[3 * a]; fieldPv[3 * p + 1] = e[3 * a + 1]; fieldPv[3 * p + 2] = e[3 * a + 2];
        normalPv[p] = e[3 * a] * P.normals[3 * p] + e[3 * a + 1] * P.normals[3 * p + 1] + e[3 * a + 2] * P.normals[3 * p + 2];
      }
      excitation = panelExcitation(last.x, k, P, working, eps, openPanel, normalPv);
      opts.progress?.("fields", 1, refine, nLevels);
    }
    const forces = conductorForces(excitation.sigma, P, mesh.conductor, k, eps, openPanel, fieldPv);
    complete = forces.complete;
    rawForce = forces.force;
  }
  const peaks = peakFields(excitation.field, mesh.conductor, k, P);
  const force = kernel ? foldVectors(kernel, rawForce) : rawForce;
  const q = chargesAt(maxwell, k, working);
  const energy = storedEnergy(maxwell, k, working);
  const areas = conductorAreas(mesh);
  for (let i = 0; i < k; i++) areas[i] *= copies;

  const conductors: ConductorResult[] = input.names.map((name, i) => ({
    name,
    triangles: counts[i],
    area: areas[i],
    closed: closed[i],
    potential: working[i],
    charge: q[i],
    peakField: peaks[i].value,
    peakFieldAt: peaks[i].at,
    fieldRatio: peaks[i].value / breakdownField,
    force: [force[3 * i], force[3 * i + 1], force[3 * i + 2]],
    floating: floating[i],
  }));
  const seconds = (performance.now() - t0) / 1e3;
  const lastInfo = levels[levels.length - 1].info;
  return {
    names: input.names.slice(), conductors, k, permittivity: eps, relativePermittivity: er, breakdownField,
    maxwell, mutual, asymmetry: finest.asymmetry, energy, potentials: working, mesh, panelConductor: mesh.conductor,
    excitation, panels: P, unitCharges: scaleCopy(last.x, 4 * Math.PI * (model ? EPSILON_0 : eps)), peaks, forcesComplete: complete, accuracy,
    solver: { ...lastInfo, seconds, peakMemory: peakResidentBytes(), levels },
    orientation: { flippedComponents, unorientable },
    reference: kernel?.groundPlane ? "ground plane" : "infinity",
    groundPlane: opts.groundPlane, symmetry: (opts.symmetry ?? []).slice(), symmetryCopies: copies, images, removedInSymmetryPlane,
    floatingNames, floatingPotentials, reducedMaxwell, reducedMutual, reducedNames,
    removedInterfacePanels: model?.removedInterfacePanels ?? 0, dielectric,
    warnings,
  };
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
  for (const s of spec.symmetry ?? []) sym[s.axis === "x" ? 0 : s.axis === "y" ? 1 : 2] = 1;
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

