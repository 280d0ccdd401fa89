/**
 * The options of an extraction and their checked, resolved form: defaults filled in, every
 * value checked with an InputError a user can act on, working potentials and floating flags
 * spread over the nets of the unfolded model (symmetry-unfold.ts).
 */
import type { Discretisation } from "../bem/assembly.js";
import type { InterfaceTesting } from "../bem/interface.js";
import type { AxisPlane, SymmetryPlane } from "../bem/images.js";
import { sharedPool, type WorkerPool } from "../linalg/pool.js";
import { InputError } from "../errors.js";
import { EPSILON_0, AIR_BREAKDOWN_FIELD } from "./constants.js";
import type { SolverChoice } from "./solve.js";
import type { DielectricBody } from "./dielectric-bodies.js";
import type { LengthUnit } from "../io/units.js";
import { formatLength, formatPoint } from "../io/si.js";

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
  /**
   * Requested relative accuracy of the capacitances (e.g. 1e-3): refine adaptively until every
   * diagonal entry and every coupling above 5 % of its row's diagonal is estimated within it
   * (adaptive.ts). Excludes `refine`. The solver tolerance follows (at most accuracy / 10).
   */
  accuracy?: number;
  /** With `accuracy`: the most panels the refinement may reach (default 200,000). */
  maxPanels?: number;
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
  /** The unit in which faults and warnings state lengths (the input's; default metres). */
  lengthUnit?: LengthUnit;
}

/** The options checked, with their defaults filled in, over the K = k·nets nets of the unfolded model. */
export interface ResolvedOptions {
  /** Per net: zero net charge at a solved potential. */
  floating: boolean[];
  /** Working potentials per net; V (floating nets' entries are replaced by their solved ones later). */
  potentials: Float64Array;
  relativePermittivity: number;
  /** Absolute permittivity of the background; F/m. */
  permittivity: number;
  method: Discretisation;
  solver: SolverChoice;
  tolerance: number;
  /** Uniform refinements after the first mesh (0 to 4). */
  refine: number;
  /** Requested relative accuracy of adaptive refinement; undefined for uniform refinement. */
  accuracy?: number;
  maxPanels?: number;
  /** Breakdown strength of the background; V/m. */
  breakdownField: number;
  pool: WorkerPool;
  memoryLimit?: number;
  groundPlane?: AxisPlane;
  assumedOrder?: number;
  progress?: MeshExtractOptions["progress"];
  dielectrics: Array<DielectricBody & { breakdownField?: number }>;
  testing: InterfaceTesting;
  /** Breakdown strength per dielectric body; V/m. */
  strengths: Float64Array;
  /** Lengths in messages, in the input's unit. */
  describeLength: (metres: number) => string;
  /** Points in messages, in the input's unit. */
  describePoint: (metres: [number, number, number]) => string;
}

/**
 * Checks the options for k meshed conductors unfolded into `nets` copies (copy h's working
 * potentials signed by copySign(h)); InputError naming the fault. Potentials and floating flags
 * come one per meshed conductor (mirrors follow) or one per net.
 */
export function resolveOptions(opts: MeshExtractOptions, k: number, nets: number, copySign: (h: number) => number): ResolvedOptions {
  const K = k * nets;
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
  const { refine, accuracy, maxPanels } = checkedRefinement(opts);
  const tolerance = accuracy !== undefined ? Math.min(opts.tolerance ?? 1e-4, accuracy / 10) : opts.tolerance ?? 1e-4;
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
  const testing: InterfaceTesting = opts.interfaceTesting ?? "galerkin";
  if (testing !== "collocation" && testing !== "galerkin") throw new InputError(`interface testing must be collocation or galerkin, got ${String(testing)}`);
  const dielectrics = opts.dielectrics ?? [];
  const strengths = bodyStrengths(dielectrics, breakdownField);
  return {
    floating, potentials, relativePermittivity: er, permittivity: eps, method, solver: opts.solver ?? "auto", tolerance, refine, accuracy, maxPanels, breakdownField,
    pool, memoryLimit: opts.memoryLimit, groundPlane: opts.groundPlane, assumedOrder: opts.assumedOrder, progress: opts.progress,
    dielectrics, testing, strengths, describeLength: lengthDescriber(opts.lengthUnit),
    describePoint: opts.lengthUnit === undefined ? (p) => `(${p.join(", ")}) m` : (p) => formatPoint(p, opts.lengthUnit!),
  };
}

/** Lengths for messages: in `unit` with engineering digits, or as given in metres without one. */
export function lengthDescriber(unit: LengthUnit | undefined): (metres: number) => string {
  return unit === undefined ? (m) => `${m} m` : (m) => formatLength(m, unit);
}

/** The number of uniform refinements (default 0); InputError unless a whole number from 0 to 4. */
export function checkedRefine(refine: number | undefined): number {
  const r = refine ?? 0;
  if (!Number.isInteger(r) || r < 0 || r > 4) throw new InputError(`refine must be a whole number from 0 to 4, got ${r}`);
  return r;
}

/**
 * The refinement asked for: `refine` uniform levels or adaptive refinement to `accuracy` (not both),
 * with its panel budget; InputError naming the fault.
 */
export function checkedRefinement(opts: { refine?: number; accuracy?: number; maxPanels?: number }): { refine: number; accuracy?: number; maxPanels?: number } {
  const refine = checkedRefine(opts.refine);
  const accuracy = checkedAccuracy(opts.accuracy);
  if (accuracy !== undefined && refine > 0) throw new InputError(`accuracy ${accuracy} and refine ${refine} are two ways to refine: give one`);
  const maxPanels = opts.maxPanels;
  if (maxPanels !== undefined && !(Number.isInteger(maxPanels) && maxPanels > 0)) throw new InputError(`the most panels must be a positive whole number, got ${maxPanels}`);
  return { refine, accuracy, maxPanels };
}

/** Smallest and largest relative accuracy an adaptive refinement may be asked for. */
export const ACCURACY_RANGE: readonly [number, number] = [1e-7, 0.1];

/** The requested relative accuracy; InputError unless a number in ACCURACY_RANGE (undefined: none). */
export function checkedAccuracy(accuracy: number | undefined): number | undefined {
  if (accuracy === undefined) return undefined;
  if (typeof accuracy !== "number" || !(accuracy >= ACCURACY_RANGE[0] && accuracy <= ACCURACY_RANGE[1])) {
    throw new InputError(`accuracy must be a relative error from ${ACCURACY_RANGE[0]} to ${ACCURACY_RANGE[1]} (e.g. 1e-3 or 0.1%), got ${String(accuracy)}`);
  }
  return accuracy;
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
