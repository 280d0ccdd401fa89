/**
 * Block-Jacobi preconditioner from given dense diagonal blocks (Saad, Iterative Methods for
 * Sparse Linear Systems, 2nd ed., §10.2): Z = D⁻¹·R with D block diagonal over disjoint
 * index sets, each block given already gathered (e.g. the near-field diagonal blocks of a
 * hierarchical matrix, which never exists as a whole). Cholesky per block, LU with partial
 * pivoting when Cholesky fails or `lu` is asked for.
 */
import { choleskyFactorSerial, choleskySolve, NotPositiveDefiniteError } from "./cholesky.js";
import { luFactorSerial, luSolve } from "./lu.js";

export type BlockPreconditionerFn = (R: Float64Array, Z: Float64Array, k: number) => void;

/**
 * blocks[b] is |sets[b]|² row-major, entry (a, c) = A[sets[b][a], sets[b][c]]; factored in
 * place. Unknowns in no set pass through unchanged.
 */
export function blockJacobiFromBlocks(blocks: Float64Array[], sets: Uint32Array[], n: number, opts: { lu?: boolean } = {}): BlockPreconditionerFn {
  const piv: (Int32Array | null)[] = [];
  const covered = new Uint8Array(n);
  let maxSize = 0;
  blocks.forEach((D, b) => {
    const I = sets[b], m = I.length;
    if (D.length < m * m) throw new RangeError(`diagonal block ${b} holds ${D.length} values, need ${m}×${m}`);
    for (let a = 0; a < m; a++) {
      if (I[a] >= n || covered[I[a]]) throw new RangeError(`index ${I[a]} of block ${b} is outside 0..${n - 1} or in two blocks`);
      covered[I[a]] = 1;
    }
    if (m > maxSize) maxSize = m;
    if (!opts.lu) {
      const copy = D.slice(0, m * m);
      try { choleskyFactorSerial(D, m); piv.push(null); return; }
      catch (e) { if (!(e instanceof NotPositiveDefiniteError)) throw e; D.set(copy); }
    }
    piv.push(luFactorSerial(D, m));
  });
  const free: number[] = [];
  for (let i = 0; i < n; i++) if (!covered[i]) free.push(i);
  const freeRows = Uint32Array.from(free);
  let W = new Float64Array(0);
  return (R, Z, k) => {
    if (W.length < maxSize * k) W = new Float64Array(maxSize * k);
    for (let a = 0; a < freeRows.length; a++) { const r = freeRows[a] * k; for (let c = 0; c < k; c++) Z[r + c] = R[r + c]; }
    for (let b = 0; b < blocks.length; b++) {
      const I = sets[b], m = I.length, D = blocks[b], p = piv[b];
      for (let a = 0; a < m; a++) { const r = I[a] * k; for (let c = 0; c < k; c++) W[a * k + c] = R[r + c]; }
      // The solves read only the first m·k entries of W.
      if (p === null) choleskySolve(D, m, W, k); else luSolve(D, p, m, W, k);
      for (let a = 0; a < m; a++) { const r = I[a] * k; for (let c = 0; c < k; c++) Z[r + c] = W[a * k + c]; }
    }
  };
}
