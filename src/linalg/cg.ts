/**
 * Preconditioned conjugate gradients for symmetric positive definite systems A·X = B with
 * k right-hand sides at once (Saad, Iterative Methods for Sparse Linear Systems, 2nd ed.,
 * Algorithm 9.1). Each column runs its own recurrence (its own α, β); they share every
 * product with A and every preconditioner application, so A is streamed once per
 * iteration for all k. The solver knows A and M only through `apply` and `precondition`
 * (the KSP/PC split of PETSc).
 *
 * Layout: X, B and every block passed to the callbacks are n×k row-major (row i holds
 * unknown i of all k columns), in shared memory so that `apply` may hand them to workers.
 */
import { sharedFloat64 } from "./pool.js";

/** Y = A·X for n×k row-major blocks. */
export type BlockOperator = (X: Float64Array, Y: Float64Array, k: number) => void | Promise<void>;
/** Z = M⁻¹·R for n×k row-major blocks. */
export type BlockPreconditioner = (R: Float64Array, Z: Float64Array, k: number) => void | Promise<void>;

export interface KrylovOptions {
  /** Stop when ‖b − A·x‖ / ‖b‖ is below this for every column. */
  tol: number;
  /** Most iterations (products with A), counted once for all columns. */
  maxIter: number;
  /** Initial guess, n×k row-major (zero when absent). */
  x0?: Float64Array;
  /**
   * Called after every iteration with the count so far and each column's current relative
   * residual estimate (the solver's own recurrence; the array is reused, copy to keep it).
   */
  monitor?: (iteration: number, residuals: Float64Array) => void;
}

export interface KrylovResult {
  /** Solution, n×k row-major. */
  X: Float64Array;
  /** Iterations done (products with A, excluding the residual checks). */
  iterations: number;
  /** Final relative residual ‖b − A·x‖/‖b‖ of each column, from a fresh product. */
  residuals: Float64Array;
  converged: boolean;
}

/**
 * Solve A·X = B (B n×k row-major, n = B.length / k) by preconditioned CG. Columns that
 * reach `tol` stop moving; the recursive residual is checked against a true residual
 * before a column is declared converged, and the iteration goes on from the true residual
 * when rounding has made them drift apart.
 */
export async function pcg(apply: BlockOperator, precondition: BlockPreconditioner, B: Float64Array, k: number, opts: KrylovOptions): Promise<KrylovResult> {
  if (!Number.isInteger(k) || k < 1) throw new RangeError(`number of right-hand sides ${k} is not a positive integer`);
  const n = B.length / k;
  if (!Number.isInteger(n)) throw new RangeError(`right-hand sides hold ${B.length} values, not a multiple of k=${k}`);
  const X = sharedFloat64(n * k), R = sharedFloat64(n * k), Z = sharedFloat64(n * k);
  const P = sharedFloat64(n * k), Q = sharedFloat64(n * k);
  const bnorm = new Float64Array(k), rz = new Float64Array(k), pq = new Float64Array(k), rr = new Float64Array(k);
  const active = new Uint8Array(k), est = new Float64Array(k);
  if (opts.x0) X.set(opts.x0.subarray(0, n * k));
  columnNorms(B, n, k, bnorm);

  // r = b − A·x, then p = z = M⁻¹·r for the columns still moving.
  const restart = async (): Promise<boolean> => {
    await apply(X, Q, k);
    for (let i = 0; i < n * k; i++) R[i] = B[i] - Q[i];
    columnNorms(R, n, k, rr);
    let any = false;
    for (let c = 0; c < k; c++) {
      active[c] = bnorm[c] > 0 && rr[c] > opts.tol * bnorm[c] ? 1 : 0;
      if (bnorm[c] === 0) { rr[c] = 0; for (let i = 0; i < n; i++) X[i * k + c] = 0; }
      if (active[c]) any = true;
    }
    if (!any) return false;
    await precondition(R, Z, k);
    columnDots(R, Z, n, k, rz);
    for (let i = 0; i < n; i++)
      for (let c = 0; c < k; c++) if (active[c]) P[i * k + c] = Z[i * k + c]; else P[i * k + c] = 0;
    return true;
  };

  let iterations = 0;
  let moving = await restart();
  while (moving && iterations < opts.maxIter) {
    await apply(P, Q, k);
    iterations++;
    columnDots(P, Q, n, k, pq);
    for (let c = 0; c < k; c++) {
      // α = (r, z)/(p, A·p). A column that stopped takes no step; one with (p, A·p) ≤ 0
      // or (r, z) ≤ 0 has met a matrix or preconditioner that is not SPD and stops too.
      if (active[c] && pq[c] > 0 && rz[c] > 0) pq[c] = rz[c] / pq[c];
      else { pq[c] = 0; active[c] = 0; }
    }
    for (let i = 0; i < n; i++) {
      const o = i * k;
      for (let c = 0; c < k; c++) {
        const a = pq[c];
        X[o + c] += a * P[o + c];
        R[o + c] -= a * Q[o + c];
      }
    }
    columnNorms(R, n, k, rr);
    let any = false;
    for (let c = 0; c < k; c++) {
      if (active[c] && rr[c] <= opts.tol * bnorm[c]) active[c] = 0;
      if (active[c]) any = true;
    }
    if (opts.monitor) {
      for (let c = 0; c < k; c++) est[c] = bnorm[c] > 0 ? rr[c] / bnorm[c] : 0;
      opts.monitor(iterations, est);
    }
    if (!any) { moving = await restart(); continue; }
    await precondition(R, Z, k);
    for (let c = 0; c < k; c++) pq[c] = rz[c];
    columnDots(R, Z, n, k, rz);
    for (let c = 0; c < k; c++) pq[c] = active[c] && pq[c] !== 0 ? rz[c] / pq[c] : 0;
    for (let i = 0; i < n; i++) {
      const o = i * k;
      for (let c = 0; c < k; c++) if (active[c]) P[o + c] = Z[o + c] + pq[c] * P[o + c]; else P[o + c] = 0;
    }
  }
  const residuals = await trueResiduals(apply, X, B, Q, n, k, bnorm);
  let converged = true;
  for (let c = 0; c < k; c++) if (!(residuals[c] <= opts.tol)) converged = false;
  return { X, iterations, residuals, converged };
}

/** ‖b − A·x‖/‖b‖ per column (0 for a zero column of B), using Q as scratch. */
export async function trueResiduals(apply: BlockOperator, X: Float64Array, B: Float64Array, Q: Float64Array, n: number, k: number, bnorm: Float64Array): Promise<Float64Array> {
  await apply(X, Q, k);
  for (let i = 0; i < n * k; i++) Q[i] = B[i] - Q[i];
  const out = new Float64Array(k);
  columnNorms(Q, n, k, out);
  for (let c = 0; c < k; c++) out[c] = bnorm[c] > 0 ? out[c] / bnorm[c] : 0;
  return out;
}

/** Euclidean norm of each column of an n×k row-major block. */
export function columnNorms(V: Float64Array, n: number, k: number, out: Float64Array): void {
  columnDots(V, V, n, k, out);
  for (let c = 0; c < k; c++) out[c] = Math.sqrt(out[c]);
}

/** Inner product of matching columns of two n×k row-major blocks. */
export function columnDots(U: Float64Array, V: Float64Array, n: number, k: number, out: Float64Array): void {
  for (let c = 0; c < k; c++) out[c] = 0;
  for (let i = 0; i < n; i++) {
    const o = i * k;
    for (let c = 0; c < k; c++) out[c] += U[o + c] * V[o + c];
  }
}
