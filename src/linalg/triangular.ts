/**
 * Triangular solves on row-major blocks, for many right-hand sides at once.
 *
 * A triangular factor T of order n sits at offset `off` with row stride `ld`; the
 * right-hand sides B are n×k row-major (row i holds unknown i for all k columns) and are
 * overwritten by the solution. Every loop walks rows of T and rows of B, both contiguous,
 * so T is read once per solve whatever k is (Golub & Van Loan, Matrix Computations, 4th ed.,
 * §3.1, row- and column-oriented forward and back substitution).
 */

/** Columns per triangular solve in the blocked Cholesky and LU panels (measured: linalg bench). */
export const PANEL_BLOCK = 32;

/** Solve T·X = B with T lower triangular (unit diagonal when `unit`). */
export function solveLower(T: Float64Array, off: number, ld: number, n: number, B: Float64Array, k: number, unit: boolean): void {
  for (let i = 0; i < n; i++) {
    const t = off + i * ld, bi = i * k;
    for (let j = 0; j < i; j++) {
      const l = T[t + j];
      if (l === 0) continue;
      const bj = j * k;
      for (let c = 0; c < k; c++) B[bi + c] -= l * B[bj + c];
    }
    if (!unit) {
      const d = 1 / T[t + i];
      for (let c = 0; c < k; c++) B[bi + c] *= d;
    }
  }
}

/** Solve Tᵀ·X = B with T lower triangular (non-unit), reading T by rows. */
export function solveLowerTransposed(T: Float64Array, off: number, ld: number, n: number, B: Float64Array, k: number): void {
  for (let i = n - 1; i >= 0; i--) {
    const t = off + i * ld, bi = i * k;
    const d = 1 / T[t + i];
    for (let c = 0; c < k; c++) B[bi + c] *= d;
    // Column i of Tᵀ is row i of T: spread the finished unknown i into rows j < i.
    for (let j = 0; j < i; j++) {
      const l = T[t + j];
      if (l === 0) continue;
      const bj = j * k;
      for (let c = 0; c < k; c++) B[bj + c] -= l * B[bi + c];
    }
  }
}

/** Solve T·X = B with T upper triangular (non-unit diagonal). */
export function solveUpper(T: Float64Array, off: number, ld: number, n: number, B: Float64Array, k: number): void {
  for (let i = n - 1; i >= 0; i--) {
    const t = off + i * ld, bi = i * k;
    for (let j = i + 1; j < n; j++) {
      const u = T[t + j];
      if (u === 0) continue;
      const bj = j * k;
      for (let c = 0; c < k; c++) B[bi + c] -= u * B[bj + c];
    }
    const d = 1 / T[t + i];
    for (let c = 0; c < k; c++) B[bi + c] *= d;
  }
}

/**
 * X·Lᵀ = A for the rows r0..r1 of a panel: each panel row a (length nb, at `aOff + r*lda`)
 * becomes x with L·x = a, L lower nb×nb at `lOff` (stride `ld`). This is the panel step of
 * right-looking Cholesky, L21 = A21·L11⁻ᵀ.
 */
export function solveRowsLowerTransposedRight(
  L: Float64Array, lOff: number, ld: number, nb: number,
  A: Float64Array, aOff: number, lda: number, rows: number,
): void {
  // Four panel rows at a time share every load of L.
  let r = 0;
  for (; r + 3 < rows; r += 4) {
    const a0 = aOff + r * lda, a1 = a0 + lda, a2 = a1 + lda, a3 = a2 + lda;
    for (let c = 0; c < nb; c++) {
      const l = lOff + c * ld;
      let s0 = A[a0 + c], s1 = A[a1 + c], s2 = A[a2 + c], s3 = A[a3 + c];
      for (let q = 0; q < c; q++) {
        const f = L[l + q];
        s0 -= f * A[a0 + q]; s1 -= f * A[a1 + q]; s2 -= f * A[a2 + q]; s3 -= f * A[a3 + q];
      }
      const d = 1 / L[l + c];
      A[a0 + c] = s0 * d; A[a1 + c] = s1 * d; A[a2 + c] = s2 * d; A[a3 + c] = s3 * d;
    }
  }
  for (; r < rows; r++) {
    const a = aOff + r * lda;
    for (let c = 0; c < nb; c++) {
      const l = lOff + c * ld;
      let s = A[a + c];
      for (let q = 0; q < c; q++) s -= L[l + q] * A[a + q];
      A[a + c] = s / L[l + c];
    }
  }
}

/**
 * L⁻¹·A in place for an nb×p block A (at `aOff`, stride `lda`) with L unit lower nb×nb
 * (at `lOff`, stride `ld`): the U12 step of right-looking LU.
 */
export function solveUnitLowerLeft(
  L: Float64Array, lOff: number, ld: number, nb: number,
  A: Float64Array, aOff: number, lda: number, p: number,
): void {
  for (let r = 1; r < nb; r++) {
    const l = lOff + r * ld, ar = aOff + r * lda;
    // Four earlier rows per pass, so row r is read and written a quarter as often.
    let q = 0;
    for (; q + 3 < r; q += 4) {
      const f0 = L[l + q], f1 = L[l + q + 1], f2 = L[l + q + 2], f3 = L[l + q + 3];
      const a0 = aOff + q * lda, a1 = a0 + lda, a2 = a1 + lda, a3 = a2 + lda;
      for (let j = 0; j < p; j++) A[ar + j] -= f0 * A[a0 + j] + f1 * A[a1 + j] + f2 * A[a2 + j] + f3 * A[a3 + j];
    }
    for (; q < r; q++) {
      const f = L[l + q];
      if (f === 0) continue;
      const aq = aOff + q * lda;
      for (let j = 0; j < p; j++) A[ar + j] -= f * A[aq + j];
    }
  }
}
