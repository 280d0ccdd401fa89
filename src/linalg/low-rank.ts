/**
 * Low-rank blocks M ≈ U·Vᵀ (U m×r, V n×r) and their recompression to a tolerance.
 *
 * Layout, both while a block is built (ACA) and once stored: factors term by term
 * (column-major), term q of U at u[q·m .. q·m + m), of V at v[q·n .. q·n + n). The product
 * then runs dot products and updates as long as the block, not as short as the rank.
 *
 * Recompression (Bebendorf, Hierarchical Matrices, Springer 2008, §1.1.5; Grasedyck,
 * "Adaptive recompression of H-matrices for BEM", Computing 74, 2005): U = Q_U·R_U and
 * V = Q_V·R_V by QR, then the small core R_U·R_Vᵀ = W·Σ·Zᵀ by SVD, truncated where the
 * discarded singular values fall below the tolerance in the Frobenius norm. The QR is
 * classical Gram–Schmidt applied twice ("twice is enough": Giraud, Langou & Rozložník,
 * Comput. Math. Appl. 50, 2005); the SVD of the r×r core is one-sided Jacobi (Hestenes,
 * J. SIAM 6, 1958; Demmel & Veselić, SIAM J. Matrix Anal. Appl. 13, 1992), written here
 * rather than taken from ml-matrix so the workers allocate nothing per block.
 *
 * When the tolerance allows, `recompressFromGram` skips the QR: ACA has already computed
 * UᵀU and VᵀV for its stopping rule, and with the Cholesky factor of each diagonally scaled
 * Gram matrix (D⁻¹GD⁻¹ = RᵀR, D = diag(√G_ii); "Cholesky QR", Stathopoulos & Wu, SIAM J.
 * Sci. Comput. 23, 2002) U = Q_U·R_U·D_U with Q_U = U·D_U⁻¹R_U⁻¹, so only r×r work and the
 * final m·r·r' and n·r·r' products remain. The route squares the condition number of the
 * scaled factors: directions with a pivot below GRAM_DROP drop out (an error near
 * √GRAM_DROP relative) and Q loses orthogonality like ε·κ², which only blurs the truncation
 * rank; below GRAM_TOLERANCE_FLOOR the QR route is used.
 */

import { gemmStridedSimd } from "./wasm-kernel.js";

// Module-level scratch (each worker thread has its own copy), grown on demand.
let ru = new Float64Array(0), rv = new Float64Array(0), core = new Float64Array(0), zmat = new Float64Array(0);
let sig = new Float64Array(0), perm = new Int32Array(0);
let eu = new Float64Array(0), ev = new Float64Array(0), mu = new Float64Array(0), mv = new Float64Array(0);
let lam = new Float64Array(0), dsc = new Float64Array(0), pv = new Int32Array(0);

function grow(r: number): void {
  if (ru.length >= r * r) return;
  const s = r * r;
  ru = new Float64Array(s); rv = new Float64Array(s); core = new Float64Array(s); zmat = new Float64Array(s);
  eu = new Float64Array(s); ev = new Float64Array(s); mu = new Float64Array(s); mv = new Float64Array(s);
  sig = new Float64Array(r); perm = new Int32Array(r); lam = new Float64Array(r); dsc = new Float64Array(r); pv = new Int32Array(r);
}

/** Smallest recompression tolerance for which the Gram route is accurate enough (see above). */
export const GRAM_TOLERANCE_FLOOR = 1e-7;
/** A remaining pivot of the unit-diagonal Gram matrix below GRAM_DROP is taken as dependence. */
const GRAM_DROP = 1e-14;

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
 * From the packed Gram matrix G = FᵀF of an r-column factor F (lower triangle by rows),
 * S (r×r row-major, F ≈ Q·S with Q orthonormal or zero columns) and M (r×r row-major,
 * Q = F·M): Cholesky with diagonal pivoting of D⁻¹GD⁻¹ (Higham, Accuracy and Stability of
 * Numerical Algorithms, 2nd ed., §10.3), stopped when the largest remaining pivot falls
 * below GRAM_DROP, so dependent columns drop out. A is r×r scratch.
 */
