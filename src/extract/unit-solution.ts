/**
 * The contract of the unit-potential solve (solve.ts): what it is asked (SolveOptions), what it
 * reports of itself (SolveInfo), what it returns (UnitSolution), and its right-hand sides.
 *
 * Unknowns are panel charges scaled by 4πε: with P the geometric operator of src/bem
 * (entries in 1/m), P·x = v gives physical panel charges Q = 4π ε0 εr x.
 */
import type { PanelSet } from "../bem/panels.js";
import type { Discretisation } from "../bem/assembly.js";
import type { KernelSpec } from "../bem/images.js";
import { sharedFloat64, type WorkerPool } from "../linalg/pool.js";
import type { SolverChoice } from "./solver-choice.js";

export interface SolveOptions {
  method: Discretisation;
  solver: SolverChoice;
  /** Requested relative accuracy of the capacitances (sets the Krylov tolerance). */
  tolerance: number;
  pool: WorkerPool;
  progress?: (phase: string, fraction: number) => void;
  /** Bytes available for the dense matrix (default: most of the free memory). */
  memoryLimit?: number;
  /** Compressed solver: largest cluster of the block-Jacobi preconditioner (default PRECONDITIONER_CLUSTER). */
  preconditionerCluster?: number;
  /** Compressed solver: aggregates of the two-level coarse correction, most panels each
   *  (default COARSE_CLUSTER; 0 for one-level block-Jacobi only). */
  coarseCluster?: number;
  /** Compressed solver: admissibility η (default 2) and leaf size (default 32). */
  eta?: number;
  leafSize?: number;
  /** Mirror images (ground plane, symmetry planes; bem/images.ts); free space when absent. */
  kernel?: KernelSpec;
  /** Relative residual of the Krylov solvers, overriding krylovTolerance(tolerance) (for measurements). */
  krylovTolerance?: number;
  /** Galerkin Krylov paths: block PCG (true) or column-wise PCG (false) instead of choosing by BLOCK_CG_MIN_RHS (for measurements). */
  blockKrylov?: boolean;
}

export interface SolveInfo {
  method: Discretisation;
  solver: "direct" | "iterative" | "compressed";
  /** Why `auto` chose what it chose. */
  choice: string;
  panels: number;
  rightHandSides: number;
  assemblySeconds: number;
  solveSeconds: number;
  /** Matrix entries computed per second of assembly (unique entries for Galerkin). */
  entriesPerSecond: number;
  /** Factorisation rate (direct solver); GFLOP/s. */
  factorGflops?: number;
  iterations?: number;
  /** Largest final relative residual over the right-hand sides (iterative solver). */
  residual?: number;
  krylovTolerance?: number;
  /** Compressed solver: relative accuracy asked of every admissible block. */
  compressionTolerance?: number;
  /** Stored numbers over n² (compressed solver; symmetric halves counted both ways). */
  compressionRatio?: number;
  /** Largest and mean rank of the low-rank blocks. */
  maxRank?: number;
  meanRank?: number;
  /** Dense near-field and low-rank far-field block counts; admissible blocks stored dense. */
  nearBlocks?: number;
  farBlocks?: number;
  farBlocksDense?: number;
  /** Bytes held by the compressed operator, estimated before and measured after. */
  operatorBytes?: number;
  estimatedBytes?: number;
  /** Largest cluster of the block-Jacobi preconditioner. */
  preconditionerCluster?: number;
  /** Aggregates of the two-level coarse correction (0: none). */
  coarseAggregates?: number;
  /** Seconds spent building the preconditioner (inside solveSeconds). */
  preconditionerSeconds?: number;
  /** Peak resident memory of the process after the solve; bytes. */
  peakResidentBytes?: number;
}

export interface UnitSolution {
  /** n×k row-major: scaled panel charges x (Q = 4πε x) with conductor j at 1 V in column j. */
  x: Float64Array;
  panels: PanelSet;
  info: SolveInfo;
  /** Dielectric models, compressed solver: E_pv·n̂ in x units at the requested conductor panels, nc×k (solveUnitPotentialsWithInterfaces). */
  normalField?: Float64Array;
  /**
   * Galerkin Krylov paths (iterative, compressed): the variational correction of the conductor
   * charges, k×k in x units, to add to conductorCharges(x) (capacitance.ts variationalCorrection).
   * Absent where there is no residual (direct solver, collocation, dielectric interfaces).
   */
  chargeCorrection?: Float64Array;
}

/** n×k right-hand sides: every conductor at 1 V in turn on its panels, 0 on the others (panels past conductorOf.length). */
export function unitRightHandSides(n: number, k: number, conductorOf: Uint32Array): Float64Array {
  const B = sharedFloat64(n * k);
  for (let p = 0; p < conductorOf.length; p++) B[p * k + conductorOf[p]] = 1;
  return B;
}
