/**
 * Block-Jacobi preconditioner: Z = D⁻¹·R with D the block diagonal of A over given index
 * sets (Saad, Iterative Methods for Sparse Linear Systems, 2nd ed., §10.2, block Jacobi as
 * the block diagonal of A). Each diagonal block is gathered and factored once: Cholesky,
 * or LU with partial pivoting when Cholesky fails or `lu` is asked for (non-symmetric A).
 * Unknowns in no block are left unpreconditioned (Z = R there).
 */
import { choleskyFactorSerial, NotPositiveDefiniteError } from "./cholesky.js";
import { luFactorSerial, SingularMatrixError } from "./lu.js";
import { solveLower, solveLowerTransposed, solveUpper } from "./triangular.js";

export type Preconditioner = (R: Float64Array, Z: Float64Array, k: number) => void;

export interface BlockJacobiOptions {
  /** Factor every block by LU (for non-symmetric A) instead of trying Cholesky first. */
  lu?: boolean;
}

/**
 * Build the preconditioner for the row-major n×n A and disjoint index sets `blocks`.
 * The returned function maps n×k row-major R to Z (they must not overlap) without
 * allocating once it has seen the largest k.
 */
export function blockJacobi(A: Float64Array, n: number, blocks: Uint32Array[], opts: BlockJacobiOptions = {}): Preconditioner {
  if (A.length < n * n) throw new RangeError(`matrix holds ${A.length} values, need ${n}×${n}`);
  const owner = new Int32Array(n).fill(-1);
  const factors: Float64Array[] = [];
  const pivots: (Int32Array | null)[] = [];
  let maxSize = 0;
  blocks.forEach((I, b) => {
    const m = I.length;
    for (let a = 0; a < m; a++) {
      const i = I[a];
      if (i >= n) throw new RangeError(`block ${b} holds index ${i}, outside 0..${n - 1}`);
      if (owner[i] >= 0) throw new RangeError(`index ${i} is in blocks ${owner[i]} and ${b}; blocks must be disjoint`);
      owner[i] = b;
    }
    const D = new Float64Array(m * m);
    for (let a = 0; a < m; a++) {
      const row = I[a] * n;
      for (let c = 0; c < m; c++) D[a * m + c] = A[row + I[c]];
    }
    let piv: Int32Array | null = null;
    try {
      if (!opts.lu) {
        try { choleskyFactorSerial(D, m); }
        catch (e) {
          if (!(e instanceof NotPositiveDefiniteError)) throw e;
          for (let a = 0; a < m; a++) for (let c = 0; c < m; c++) D[a * m + c] = A[I[a] * n + I[c]];
          piv = luFactorSerial(D, m);
        }
      } else piv = luFactorSerial(D, m);
    } catch (e) {
      if (e instanceof SingularMatrixError) throw new SingularMatrixError(I[e.column], `diagonal block ${b} (${m} unknowns) is singular at unknown ${I[e.column]}`);
      throw e;
    }
    factors.push(D);
    pivots.push(piv);
    if (m > maxSize) maxSize = m;
  });
  const free: number[] = [];
  for (let i = 0; i < n; i++) if (owner[i] < 0) free.push(i);
  const freeRows = Uint32Array.from(free);
  let W = new Float64Array(0);

  return (R: Float64Array, Z: Float64Array, k: number): void => {
    if (W.length < maxSize * k) W = new Float64Array(maxSize * k);
    for (let a = 0; a < freeRows.length; a++) {
      const r = freeRows[a] * k;
      for (let c = 0; c < k; c++) Z[r + c] = R[r + c];
    }
    for (let b = 0; b < factors.length; b++) {
      const I = blocks[b], m = I.length, D = factors[b], piv = pivots[b];
      for (let a = 0; a < m; a++) {
        const r = I[a] * k;
        for (let c = 0; c < k; c++) W[a * k + c] = R[r + c];
      }
      if (piv === null) {
        solveLower(D, 0, m, m, W, k, false);
        solveLowerTransposed(D, 0, m, m, W, k);
      } else {
        for (let a = 0; a < m; a++) {
          const p = piv[a];
          if (p === a) continue;
          for (let c = 0; c < k; c++) { const t = W[a * k + c]; W[a * k + c] = W[p * k + c]; W[p * k + c] = t; }
        }
        solveLower(D, 0, m, m, W, k, true);
        solveUpper(D, 0, m, m, W, k);
      }
      for (let a = 0; a < m; a++) {
        const r = I[a] * k;
        for (let c = 0; c < k; c++) Z[r + c] = W[a * k + c];
      }
    }
  };
}

/** The identity preconditioner (Z = R), for unpreconditioned runs. */
export const identityPreconditioner: Preconditioner = (R, Z) => {
  Z.set(R.subarray(0, Math.min(Z.length, R.length)));
};
