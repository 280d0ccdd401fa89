/**
 * Adaptive cross approximation of a matrix block known only through its rows and columns.
 *
 * ACA with partial pivoting (Bebendorf, "Approximation of boundary element matrices",
 * Numer. Math. 86, 2000; Bebendorf, Computing 64, 2000) builds M ≈ Σ_q u_q v_qᵀ from one
 * row and one column of the residual per step. Plain partial pivoting can stop too early
 * when the first rows miss part of the block; ACA+ (Bebendorf & Rjasanow, "Adaptive
 * low-rank approximation of collocation matrices", Computing 70, 2003, §3) keeps a
 * reference row and a reference column of the residual and takes the next pivot from the
 * larger of the two, so a whole block is not missed. Stopping rule (ibid., eq. 3.4):
 * ‖u_q‖‖v_q‖ ≤ ε‖S_q‖_F, with ‖S_q‖_F updated exactly from the earlier terms.
 *
 * The caller then recompresses (recompression.ts `recompress`). When the rank would reach the
 * point where dense storage is cheaper, `aca` reports failure and the caller stores the
 * block dense.
 */

import { recompress, recompressFromGram, GRAM_TOLERANCE_FLOOR } from "./recompression.js";

/** Fill out[0..n) with row i (0..m) of the block. */
export type BlockRow = (i: number, out: Float64Array) => void;
/** Fill out[0..m) with column j (0..n) of the block. */
export type BlockColumn = (j: number, out: Float64Array) => void;

// Scratch per thread, grown on demand.
let refRow = new Float64Array(0), refCol = new Float64Array(0);
let usedRow = new Uint8Array(0), usedCol = new Uint8Array(0);

/**
 * Gram matrices of the factors of the last `aca` call, packed lower triangle by rows
 * (entry (q, p), p ≤ q, at q(q+1)/2 + p): gramU = UᵀU, gramV = VᵀV. The stopping rule needs
 * these inner products anyway, so keeping them makes the recompression's orthogonalisation
 * free (recompression.ts recompressFromGram).
 */
export let gramU = new Float64Array(0), gramV = new Float64Array(0);

function growGram(rank: number): void {
  const need = ((rank + 1) * (rank + 2)) / 2;
  if (gramU.length >= need) return;
  const size = Math.max(need, 2 * gramU.length, 64);
  const a = new Float64Array(size), b = new Float64Array(size);
  a.set(gramU); b.set(gramV);
  gramU = a; gramV = b;
}

/**
 * ACA+ of the m×n block to relative accuracy `tol`. Terms go to u (term q at q·m) and
 * v (term q at q·n), which must hold maxRank terms. Returns the rank reached, or −1 when
 * maxRank terms were not enough.
 */
