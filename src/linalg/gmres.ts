/**
 * Restarted GMRES with right preconditioning for non-symmetric systems A·X = B, k
 * right-hand sides at once (Saad, Iterative Methods for Sparse Linear Systems, 2nd ed.,
 * Algorithm 9.5, restarted as in §6.5.5; Givens rotations for the least-squares problem as
 * in §6.5.3). Each column has its own Krylov basis and Hessenberg matrix; the columns share
 * every product with A and every preconditioner application. Right preconditioning keeps
 * the monitored residual the true one, ‖b − A·x‖, not a preconditioned stand-in.
 *
 * Layout as in cg.ts: blocks are n×k row-major, in shared memory.
 */
import { sharedFloat64 } from "./pool.js";
import { columnNorms, trueResiduals, type BlockOperator, type BlockPreconditioner, type KrylovOptions, type KrylovResult } from "./cg.js";

export interface GmresOptions extends KrylovOptions {
  /** Krylov dimension before a restart (default 30). */
  restart?: number;
}

/** Solve A·X = B (B n×k row-major) by restarted, right-preconditioned GMRES. */
export async function gmres(apply: BlockOperator, precondition: BlockPreconditioner, B: Float64Array, k: number, opts: GmresOptions): Promise<KrylovResult> {
  if (!Number.isInteger(k) || k < 1) throw new RangeError(`number of right-hand sides ${k} is not a positive integer`);
  const n = B.length / k;
  if (!Number.isInteger(n)) throw new RangeError(`right-hand sides hold ${B.length} values, not a multiple of k=${k}`);
  const m = Math.max(1, Math.floor(opts.restart ?? 30));
  const nk = n * k;
  const X = sharedFloat64(nk), W = sharedFloat64(nk), Z = sharedFloat64(nk);
  const V = sharedFloat64((m + 1) * nk);
  // Per column: Hessenberg (m+1)×m, rotations, right-hand side of the small problem.
  const H = new Float64Array(k * (m + 1) * m), cs = new Float64Array(k * m), sn = new Float64Array(k * m);
  const g = new Float64Array(k * (m + 1)), y = new Float64Array(m);
  const bnorm = new Float64Array(k), rn = new Float64Array(k);
  const dim = new Int32Array(k), active = new Uint8Array(k), est = new Float64Array(k);
  if (opts.x0) X.set(opts.x0.subarray(0, nk));
  columnNorms(B, n, k, bnorm);
  for (let c = 0; c < k; c++) if (bnorm[c] === 0) for (let i = 0; i < n; i++) X[i * k + c] = 0;

  let iterations = 0;
  for (;;) {
    await apply(X, W, k);
    for (let i = 0; i < nk; i++) W[i] = B[i] - W[i];
    columnNorms(W, n, k, rn);
    let any = false;
    for (let c = 0; c < k; c++) {
      est[c] = bnorm[c] > 0 ? rn[c] / bnorm[c] : 0;
      active[c] = bnorm[c] > 0 && rn[c] > opts.tol * bnorm[c] ? 1 : 0;
      dim[c] = 0;
      const inv = active[c] ? 1 / rn[c] : 0;
      for (let i = 0; i < n; i++) V[i * k + c] = W[i * k + c] * inv;
      g[c * (m + 1)] = rn[c];
      if (active[c]) any = true;
    }
    if (!any || iterations >= opts.maxIter) break;

    for (let j = 0; j < m && iterations < opts.maxIter; j++) {
      const Vj = V.subarray(j * nk, (j + 1) * nk);
      await precondition(Vj, Z, k);
      await apply(Z, W, k);
      iterations++;
      let still = false;
      for (let c = 0; c < k; c++) {
        const V1 = (j + 1) * nk;
        if (!active[c]) { for (let i = 0; i < n; i++) V[V1 + i * k + c] = 0; continue; }
        const h = c * (m + 1) * m;
        // Modified Gram–Schmidt against the basis so far (Saad, Algorithm 6.2).
        for (let q = 0; q <= j; q++) {
          const Vq = q * nk;
          let s = 0;
          for (let i = 0; i < n; i++) s += W[i * k + c] * V[Vq + i * k + c];
          for (let i = 0; i < n; i++) W[i * k + c] -= s * V[Vq + i * k + c];
          H[h + q * m + j] = s;
        }
        let s = 0;
        for (let i = 0; i < n; i++) s += W[i * k + c] * W[i * k + c];
        const hNext = Math.sqrt(s);
        // Earlier rotations on the new column, then the one that zeroes H[j+1, j].
        for (let q = 0; q < j; q++) {
          const a = H[h + q * m + j], b = H[h + (q + 1) * m + j];
          H[h + q * m + j] = cs[c * m + q] * a + sn[c * m + q] * b;
          H[h + (q + 1) * m + j] = -sn[c * m + q] * a + cs[c * m + q] * b;
        }
        const a = H[h + j * m + j], r = Math.hypot(a, hNext);
        const cj = r === 0 ? 1 : a / r, sj = r === 0 ? 0 : hNext / r;
        cs[c * m + j] = cj; sn[c * m + j] = sj;
        H[h + j * m + j] = r;
        const gc = c * (m + 1);
        g[gc + j + 1] = -sj * g[gc + j];
        g[gc + j] = cj * g[gc + j];
        dim[c] = j + 1;
        est[c] = Math.abs(g[gc + j + 1]) / bnorm[c];
        // |g[j+1]| is the residual norm of the current iterate (Saad, Proposition 6.9).
        if (Math.abs(g[gc + j + 1]) <= opts.tol * bnorm[c] || hNext === 0) {
          active[c] = 0;
          for (let i = 0; i < n; i++) V[V1 + i * k + c] = 0;
        } else {
          const inv = 1 / hNext;
          for (let i = 0; i < n; i++) V[V1 + i * k + c] = W[i * k + c] * inv;
          still = true;
        }
      }
      if (opts.monitor) opts.monitor(iterations, est);
      if (!still) break;
    }

    // x ← x + M⁻¹·(V·y) with H·y = g in each column's own dimension.
    W.fill(0);
    for (let c = 0; c < k; c++) {
      const d = dim[c];
      if (d === 0) continue;
      const h = c * (m + 1) * m, gc = c * (m + 1);
      for (let q = d - 1; q >= 0; q--) {
        let s = g[gc + q];
        for (let t = q + 1; t < d; t++) s -= H[h + q * m + t] * y[t];
        y[q] = s / H[h + q * m + q];
      }
      for (let q = 0; q < d; q++) {
        const Vq = q * nk, yq = y[q];
        for (let i = 0; i < n; i++) W[i * k + c] += yq * V[Vq + i * k + c];
      }
    }
    await precondition(W, Z, k);
    for (let i = 0; i < nk; i++) X[i] += Z[i];
  }
  const residuals = await trueResiduals(apply, X, B, W, n, k, bnorm);
  let converged = true;
  for (let c = 0; c < k; c++) if (!(residuals[c] <= opts.tol)) converged = false;
  return { X, iterations, residuals, converged };
}
