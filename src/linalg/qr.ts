/**
 * Thin QR factorisations of tall factors with few columns (the terms of a low-rank block).
 *
 * gramSchmidtQR: classical Gram–Schmidt applied twice ("twice is enough": Giraud, Langou &
 * Rozložník, Comput. Math. Appl. 50, 2005).
 *
 * gramQR: the R factor (and R⁻¹) from the Gram matrix alone, when it is already known (ACA
 * computes UᵀU for its stopping rule): with the Cholesky factor of the diagonally scaled Gram
 * matrix, D⁻¹GD⁻¹ = RᵀR, D = diag(√G_ii), F = Q·R·D with Q = F·D⁻¹R⁻¹ ("Cholesky QR",
 * Stathopoulos & Wu, SIAM J. Sci. Comput. 23, 2002). It squares the condition number of the
 * scaled factor: directions with a pivot below GRAM_DROP drop out (an error near √GRAM_DROP
 * relative) and Q loses orthogonality like ε·κ².
 */

// Module-level scratch (each worker thread has its own copy), grown on demand.
let lam = new Float64Array(0), dsc = new Float64Array(0), taken = new Int32Array(0), pv = new Int32Array(0);

/** A remaining pivot of the unit-diagonal Gram matrix below GRAM_DROP is taken as dependence. */
export const GRAM_DROP = 1e-14;

/**
 * Thin QR of the m×r column-major `a` in place: `a` becomes Q (orthonormal columns; a
 * column that is dependent on the earlier ones becomes zero) and R (r×r, row-major, upper
 * triangular) is written to `R`.
 */
export function gramSchmidtQR(a: Float64Array, m: number, r: number, R: Float64Array): void {
  for (let i = 0; i < r * r; i++) R[i] = 0;
  for (let q = 0; q < r; q++) {
    const cq = q * m;
    let norm0 = 0;
    for (let i = 0; i < m; i++) norm0 += a[cq + i] * a[cq + i];
    norm0 = Math.sqrt(norm0);
    for (let pass = 0; pass < 2; pass++) {
      for (let p = 0; p < q; p++) {
        const cp = p * m;
        let d = 0;
        for (let i = 0; i < m; i++) d += a[cp + i] * a[cq + i];
        R[p * r + q] += d;
        for (let i = 0; i < m; i++) a[cq + i] -= d * a[cp + i];
      }
    }
    let norm = 0;
    for (let i = 0; i < m; i++) norm += a[cq + i] * a[cq + i];
    norm = Math.sqrt(norm);
    // Numerically dependent column: drop it (its R row stays zero, so the product is unchanged).
    if (!(norm > 1e-14 * norm0) || norm === 0) {
      for (let i = 0; i < m; i++) a[cq + i] = 0;
      continue;
    }
    R[q * r + q] = norm;
    const inv = 1 / norm;
    for (let i = 0; i < m; i++) a[cq + i] *= inv;
  }
}

/**
 * From the packed Gram matrix G = FᵀF of an r-column factor F (lower triangle by rows),
 * S (r×r row-major, F ≈ Q·S with Q orthonormal or zero columns) and M (r×r row-major,
 * Q = F·M): Cholesky with diagonal pivoting of D⁻¹GD⁻¹ (Higham, Accuracy and Stability of
 * Numerical Algorithms, 2nd ed., §10.3), stopped when the largest remaining pivot falls
 * below GRAM_DROP, so dependent columns drop out. A is r×r scratch.
 */
export function gramQR(G: Float64Array, r: number, S: Float64Array, M: Float64Array, A: Float64Array): void {
  if (dsc.length < r) { dsc = new Float64Array(r); lam = new Float64Array(r); taken = new Int32Array(r); pv = new Int32Array(r); }
  for (let i = 0; i < r; i++) { const g = G[(i * (i + 1)) / 2 + i]; dsc[i] = g > 0 ? Math.sqrt(g) : 0; }
  for (let i = 0; i < r; i++) {
    const gi = (i * (i + 1)) / 2;
    for (let j = 0; j <= i; j++) {
      const d = dsc[i] * dsc[j], x = d > 0 ? G[gi + j] / d : 0;
      A[i * r + j] = x; A[j * r + i] = x;
    }
  }
  for (let i = 0; i < r * r; i++) { S[i] = 0; M[i] = 0; }
  // pv[a]: column chosen at step a; lam[j]: remaining diagonal; S row a = row a of R (columns in original order).
  for (let j = 0; j < r; j++) { lam[j] = A[j * r + j]; taken[j] = 0; }
  let k = 0;
  for (; k < r; k++) {
    let p = -1, best = GRAM_DROP;
    for (let j = 0; j < r; j++) if (taken[j] === 0 && lam[j] > best) { best = lam[j]; p = j; }
    if (p < 0) break;
    taken[p] = 1; pv[k] = p;
    const rpp = Math.sqrt(lam[p]);
    S[k * r + p] = rpp;
    for (let j = 0; j < r; j++) {
      if (taken[j] !== 0) continue;
      let t = A[p * r + j];
      for (let a = 0; a < k; a++) t -= S[a * r + p] * S[a * r + j];
      const x = t / rpp;
      S[k * r + j] = x;
      lam[j] -= x * x;
    }
  }
  // M = D⁻¹·Π·R_k⁻¹, R_k the k×k upper triangle of R in pivot order: back substitution by columns.
  for (let a = 0; a < k; a++) {
    // Column a of R_k⁻¹: solve R_k·y = e_a.
    for (let b = a; b >= 0; b--) {
      let t = b === a ? 1 : 0;
      for (let c = b + 1; c <= a; c++) t -= S[b * r + pv[c]] * M[pv[c] * r + a];
      M[pv[b] * r + a] = t / S[b * r + pv[b]];
    }
  }
  for (let b = 0; b < k; b++) { const j = pv[b]; for (let a = 0; a < k; a++) M[j * r + a] /= dsc[j]; }
  for (let a = 0; a < k; a++) for (let j = 0; j < r; j++) S[a * r + j] *= dsc[j];
}