export function aca(m: number, n: number, row: BlockRow, col: BlockColumn, tol: number, maxRank: number,
  u: Float64Array, v: Float64Array): number {
  if (m === 0 || n === 0) return 0;
  if (refRow.length < n) { refRow = new Float64Array(n); usedCol = new Uint8Array(n); }
  if (refCol.length < m) { refCol = new Float64Array(m); usedRow = new Uint8Array(m); }
  usedRow.fill(0, 0, m); usedCol.fill(0, 0, n);
  let rank = 0, frob2 = 0, firstPivot = 0;

  // Residual row i into out (length n) and residual column j into out (length m).
  const residualRow = (i: number, out: Float64Array, o: number): void => {
    row(i, o === 0 ? out : out.subarray(o, o + n));
    for (let q = 0; q < rank; q++) {
      const a = u[q * m + i];
      if (a === 0) continue;
      const vq = q * n;
      for (let b = 0; b < n; b++) out[o + b] -= a * v[vq + b];
    }
  };
  const residualCol = (j: number, out: Float64Array, o: number): void => {
    col(j, o === 0 ? out : out.subarray(o, o + m));
    for (let q = 0; q < rank; q++) {
      const b = v[q * n + j];
      if (b === 0) continue;
      const uq = q * m;
      for (let a = 0; a < m; a++) out[o + a] -= b * u[uq + a];
    }
  };

  // Reference column: the first; reference row: where that column is smallest, so the two
  // see different parts of the block (Bebendorf & Rjasanow 2003, Algorithm 3.1).
  let jRef = 0;
  residualCol(jRef, refCol, 0);
  let iRef = 0;
  { let best = Infinity; for (let a = 0; a < m; a++) { const x = Math.abs(refCol[a]); if (x < best) { best = x; iRef = a; } } }
  residualRow(iRef, refRow, 0);

  while (rank < maxRank) {
    let iStar = -1, jStar = -1, cMax = -1, rMax = -1;
    for (let a = 0; a < m; a++) if (!usedRow[a]) { const x = Math.abs(refCol[a]); if (x > cMax) { cMax = x; iStar = a; } }
    for (let b = 0; b < n; b++) if (!usedCol[b]) { const x = Math.abs(refRow[b]); if (x > rMax) { rMax = x; jStar = b; } }
    if (iStar < 0 || jStar < 0) return rank;
    if (cMax === 0 && rMax === 0) {
      // Both references are exhausted: look for a row or column not yet seen before stopping.
      if (!newReferences()) return rank;
      continue;
    }
    const uq = rank * m, vq = rank * n;
    if (rMax > cMax) {
      residualCol(jStar, u, uq);
      let best = -1;
      for (let a = 0; a < m; a++) if (!usedRow[a]) { const x = Math.abs(u[uq + a]); if (x > best) { best = x; iStar = a; } }
      residualRow(iStar, v, vq);
    } else {
      residualRow(iStar, v, vq);
      let best = -1;
      for (let b = 0; b < n; b++) if (!usedCol[b]) { const x = Math.abs(v[vq + b]); if (x > best) { best = x; jStar = b; } }
      residualCol(jStar, u, uq);
    }
    const pivot = v[vq + jStar];
    usedRow[iStar] = 1; usedCol[jStar] = 1;
    if (!Number.isFinite(pivot)) return -1;
    if (rank === 0 && firstPivot === 0) firstPivot = Math.abs(pivot);
    // A pivot at rounding level of the first one: the residual is noise, the block is done
    // (dividing by it would only amplify rounding).
    if (Math.abs(pivot) <= 1e-14 * firstPivot) { if (rank > 0) return rank; continue; }
    const inv = 1 / pivot;
    let un = 0, vn = 0;
    for (let a = 0; a < m; a++) { u[uq + a] *= inv; un += u[uq + a] * u[uq + a]; }
    for (let b = 0; b < n; b++) vn += v[vq + b] * v[vq + b];
    // ‖S_q‖² = ‖S_{q−1}‖² + 2 Σ_p (u_p·u_q)(v_p·v_q) + ‖u_q‖²‖v_q‖².
    let cross = 0;
    growGram(rank);
    const g0 = (rank * (rank + 1)) / 2;
    for (let p = 0; p < rank; p++) {
      let du = 0, dv = 0;
      for (let a = 0; a < m; a++) du += u[p * m + a] * u[uq + a];
      for (let b = 0; b < n; b++) dv += v[p * n + b] * v[vq + b];
      gramU[g0 + p] = du; gramV[g0 + p] = dv;
      cross += du * dv;
    }
    gramU[g0 + rank] = un; gramV[g0 + rank] = vn;
    frob2 += 2 * cross + un * vn;
    rank++;
    // Keep the references residual: subtract the new term.
    const vr = v[vq + jRef], ur = u[uq + iRef];
    for (let a = 0; a < m; a++) refCol[a] -= u[uq + a] * vr;
    for (let b = 0; b < n; b++) refRow[b] -= ur * v[vq + b];
    if (Math.sqrt(un * vn) <= tol * Math.sqrt(Math.max(frob2, 0))) return rank;
    if (iStar === iRef || usedRow[iRef]) { if (!newRow()) return rank; }
    if (jStar === jRef || usedCol[jRef]) { if (!newCol()) return rank; }
  }
  return -1;

  function newRow(): boolean {
    for (let a = 0; a < m; a++) if (!usedRow[a] && a !== iRef) { iRef = a; residualRow(iRef, refRow, 0); return true; }
    return false;
  }
  function newCol(): boolean {
    for (let b = 0; b < n; b++) if (!usedCol[b] && b !== jRef) { jRef = b; residualCol(jRef, refCol, 0); return true; }
    return false;
  }
  function newReferences(): boolean {
    // Walk unused rows (then columns) until one with a non-zero residual turns up.
    for (let a = 0; a < m; a++) {
      if (usedRow[a]) continue;
      usedRow[a] = 1;
      iRef = a; residualRow(a, refRow, 0);
      for (let b = 0; b < n; b++) if (!usedCol[b] && refRow[b] !== 0) return true;
    }
    return false;
  }
}

/**
 * Share of the tolerance given to ACA+; the rest goes to recompression. The ACA stopping
 * rule estimates the error by the last term only and underestimates it (measured up to 7× on
 * 1/r blocks, tests/linalg/aca.test.ts), so ACA runs to a much finer tolerance and the
 * recompression, whose truncation error is exact, takes the surplus rank away again.
 */
export const ACA_SHARE = 0.05;
export const RECOMPRESSION_SHARE = 0.5;

/**
 * Low-rank approximation of an m×n block to relative Frobenius accuracy `tol`: ACA+ then
 * recompression. U (m×r) then V (n×r), column-major (term by term), are written to out at `off`;
 * u and v are scratch for maxRank terms. Returns r, or −1 when maxRank ACA terms did not
 * reach the tolerance (store the block dense).
 */
export function compressBlock(m: number, n: number, row: BlockRow, col: BlockColumn, tol: number, maxRank: number,
  u: Float64Array, v: Float64Array, out: Float64Array, off: number): number {
  const r = aca(m, n, row, col, ACA_SHARE * tol, maxRank, u, v);
  if (r < 0) return -1;
  const rtol = RECOMPRESSION_SHARE * tol;
  if (r <= 1) return recompress(u, v, m, n, r, rtol, out, off, out, -1);
  return rtol >= GRAM_TOLERANCE_FLOOR
    ? recompressFromGram(u, v, m, n, r, gramU, gramV, rtol, out, off)
    : recompress(u, v, m, n, r, rtol, out, off, out, -1);
}
