/**
 * Recompression of a low-rank block U·Vᵀ (low-rank-block.ts layout, term by term) to the
 * smallest rank within a tolerance (Bebendorf, Hierarchical Matrices, Springer 2008, §1.1.5;
 * Grasedyck, "Adaptive recompression of H-matrices for BEM", Computing 74, 2005): U = Q_U·R_U
 * and V = Q_V·R_V by QR (qr.ts), then the small core R_U·R_Vᵀ = W·Σ·Zᵀ by SVD (svd.ts),
 * truncated where the discarded singular values fall below the tolerance in the Frobenius norm.
 *
 * When the tolerance allows, `recompressFromGram` skips the QR of the factors: ACA has already
 * computed UᵀU and VᵀV for its stopping rule, and gramQR (qr.ts) turns each into R and R⁻¹,
 * so only r×r work and the final m·r·r' and n·r·r' products remain. That route squares the
 * condition number of the scaled factors, which only blurs the truncation rank; below
 * GRAM_TOLERANCE_FLOOR the QR route is used.
 */
import { gramQR, gramSchmidtQR } from "./qr.js";
import { jacobiSVD } from "./svd.js";

// Module-level scratch (each worker thread has its own copy), grown on demand.
let ru = new Float64Array(0), rv = new Float64Array(0), core = new Float64Array(0), zmat = new Float64Array(0);
let sig = new Float64Array(0), perm = new Int32Array(0);
let eu = new Float64Array(0), ev = new Float64Array(0), mu = new Float64Array(0), mv = new Float64Array(0);

function grow(r: number): void {
  if (ru.length >= r * r) return;
  const s = r * r;
  ru = new Float64Array(s); rv = new Float64Array(s); core = new Float64Array(s); zmat = new Float64Array(s);
  eu = new Float64Array(s); ev = new Float64Array(s); mu = new Float64Array(s); mv = new Float64Array(s);
  sig = new Float64Array(r); perm = new Int32Array(r);
}

/** Smallest recompression tolerance for which the Gram route is accurate enough (see above). */
export const GRAM_TOLERANCE_FLOOR = 1e-7;

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
  gramQR(GU, r, ru, mu, core);
  gramQR(GV, r, rv, mv, core);
  const keep = truncatedCoreSVD(r, tol);
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

/**
 * SVD of the core R_U·R_Vᵀ (from ru, rv: core becomes W·Σ, zmat Z, sig σ) and the rank kept
 * at tol; perm lists the singular values by decreasing σ.
 */
function truncatedCoreSVD(r: number, tol: number): number {
  for (let i = 0; i < r; i++)
    for (let j = 0; j < r; j++) {
      let t = 0;
      for (let q = 0; q < r; q++) t += ru[i * r + q] * rv[j * r + q];
      core[i * r + j] = t;
    }
  jacobiSVD(core, r, zmat, sig);
  return truncationRank(r, tol);
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
  const keep = truncatedCoreSVD(r, tol);
  if (vOff < 0) vOff = uOff + m * keep;
  // U' = Q_U·(G columns, which are σ_j w_j), V' = Q_V·Z columns, for the kept j.
  for (let q = 0; q < r; q++)
    for (let a = 0; a < keep; a++) { eu[q * keep + a] = core[q * r + perm[a]]; ev[q * keep + a] = zmat[q * r + perm[a]]; }
  combineTerms(u, m, r, eu, keep, U, uOff);
  combineTerms(v, n, r, ev, keep, V, vOff);
  return keep;
}
