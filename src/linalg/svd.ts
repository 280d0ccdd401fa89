/**
 * Singular value decomposition of the small square core of a low-rank block: one-sided
 * Jacobi (Hestenes, J. SIAM 6, 1958; Demmel & Veselić, SIAM J. Matrix Anal. Appl. 13, 1992),
 * written here rather than taken from ml-matrix so the workers allocate nothing per block.
 */

/**
 * SVD of the r×r row-major G in place by one-sided Jacobi on its columns: afterwards column
 * j of G is σ_j·w_j and Z (r×r row-major) holds the right singular vectors as columns,
 * so G_in = G_out·Zᵀ. σ_j (unsorted) goes to `s`.
 */
export function jacobiSVD(G: Float64Array, r: number, Z: Float64Array, s: Float64Array): void {
  for (let i = 0; i < r * r; i++) Z[i] = 0;
  for (let i = 0; i < r; i++) Z[i * r + i] = 1;
  for (let sweep = 0; sweep < 60; sweep++) {
    let rotated = false;
    for (let p = 0; p < r - 1; p++) {
      for (let q = p + 1; q < r; q++) {
        let alpha = 0, beta = 0, gamma = 0;
        for (let i = 0; i < r; i++) {
          const gp = G[i * r + p], gq = G[i * r + q];
          alpha += gp * gp; beta += gq * gq; gamma += gp * gq;
        }
        if (gamma === 0 || Math.abs(gamma) <= 1e-15 * Math.sqrt(alpha * beta)) continue;
        rotated = true;
        // Rotation that zeroes the (p, q) entry of GᵀG (Golub & Van Loan, 4th ed., §8.6.3).
        const zeta = (beta - alpha) / (2 * gamma);
        const t = Math.sign(zeta || 1) / (Math.abs(zeta) + Math.sqrt(1 + zeta * zeta));
        const c = 1 / Math.sqrt(1 + t * t), sn = c * t;
        for (let i = 0; i < r; i++) {
          const gp = G[i * r + p], gq = G[i * r + q];
          G[i * r + p] = c * gp - sn * gq;
          G[i * r + q] = sn * gp + c * gq;
          const zp = Z[i * r + p], zq = Z[i * r + q];
          Z[i * r + p] = c * zp - sn * zq;
          Z[i * r + q] = sn * zp + c * zq;
        }
      }
    }
    if (!rotated) break;
  }
  for (let j = 0; j < r; j++) {
    let t = 0;
    for (let i = 0; i < r; i++) t += G[i * r + j] * G[i * r + j];
    s[j] = Math.sqrt(t);
  }
}