function gramFactor(G: Float64Array, r: number, S: Float64Array, M: Float64Array, A: Float64Array): void {
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
  for (let j = 0; j < r; j++) { lam[j] = A[j * r + j]; perm[j] = 0; }
  let k = 0;
  for (; k < r; k++) {
    let p = -1, best = GRAM_DROP;
    for (let j = 0; j < r; j++) if (perm[j] === 0 && lam[j] > best) { best = lam[j]; p = j; }
    if (p < 0) break;
    perm[p] = 1; pv[k] = p;
    const rpp = Math.sqrt(lam[p]);
    S[k * r + p] = rpp;
    for (let j = 0; j < r; j++) {
      if (perm[j] !== 0) continue;
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

/**
 * `recompress` for factors whose Gram matrices ACA recorded (aca.ts gramU, gramV): the same
 * truncation rule, without touching u and v until the final products. U (m×r') then V (n×r'),
 * column-major, go to out at `off`; returns r'.
 */
export function recompressFromGram(u: Float64Array, v: Float64Array, m: number, n: number, r: number,
  GU: Float64Array, GV: Float64Array, tol: number, out: Float64Array, off: number): number {
  if (r === 0) return 0;
  grow(r);
  // ru, rv hold S_U, S_V; mu, mv hold M_U, M_V; core and zmat are scratch until the SVD.
  gramFactor(GU, r, ru, mu, core);
  gramFactor(GV, r, rv, mv, core);
  for (let i = 0; i < r; i++)
    for (let j = 0; j < r; j++) {
      let t = 0;
      for (let q = 0; q < r; q++) t += ru[i * r + q] * rv[j * r + q];
      core[i * r + j] = t;
    }
  jacobiSVD(core, r, zmat, sig);
  const keep = truncationRank(r, tol);
  // U' = U·M_U·(σ_j w_j) and V' = V·M_V·z_j for the kept j: coefficients first (r×r'), in eu / ev.
  for (let q = 0; q < r; q++)
    for (let a = 0; a < keep; a++) {
      const j = perm[a];
      let tu = 0, tv = 0;
      for (let p = 0; p < r; p++) { tu += mu[q * r + p] * core[p * r + j]; tv += mv[q * r + p] * zmat[p * r + j]; }
      eu[q * keep + a] = tu; ev[q * keep + a] = tv;
    }
  combineTerms(u, m, r, eu, keep, out, off);
  combineTerms(v, n, r, ev, keep, out, off + m * keep);
  return keep;
}

/** out[o + a·m + i] = Σ_q f[q·m + i]·C[q·keep + a]: r terms of length m recombined into `keep`. */
function combineTerms(f: Float64Array, m: number, r: number, C: Float64Array, keep: number, out: Float64Array, o: number): void {
  for (let a = 0; a < keep; a++) {
    const oa = o + a * m;
    for (let i = 0; i < m; i++) out[oa + i] = 0;
    for (let q = 0; q < r; q++) {
      const c = C[q * keep + a];
      if (c === 0) continue;
      const fq = q * m;
      for (let i = 0; i < m; i++) out[oa + i] += c * f[fq + i];
    }
  }
}

/** Sort σ (in sig) into perm by decreasing value; the smallest count whose discarded tail is within tol (relative, Frobenius). */
function truncationRank(r: number, tol: number): number {
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
  return keep;
}

/**
 * Recompress the rank-r factors u (m×r) and v (n×r), column-major term by term as ACA
 * leaves them, to the smallest rank whose discarded singular values have Frobenius norm
 * at most tol·‖U·Vᵀ‖_F. u and v are overwritten (Q factors). The result goes to U
 * (m×r' column-major, singular values folded in) and V (n×r' column-major); returns r'.
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
  const keep = truncationRank(r, tol);
  if (vOff < 0) vOff = uOff + m * keep;
  // U' = Q_U·(G columns, which are σ_j w_j), V' = Q_V·Z columns, for the kept j.
  for (let q = 0; q < r; q++)
    for (let a = 0; a < keep; a++) { eu[q * keep + a] = core[q * r + perm[a]]; ev[q * keep + a] = zmat[q * r + perm[a]]; }
  combineTerms(u, m, r, eu, keep, U, uOff);
  combineTerms(v, n, r, ev, keep, V, vOff);
  return keep;
}

/**
 * Y[rows] += U·(Vᵀ·X[cols]) for a stored low-rank block (U m×r and V n×r column-major at uOff,
 * vOff), X and Y n×k row-major over the whole index range, the block's rows starting at
 * row `r0` of Y and its columns at row `c0` of X. T is scratch of at least r·k.
 */
export function lowRankMultiplyAdd(data: Float64Array, uOff: number, vOff: number, m: number, n: number, r: number,
  X: Float64Array, c0: number, Y: Float64Array, r0: number, k: number, T: Float64Array): void {
  if (k === 1) {
    for (let q = 0; q < r; q++) T[q] = dot(data, vOff + q * n, X, c0, n);
    let q = 0;
    for (; q + 1 < r; q += 2) axpy2(data, uOff + q * m, m, T[q], T[q + 1], Y, r0);
    if (q < r) axpy2(data, uOff + q * m, 0, T[q], 0, Y, r0, m);
    return;
  }
  const rk = r * k;
  for (let i = 0; i < rk; i++) T[i] = 0;
  for (let q = 0; q < r; q++) {
    const vo = vOff + q * n, to = q * k;
    let b = 0;
    for (; b + 1 < n; b += 2) {
      const v0 = data[vo + b], v1 = data[vo + b + 1], xo = (c0 + b) * k, x1 = xo + k;
      for (let c = 0; c < k; c++) T[to + c] += v0 * X[xo + c] + v1 * X[x1 + c];
    }
    if (b < n) {
      const v0 = data[vo + b], xo = (c0 + b) * k;
      for (let c = 0; c < k; c++) T[to + c] += v0 * X[xo + c];
    }
  }
  let q = 0;
  for (; q + 1 < r; q += 2) {
    const uo = uOff + q * m, u1 = uo + m, to = q * k, t1 = to + k;
    for (let a = 0; a < m; a++) {
      const p0 = data[uo + a], p1 = data[u1 + a], yo = (r0 + a) * k;
      for (let c = 0; c < k; c++) Y[yo + c] += p0 * T[to + c] + p1 * T[t1 + c];
    }
  }
  if (q < r) {
    const uo = uOff + q * m, to = q * k;
    for (let a = 0; a < m; a++) {
      const p0 = data[uo + a], yo = (r0 + a) * k;
      for (let c = 0; c < k; c++) Y[yo + c] += p0 * T[to + c];
    }
  }
}

/**
 * Σ_b a[ao + b]·x[xo + b] over b < len, in four independent sums: the loop is bound by the
 * add latency otherwise.
 */
export function dot(a: Float64Array, ao: number, x: Float64Array, xo: number, len: number): number {
  let t0 = 0, t1 = 0, t2 = 0, t3 = 0, b = 0;
  const l4 = len & ~3;
  for (; b < l4; b += 4) {
    t0 += a[ao + b] * x[xo + b]; t1 += a[ao + b + 1] * x[xo + b + 1];
    t2 += a[ao + b + 2] * x[xo + b + 2]; t3 += a[ao + b + 3] * x[xo + b + 3];
  }
  for (; b < len; b++) t0 += a[ao + b] * x[xo + b];
  return (t0 + t1) + (t2 + t3);
}

/**
 * y[yo + i] += s·a[ao + i] + t·a[ao + gap + i] for i < len (len defaults to gap): two terms
 * per pass, so y is loaded and stored half as often.
 */
function axpy2(a: Float64Array, ao: number, gap: number, s: number, t: number, y: Float64Array, yo: number, len = gap): void {
  const a1 = ao + gap;
  for (let i = 0; i < len; i++) y[yo + i] += s * a[ao + i] + t * a[a1 + i];
}

/**
 * Y[rows] += D·X[cols] for a dense m×n row-major block at `off`, or Y[cols] += Dᵀ·X[rows]
 * when `transposed` (then r0 indexes the block's rows in X and c0 its columns in Y).
 */
export function denseBlockMultiplyAdd(data: Float64Array, off: number, m: number, n: number, transposed: boolean,
  X: Float64Array, Y: Float64Array, r0: number, c0: number, k: number): void {
  if (!transposed) {
    if (k === 1) {
      for (let a = 0; a < m; a++) Y[r0 + a] += dot(data, off + a * n, X, c0, n);
      return;
    }
    // Two rows of X per pass over a row of Y: half the loads and stores of Y (measured 1.5×
    // at k = 64 on 32×32 blocks).
    for (let a = 0; a < m; a++) {
      const o = off + a * n, yo = (r0 + a) * k;
      let b = 0;
      for (; b + 1 < n; b += 2) {
        const d = data[o + b], e = data[o + b + 1], xo = (c0 + b) * k, x1 = xo + k;
        for (let c = 0; c < k; c++) Y[yo + c] += d * X[xo + c] + e * X[x1 + c];
      }
      if (b < n) {
        const d = data[o + b], xo = (c0 + b) * k;
        for (let c = 0; c < k; c++) Y[yo + c] += d * X[xo + c];
      }
    }
    return;
  }
  if (k === 1) {
    let a = 0;
    for (; a + 1 < m; a += 2) axpy2(data, off + a * n, n, X[r0 + a], X[r0 + a + 1], Y, c0);
    if (a < m) axpy2(data, off + a * n, 0, X[r0 + a], 0, Y, c0, n);
    return;
  }
  let a = 0;
  for (; a + 1 < m; a += 2) {
    const o = off + a * n, o1 = o + n, xo = (r0 + a) * k, x1 = xo + k;
    for (let b = 0; b < n; b++) {
      const d = data[o + b], e = data[o1 + b], yo = (c0 + b) * k;
      for (let c = 0; c < k; c++) Y[yo + c] += d * X[xo + c] + e * X[x1 + c];
    }
  }
  if (a < m) {
    const o = off + a * n, xo = (r0 + a) * k;
    for (let b = 0; b < n; b++) {
      const d = data[o + b], yo = (c0 + b) * k;
      for (let c = 0; c < k; c++) Y[yo + c] += d * X[xo + c];
    }
  }
}

/**
 * Fewest right-hand sides for which the block products go through the WebAssembly SIMD
 * kernel (gemmStridedSimd): below it the packing copies cost more than the faster tiles.
 */
export const SIMD_MIN_RHS = 8;
/** Smallest rank whose two factor products go through the SIMD kernel (see the bench). */
export const SIMD_MIN_RANK = 4;

/**
 * denseBlockMultiplyAdd through the SIMD kernel, k ≥ 1 (same arguments, same result to
 * rounding): Y[r0..] += D·X[c0..], or Y[c0..] += Dᵀ·X[r0..] when transposed; X is read as
 * Xᵀ through strides, Dᵀ by columns of D.
 */
export function denseBlockMultiplyAddSimd(data: Float64Array, off: number, m: number, n: number, transposed: boolean,
  X: Float64Array, Y: Float64Array, r0: number, c0: number, k: number): void {
  if (!transposed) gemmStridedSimd(Y, r0 * k, k, data, off, n, 1, X, c0 * k, 1, k, m, k, n, 1);
  else gemmStridedSimd(Y, c0 * k, k, data, off, 1, n, X, r0 * k, 1, k, n, k, m, 1);
}

/**
 * lowRankMultiplyAdd through the SIMD kernel (same arguments): T = Vᵀ·X[c0..] (r×k), then
 * Y[r0..] += U·T, both as strided products. T is scratch of at least r·k.
 */
export function lowRankMultiplyAddSimd(data: Float64Array, uOff: number, vOff: number, m: number, n: number, r: number,
  X: Float64Array, c0: number, Y: Float64Array, r0: number, k: number, T: Float64Array): void {
  const rk = r * k;
  for (let i = 0; i < rk; i++) T[i] = 0;
  gemmStridedSimd(T, 0, k, data, vOff, n, 1, X, c0 * k, 1, k, r, k, n, 1);
  gemmStridedSimd(Y, r0 * k, k, data, uOff, 1, m, T, 0, 1, k, m, k, r, 1);
}
