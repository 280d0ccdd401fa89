/**
 * What an extraction returns: the conductors' results, the matrices (full and with the
 * floating conductors eliminated), the finest mesh's panel excitation, the solver's record per
 * refinement level, the accuracy estimate and the dielectric model's summary.
 */
import type { SurfaceMesh } from "../mesh/model.js";
import type { PanelSet } from "../bem/panels.js";
import type { InterfaceTesting } from "../bem/interface.js";
import type { AxisPlane, ImageSet, SymmetryPlane } from "../bem/images.js";
import type { SolveInfo, UnitSolution } from "./solve.js";
import type { RichardsonResult } from "./accuracy.js";
import type { PanelExcitation, PeakField } from "./excitation.js";
import type { BodySummary, DielectricModel } from "./dielectric-model.js";

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
  /** The peak panel touches a sharp edge or corner (peak-field.ts): the exact field there is unbounded and the computed peak depends on the mesh. */
  peakFieldSingular: boolean;
  /** Estimated relative error of a converged peak from the refinement levels; null when singular or without refinement. */
  peakFieldError: number | null;
  /** A singular peak's growth with refinement, p in E ∝ h^(−p) from the last two levels; null otherwise. */
  peakFieldGrowth: number | null;
  /** Largest ratio over its panels of the field to the breakdown strength of the medium just outside. */
  fieldRatio: number;
  /** The panel deciding `fieldRatio`: its field (V/m), centroid (metres), medium and that medium's strength (V/m). */
  criticalField: number;
  criticalFieldAt: [number, number, number];
  medium: string;
  mediumBreakdownField: number;
  /** Net electrostatic force; newtons. */
  force: [number, number, number];
  /** The smallest net force resolved on this conductor (FORCE_RESOLUTION of its panels' gross force); newtons. */
  forceResolution: number;
  /** Zero net charge at a solved potential. */
  floating: boolean;
}

export interface LevelResult {
  panels: number;
  maxwell: Float64Array;
  info: SolveInfo;
  /** Largest distance of a new point from its edge's straight midpoint in the refinement that made this level, over the edge length (0 on the first level; refine.ts). */
  displacement?: number;
}

/** What an adaptive run did and reached (adaptive.ts). */
export interface AdaptiveRecord {
  /** The requested relative accuracy. */
  requested: number;
  /** Coupling threshold used (fraction of the row's diagonal). */
  couplingThreshold: number;
  /** Whether every entry that matters reached the requested accuracy. */
  reached: boolean;
  /** Per entry (row-major K×K): 1 where the entry holds the refinement to R. */
  governing: Uint8Array;
  /** Uniform steps (dielectric bodies) or local ones. */
  marking: "dorfler" | "uniform";
  /** Why the loop stopped. */
  stop: "reached" | "memory" | "steps" | "panels";
}

export interface Accuracy {
  levels: Array<{ panels: number; maxwell: Float64Array }>;
  richardson: RichardsonResult;
  /**
   * Every refinement split the same flat panels (no new point off its straight midpoint beyond
   * rounding, `NESTED_DISPLACEMENT`): the levels are nested and, for Galerkin without dielectrics,
   * the finest diagonal entries are lower bounds. False when refinement moved the geometry
   * toward the curved surface.
   */
  nested: boolean;
  /** Largest relative displacement over all refinements (see `LevelResult.displacement`). */
  displacement: number;
  /** The finest diagonal entries are lower bounds for the model's capacitances (Galerkin, no dielectric bodies, nested levels). */
  lowerBound: boolean;
  /** The matrix reported is the extrapolated one. */
  extrapolated: true;
  /** With a requested accuracy: what the adaptive refinement reached (adaptive.ts). */
  adaptive?: AdaptiveRecord;
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
  /** Per finest panel: 1 where one of its corners lies on a sharp edge (peak-field.ts). */
  sharpPanels: Uint8Array;
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

/** The dielectric model's solution on the finest mesh. */
export interface DielectricSolution {
  model: DielectricModel;
  /** All panels of the model: conductors first, then interfaces. */
  panels: PanelSet;
  /** Total (free and polarisation) unit solutions of all panels, N×k per net; x units (Q = 4πε0 x). */
  totalX: Float64Array;
  /** The open sheets' normal field from the compressed solver, when it holds (one pattern only). */
  openNormalField?: Float64Array;
}

/** The finest mesh and its unit solutions, per net. */
export interface FinestSolution {
  mesh: SurfaceMesh;
  /** Unit solutions on the conductor panels (free charges with dielectrics); x units. */
  unit: UnitSolution;
  dielectric?: DielectricSolution;
}
