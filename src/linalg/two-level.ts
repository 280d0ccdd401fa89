/**
 * Two-level additive Schwarz preconditioner (Dryja & Widlund's additive framework; for the
 * boundary-element single layer with a coarse space of piecewise constants on subdomains:
 * Tran & Stephan, "Additive Schwarz methods for the h-version boundary element method",
 * Applicable Analysis 60, 1996, condition number growing only like (1 + log H/h)²):
 *
 *   M⁻¹ r = B⁻¹ r + P·A_c⁻¹·Pᵀ r,   A_c = Pᵀ A P,
 *
 * with B⁻¹ any one-level preconditioner (e.g. block-Jacobi over clusters) and P the n×nc
 * indicator matrix of nc disjoint aggregates. One-level methods see only local coupling;
 * the coarse term restores the global one, which is what makes the iteration count grow
 * with the mesh. The solver sees only the combined function (KSP/PC split).
 */
import type { BlockPreconditionerFn, AsyncBlockPreconditionerFn } from "./cluster-jacobi.js";
import { choleskyFactor, choleskyFactorSerial, choleskySolve, NotPositiveDefiniteError } from "./cholesky.js";
import { luFactorSerial, luSolve } from "./lu.js";
import { sharedFloat64, type WorkerPool } from "./pool.js";

export interface TwoLevelOptions {
  /** Factor A_c by LU (non-symmetric A); Cholesky otherwise, LU if Cholesky fails. */
  lu?: boolean;
  /** Pool for the coarse factorisation (worth it from a few thousand aggregates). */
  pool?: WorkerPool;
}

/**
 * `fine` plus the coarse correction over aggregates: aggregate[i] ∈ 0..nc−1 for every unknown
 * i; coarse = Pᵀ A P, nc×nc row-major (factored in place).
 */
export async function twoLevelPreconditioner(fine: BlockPreconditionerFn | AsyncBlockPreconditionerFn, aggregate: Int32Array, nc: number,
  coarse: Float64Array, opts: TwoLevelOptions = {}): Promise<AsyncBlockPreconditionerFn> {
  const n = aggregate.length;
  if (coarse.length < nc * nc) throw new RangeError(`coarse matrix holds ${coarse.length} values, need ${nc}×${nc}`);
  for (let i = 0; i < n; i++) if (!(aggregate[i] >= 0 && aggregate[i] < nc)) throw new RangeError(`unknown ${i} is in aggregate ${aggregate[i]}, not in 0..${nc - 1}`);
  let piv: Int32Array | null = null;
  const A = sharedFloat64(nc * nc);
  A.set(coarse.subarray(0, nc * nc));
  if (!opts.lu) {
    try {
      if (opts.pool && nc >= 1024) await choleskyFactor(A, nc, { pool: opts.pool });
      else choleskyFactorSerial(A, nc);
    } catch (e) {
      if (!(e instanceof NotPositiveDefiniteError)) throw e;
      A.set(coarse.subarray(0, nc * nc));
      piv = luFactorSerial(A, nc);
    }
  } else piv = luFactorSerial(A, nc);
  let Rc = new Float64Array(0);
  return async (R, Z, k) => {
    await fine(R, Z, k);
    if (Rc.length < nc * k) Rc = new Float64Array(nc * k);
    Rc.fill(0, 0, nc * k);
    for (let i = 0; i < n; i++) {
      const a = aggregate[i] * k, o = i * k;
      for (let c = 0; c < k; c++) Rc[a + c] += R[o + c];
    }
    if (piv === null) choleskySolve(A, nc, Rc, k); else luSolve(A, piv, nc, Rc, k);
    for (let i = 0; i < n; i++) {
      const a = aggregate[i] * k, o = i * k;
      for (let c = 0; c < k; c++) Z[o + c] += Rc[a + c];
    }
  };
}
