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
  /** pcg: drop converged columns from the block (default true; false keeps the full width, for measurements). */
  compact?: boolean;
}

export interface KrylovResult {
  /** Solution, n×k row-major. */
  X: Float64Array;
  /** Iterations done (products with A, excluding the residual checks). */
  iterations: number;
  /** Final relative residual ‖b − A·x‖/‖b‖ of each column, from a fresh product. */
  residuals: Float64Array;
  /** The true residual B − A·X of the returned X, n×k row-major (pcg; the product behind `residuals`). */
  residual?: Float64Array;
  converged: boolean;
}

/**
 * Solve A·X = B (B n×k row-major, n = B.length / k) by preconditioned CG. Columns that
 * reach `tol` stop moving; the recursive residual is checked against a true residual
 * before a column is declared converged, and the iteration goes on from the true residual
 * when rounding has made them drift apart.
 *
 * Columns that have stopped leave the block: the recurrences run on the w ≤ k columns still
 * moving, gathered into n×w blocks, so `apply` and `precondition` are called with width w
 * (every call's k is the width of the blocks it is handed) and their cost falls as columns
 * converge.
 */
export async function pcg(apply: BlockOperator, precondition: BlockPreconditioner, B: Float64Array, k: number, opts: KrylovOptions): Promise<KrylovResult> {
  if (!Number.isInteger(k) || k < 1) throw new RangeError(`number of right-hand sides ${k} is not a positive integer`);
  const n = B.length / k;
  if (!Number.isInteger(n)) throw new RangeError(`right-hand sides hold ${B.length} values, not a multiple of k=${k}`);
  const X = sharedFloat64(n * k);
  // Full-width storage; the working blocks are its leading n×w views. Qk also takes the
  // true residual b − A·x of all k columns at a restart and at the end.
  const Rk = sharedFloat64(n * k), Zk = sharedFloat64(n * k), Pk = sharedFloat64(n * k), Qk = sharedFloat64(n * k);
  const bnorm = new Float64Array(k), rr = new Float64Array(k), est = new Float64Array(k);
  if (opts.x0) X.set(opts.x0.subarray(0, n * k));
  columnNorms(B, n, k, bnorm);
  for (let c = 0; c < k; c++) if (bnorm[c] === 0) for (let i = 0; i < n; i++) X[i * k + c] = 0;

  // The moving columns: cols[0..w) their indices in X; R, Z, P, Q are n×w over them.
  let w = 0;
  const cols = new Int32Array(k);
  let R = Rk, Z = Zk, P = Pk, Q = Qk;
  const view = (width: number): void => {
    R = Rk.subarray(0, n * width); Z = Zk.subarray(0, n * width); P = Pk.subarray(0, n * width); Q = Qk.subarray(0, n * width);
  };
  const rz = new Float64Array(k), alpha = new Float64Array(k), beta = new Float64Array(k), rw = new Float64Array(k);
  const tolc = new Float64Array(k), keep = new Int32Array(k);
  // With compact: false, the stopped columns stay in the block with p = 0.
  const done = new Uint8Array(k);
  for (let c = 0; c < k; c++) tolc[c] = opts.tol * bnorm[c];
  // X unchanged since Qk last took its true residual.
  let fresh = false;

  // Qk = b − A·x for all columns; the columns above tol restart from p = z = M⁻¹·r.
  // Returns false when every column is converged.
  const trueResidual = async (): Promise<void> => {
    await apply(X, Qk, k);
    for (let i = 0; i < n * k; i++) Qk[i] = B[i] - Qk[i];
    columnNorms(Qk, n, k, rr);
    fresh = true;
  };
  const restart = async (): Promise<boolean> => {
    await trueResidual();
    w = 0;
    for (let c = 0; c < k; c++) if (bnorm[c] > 0 && rr[c] > tolc[c]) cols[w++] = c;
    if (w === 0) return false;
    view(w);
    done.fill(0);
    gatherColumns(Qk, k, R, w, cols, n);
    await precondition(R, Z, w);
    columnDots(R, Z, n, w, rz);
    P.set(Z);
    return true;
  };

  let iterations = 0;
  let moving = await restart();
  while (moving && iterations < opts.maxIter) {
    await apply(P, Q, w);
    iterations++;
    fresh = false;
    columnDots(P, Q, n, w, alpha);
    // α = (r, z)/(p, A·p). A column with (p, A·p) ≤ 0 or (r, z) ≤ 0 has met a matrix or
    // preconditioner that is not SPD and stops (takes no step).
    for (let c = 0; c < w; c++) alpha[c] = !done[c] && alpha[c] > 0 && rz[c] > 0 ? rz[c] / alpha[c] : 0;
    // x += α p, r −= α q and ‖r‖² in one pass.
    rw.fill(0, 0, w);
    if (w === k) {
      // All columns moving (cols is the identity): direct indexing, measurably faster.
      for (let i = 0; i < n; i++) {
        const o = i * k;
        for (let c = 0; c < k; c++) {
          const a = alpha[c];
          X[o + c] += a * P[o + c];
          const r = R[o + c] - a * Q[o + c];
          R[o + c] = r;
          rw[c] += r * r;
        }
      }
    } else {
      for (let i = 0; i < n; i++) {
        const o = i * w, ox = i * k;
        for (let c = 0; c < w; c++) {
          const a = alpha[c];
          X[ox + cols[c]] += a * P[o + c];
          const r = R[o + c] - a * Q[o + c];
          R[o + c] = r;
          rw[c] += r * r;
        }
      }
    }
    let still = 0;
    for (let c = 0; c < w; c++) {
      if (done[c]) continue;
      rr[cols[c]] = Math.sqrt(rw[c]);
      if (alpha[c] > 0 && rr[cols[c]] > tolc[cols[c]]) still++;
      else done[c] = 1;
    }
    if (opts.monitor) {
      for (let c = 0; c < k; c++) est[c] = bnorm[c] > 0 ? rr[c] / bnorm[c] : 0;
      opts.monitor(iterations, est);
    }
    if (still === 0) { moving = await restart(); continue; }
    if (still < w && opts.compact !== false) {
      // Drop the stopped columns: R and P close up in place into n×still blocks (row i's
      // entries move to lower or equal offsets, so a forward pass reads each before it is overwritten).
      for (let c = 0, a = 0; c < w; c++) if (!done[c]) keep[a++] = c;
      gatherColumns(R, w, R, still, keep, n);
      gatherColumns(P, w, P, still, keep, n);
      for (let a = 0; a < still; a++) { rz[a] = rz[keep[a]]; cols[a] = cols[keep[a]]; }
      w = still;
      view(w);
      done.fill(0);
    }
    await precondition(R, Z, w);
    columnDots(R, Z, n, w, beta);
    for (let c = 0; c < w; c++) { const next = beta[c]; beta[c] = rz[c] !== 0 ? next / rz[c] : 0; rz[c] = next; }
    if (still < w) {
      for (let i = 0; i < n; i++) {
        const o = i * w;
        for (let c = 0; c < w; c++) P[o + c] = done[c] ? 0 : Z[o + c] + beta[c] * P[o + c];
      }
    } else {
      for (let i = 0; i < n; i++) {
        const o = i * w;
        for (let c = 0; c < w; c++) P[o + c] = Z[o + c] + beta[c] * P[o + c];
      }
    }
  }
  // Out of iterations: the true residual of the last iterate.
  if (!fresh) await trueResidual();
  const residuals = new Float64Array(k);
  let converged = true;
  for (let c = 0; c < k; c++) {
    residuals[c] = bnorm[c] > 0 ? rr[c] / bnorm[c] : 0;
    if (!(residuals[c] <= opts.tol)) converged = false;
  }
  return { X, iterations, residuals, residual: Qk, converged };
}

/** Columns `cols[0..w)` of the n×k block U into the n×w block V (V may be U when cols is increasing). */
function gatherColumns(U: Float64Array, k: number, V: Float64Array, w: number, cols: Int32Array, n: number): void {
  for (let i = 0; i < n; i++) {
    const o = i * k, d = i * w;
    for (let c = 0; c < w; c++) V[d + c] = U[o + cols[c]];
  }
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
