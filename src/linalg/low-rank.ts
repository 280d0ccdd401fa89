/**
 * Low-rank blocks M ≈ U·Vᵀ (U m×r, V n×r) and their recompression to a tolerance.
 *
 * Layout while a block is being built (ACA): factors stored term by term, column-major:
 * term q of U at u[q·m .. q·m + m), of V at v[q·n .. q·n + n). Layout once stored (product):
 * U and V row-major (row i of U at i·r), so a product streams each factor once.
 *
 * Recompression (Bebendorf, Hierarchical Matrices, Springer 2008, §1.1.5; Grasedyck,
 * "Adaptive recompression of H-matrices for BEM", Computing 74, 2005): U = Q_U·R_U and
 * V = Q_V·R_V by QR, then the small core R_U·R_Vᵀ = W·Σ·Zᵀ by SVD, truncated where the
 * discarded singular values fall below the tolerance in the Frobenius norm. The QR is
 * classical Gram–Schmidt applied twice ("twice is enough": Giraud, Langou & Rozložník,
 * Comput. Math. Appl. 50, 2005); the SVD of the r×r core is one-sided Jacobi (Hestenes,
 * J. SIAM 6, 1958; Demmel & Veselić, SIAM J. Matrix Anal. Appl. 13, 1992), written here
 * rather than taken from ml-matrix so the workers allocate nothing per block.
 */

// Module-level scratch (each worker thread has its own copy), grown on demand.
let ru = new Float64Array(0), rv = new Float64Array(0), core = new Float64Array(0), zmat = new Float64Array(0);
let sig = new Float64Array(0), perm = new Int32Array(0);

function grow(r: number): void {
  if (ru.length >= r * r) return;
  const s = r * r;
  ru = new Float64Array(s); rv = new Float64Array(s); core = new Float64Array(s); zmat = new Float64Array(s);
  sig = new Float64Array(r); perm = new Int32Array(r);
}

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

/**
 * Recompress the rank-r factors u (m×r) and v (n×r), column-major term by term as ACA
 * leaves them, to the smallest rank whose discarded singular values have Frobenius norm
 * at most tol·‖U·Vᵀ‖_F. u and v are overwritten (Q factors). The result goes to U
 * (m×r' row-major, singular values folded in) and V (n×r' row-major); returns r'.
 * A negative vOff places V right after U (vOff = uOff + m·r').
 */
export function recompress(u: Float64Array, v: Float64Array, m: number, n: number, r: number, tol: number,
  U: Float64Array, uOff: number, V: Float64Array, vOff: number): number {
  if (r === 0) return 0;
  grow(r);
  gramSchmidtQR(u, m, r, ru);
  gramSchmidtQR(v, n, r, rv);
  // core = R_U · R_Vᵀ
  for (let i = 0; i < r; i++)
    for (let j = 0; j < r; j++) {
      let t = 0;
      for (let q = 0; q < r; q++) t += ru[i * r + q] * rv[j * r + q];
      core[i * r + j] = t;
    }
  jacobiSVD(core, r, zmat, sig);
  for (let j = 0; j < r; j++) perm[j] = j;
  // Insertion sort by decreasing σ (r is a few dozen at most).
  for (let a = 1; a < r; a++) {
    const p = perm[a];
    let b = a - 1;
    while (b >= 0 && sig[perm[b]] < sig[p]) { perm[b + 1] = perm[b]; b--; }
    perm[b + 1] = p;
  }
  let total = 0;
  for (let j = 0; j < r; j++) total += sig[j] * sig[j];
  let keep = r, tail = 0;
  const limit = tol * tol * total;
  while (keep > 0) {
    const s = sig[perm[keep - 1]];
    if (tail + s * s > limit) break;
    tail += s * s;
    keep--;
  }
  if (vOff < 0) vOff = uOff + m * keep;
  // U' = Q_U·(G columns, which are σ_j w_j), V' = Q_V·Z columns, for the kept j.
  for (let i = 0; i < m; i++) {
    const o = uOff + i * keep;
    for (let a = 0; a < keep; a++) {
      const j = perm[a];
      let t = 0;
      for (let q = 0; q < r; q++) t += u[q * m + i] * core[q * r + j];
      U[o + a] = t;
    }
  }
  for (let i = 0; i < n; i++) {
    const o = vOff + i * keep;
    for (let a = 0; a < keep; a++) {
      const j = perm[a];
      let t = 0;
      for (let q = 0; q < r; q++) t += v[q * n + i] * zmat[q * r + j];
      V[o + a] = t;
    }
  }
  return keep;
}

