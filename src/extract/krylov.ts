/**
 * The Krylov method of the iterative solves, chosen by the operator's symmetry and the number
 * of right-hand sides, and run with whatever preconditioner it is given (preconditioner.ts).
 *
 * - symmetric positive definite (Galerkin, conductors only): preconditioned CG (linalg/cg.ts),
 *   one column at a time in one block, or block PCG (linalg/block-cg.ts), one Krylov space for
 *   all columns, from BLOCK_CG_MIN_RHS right-hand sides;
 * - otherwise (collocation, dielectric interface rows): restarted GMRES (linalg/gmres.ts).
 */
import { pcg, type BlockOperator, type BlockPreconditioner, type KrylovResult } from "../linalg/cg.js";
import { blockPcg } from "../linalg/block-cg.js";
import { gmres } from "../linalg/gmres.js";
import type { WorkerPool } from "../linalg/pool.js";

export const KRYLOV_METHODS = ["pcg", "block-pcg", "gmres"] as const;
export type KrylovMethod = (typeof KRYLOV_METHODS)[number];

/**
 * Right-hand sides from which the SPD (Galerkin) Krylov paths run block PCG (linalg/block-cg.ts)
 * instead of column-wise PCG: measured in DEVELOPERS.md ("Block PCG").
 */
export const BLOCK_CG_MIN_RHS = 2;

/**
 * The method for an operator that is (or is not) symmetric positive definite and k right-hand
 * sides; `block` forces block PCG (true) or column-wise PCG (false) on SPD operators (for measurements).
 */
export function krylovMethod(symmetric: boolean, k: number, block?: boolean): KrylovMethod {
  if (!symmetric) return "gmres";
  return (block ?? k >= BLOCK_CG_MIN_RHS) ? "block-pcg" : "pcg";
}

export interface KrylovSolveOptions {
  /** Relative residual ‖b − A·x‖ / ‖b‖ to reach in every column. */
  tol: number;
  maxIter: number;
  monitor?: (iteration: number, residuals: Float64Array) => void;
  /** Workers for block PCG's block products. */
  pool?: WorkerPool;
}

/** Solve A·X = B (n×k row-major) by `method`, preconditioned by `precondition`. */
export function runKrylov(method: KrylovMethod, apply: BlockOperator, precondition: BlockPreconditioner, B: Float64Array, k: number,
  o: KrylovSolveOptions): Promise<KrylovResult> {
  switch (method) {
    case "pcg": return pcg(apply, precondition, B, k, { tol: o.tol, maxIter: o.maxIter, monitor: o.monitor });
    case "block-pcg": return blockPcg(apply, precondition, B, k, { tol: o.tol, maxIter: o.maxIter, monitor: o.monitor, pool: o.pool });
    case "gmres": return gmres(apply, precondition, B, k, { tol: o.tol, maxIter: o.maxIter, monitor: o.monitor });
    default: throw new RangeError(`unknown Krylov method "${String(method)}" (known: ${KRYLOV_METHODS.join(", ")})`);
  }
}