/**
 * Y[rows] += U·(Vᵀ·X[cols]) for a stored low-rank block (U m×r and V n×r row-major at uOff,
 * vOff), X and Y n×k row-major over the whole index range, the block's rows starting at
 * row `r0` of Y and its columns at row `c0` of X. T is scratch of at least r·k.
 */
export function lowRankMultiplyAdd(data: Float64Array, uOff: number, vOff: number, m: number, n: number, r: number,
  X: Float64Array, c0: number, Y: Float64Array, r0: number, k: number, T: Float64Array): void {
  const rk = r * k;
  for (let i = 0; i < rk; i++) T[i] = 0;
  if (k === 1) {
    for (let b = 0; b < n; b++) {
      const x = X[c0 + b], vo = vOff + b * r;
      for (let q = 0; q < r; q++) T[q] += data[vo + q] * x;
    }
    for (let a = 0; a < m; a++) {
      const uo = uOff + a * r;
      let t = 0;
      for (let q = 0; q < r; q++) t += data[uo + q] * T[q];
      Y[r0 + a] += t;
    }
    return;
  }
  for (let b = 0; b < n; b++) {
    const xo = (c0 + b) * k, vo = vOff + b * r;
    for (let q = 0; q < r; q++) {
      const vq = data[vo + q], to = q * k;
      for (let c = 0; c < k; c++) T[to + c] += vq * X[xo + c];
    }
  }
  for (let a = 0; a < m; a++) {
    const yo = (r0 + a) * k, uo = uOff + a * r;
    for (let q = 0; q < r; q++) {
      const uq = data[uo + q], to = q * k;
      for (let c = 0; c < k; c++) Y[yo + c] += uq * T[to + c];
    }
  }
}

/**
 * Y[rows] += D·X[cols] for a dense m×n row-major block at `off`, or Y[cols] += Dᵀ·X[rows]
 * when `transposed` (then r0 indexes the block's rows in X and c0 its columns in Y).
 */
export function denseBlockMultiplyAdd(data: Float64Array, off: number, m: number, n: number, transposed: boolean,
  X: Float64Array, Y: Float64Array, r0: number, c0: number, k: number): void {
  if (!transposed) {
    if (k === 1) {
      for (let a = 0; a < m; a++) {
        const o = off + a * n;
        let t = 0;
        for (let b = 0; b < n; b++) t += data[o + b] * X[c0 + b];
        Y[r0 + a] += t;
      }
      return;
    }
    for (let a = 0; a < m; a++) {
      const o = off + a * n, yo = (r0 + a) * k;
      for (let b = 0; b < n; b++) {
        const d = data[o + b], xo = (c0 + b) * k;
        for (let c = 0; c < k; c++) Y[yo + c] += d * X[xo + c];
      }
    }
    return;
  }
  if (k === 1) {
    for (let a = 0; a < m; a++) {
      const o = off + a * n, x = X[r0 + a];
      for (let b = 0; b < n; b++) Y[c0 + b] += data[o + b] * x;
    }
    return;
  }
  for (let a = 0; a < m; a++) {
    const o = off + a * n, xo = (r0 + a) * k;
    for (let b = 0; b < n; b++) {
      const d = data[o + b], yo = (c0 + b) * k;
      for (let c = 0; c < k; c++) Y[yo + c] += d * X[xo + c];
    }
  }
}
