/**
 * Explicit inverses of small dense blocks from their factors, in place, for preconditioners
 * applied to many right-hand sides: one product D⁻¹·R runs at the speed of the SIMD kernel
 * where forward and back substitution over k columns run in scalar JavaScript.
 *
 * SPD: A = L·Lᵀ (cholesky.ts), A⁻¹ = L⁻ᵀ·L⁻¹ (LAPACK dpotri = dtrtri + dlauum). General:
 * P·A = L·U (lu.ts), A⁻¹ = U⁻¹·L⁻¹·P (LAPACK dgetri; Golub & Van Loan, Matrix Computations,
 * 4th ed., §3.4.9 on when an explicit inverse is acceptable: here it is only a preconditioner,
 * and its rounding error, of order cond(A)·ε, is what a triangular solve also makes).
 *
 * The triangular inverse is recursive (Elmroth, Gustavson, Jonsson & Kågström, "Recursive
 * blocked algorithms and hybrid data structures for dense matrix library software", SIAM
 * Review 46(1), 2004): for L = [L11 0; L21 L22], L⁻¹ = [X11 0; −X22·L21·X11 X22], the two
 * products through gemmStridedSimd. The products Xᵀ·X and U⁻¹·L⁻¹ sum only over t ≥ max(i, j)
 * (both factors triangular), so each 64×64 block of the result is one product over the
 * trailing depth. Scratch is per thread and reused (no allocation once grown).
 */
import { gemmStridedSimd, simdAvailable } from "./wasm-kernel.js";

/** Orders up to this are inverted by plain substitution (the recursion's leaves). */
const LEAF = 32;
/** Rows of the result per product in the triangular-times-triangular step. */
const ROWS = 64;

let S1 = new Float64Array(0), S2 = new Float64Array(0), T = new Float64Array(0), row = new Float64Array(0);

function scratch(m: number): void {
  if (S1.length < m * m) { S1 = new Float64Array(m * m); S2 = new Float64Array(m * m); T = new Float64Array(((m + 1) >> 1) * m); row = new Float64Array(m); }
}

/** Whether this thread can form the inverses (they use the SIMD kernel). */
export function blockInverseAvailable(): boolean {
  return simdAvailable();
}

/**
 * X ← X⁻¹ for the lower triangular n×n block of X at `off` (row stride ld), non-unit
 * diagonal; entries above the diagonal are not read and are left zero.
 */
export function invertLower(X: Float64Array, off: number, ld: number, n: number): void {
  // The products below read whole squares: the upper triangle must hold zeros.
  zeroUpper(X, off, ld, n);
  invertLowerZeroed(X, off, ld, n);
}

function invertLowerZeroed(X: Float64Array, off: number, ld: number, n: number): void {
  if (n <= LEAF) { invertLowerUnblocked(X, off, ld, n); return; }
  // n1 a multiple of the 4-wide tiles keeps the products' tiles whole.
  const n1 = Math.max(4, ((n >> 1) + 3) & ~3), n2 = n - n1;
  const o22 = off + n1 * ld + n1, o21 = off + n1 * ld;
  invertLowerZeroed(X, off, ld, n1);
  invertLowerZeroed(X, o22, ld, n2);
  // T = L21·X11 (n2×n1): entry (i, j) = Σ_t L21[i][t]·X11[t][j].
  if (T.length < n2 * n1) T = new Float64Array(n2 * n1);
  T.fill(0, 0, n2 * n1);
  gemmStridedSimd(T, 0, n1, X, o21, ld, 1, X, off, 1, ld, n2, n1, n1, 1);
  // X21 = −X22·T.
  for (let i = 0; i < n2; i++) X.fill(0, o21 + i * ld, o21 + i * ld + n1);
  gemmStridedSimd(X, o21, ld, X, o22, ld, 1, T, 0, 1, n1, n2, n1, n2, -1);
}

function zeroUpper(X: Float64Array, off: number, ld: number, n: number): void {
  for (let i = 0; i < n; i++) X.fill(0, off + i * ld + i + 1, off + i * ld + n);
}

/** Row by row: X[i][j] = −(Σ_{j ≤ t < i} L[i][t]·X[t][j]) / L[i][i], X[i][i] = 1/L[i][i]. */
function invertLowerUnblocked(X: Float64Array, off: number, ld: number, n: number): void {
  if (row.length < n) row = new Float64Array(n);
  const w = row;
  for (let i = 0; i < n; i++) {
    const ri = off + i * ld;
    for (let j = 0; j < i; j++) w[j] = 0;
    for (let t = 0; t < i; t++) {
      const l = X[ri + t];
      if (l === 0) continue;
      const rt = off + t * ld;
      for (let j = 0; j <= t; j++) w[j] += l * X[rt + j];
    }
    const d = 1 / X[ri + i];
    for (let j = 0; j < i; j++) X[ri + j] = -w[j] * d;
    X[ri + i] = d;
  }
}

/**
 * C ← Aᵀ·B for m×m lower triangular A and B (row-major, stride m, zero above the diagonal):
 * entry (i, j) = Σ_{t ≥ max(i, j)} A[t][i]·B[t][j], so the 64×64 block of C at (i0, j0) is
 * one product over depth t ≥ max(i0, j0). `lowerOnly`: just the blocks with j0 ≤ i0 (the
 * symmetric case; the caller mirrors).
 */
function lowerTransposedTimesLower(C: Float64Array, A: Float64Array, B: Float64Array, m: number, lowerOnly: boolean): void {
  C.fill(0, 0, m * m);
  for (let i0 = 0; i0 < m; i0 += ROWS) {
    const rows = Math.min(ROWS, m - i0);
    for (let j0 = 0; j0 < m && (!lowerOnly || j0 <= i0); j0 += ROWS) {
      const cols = Math.min(ROWS, m - j0), d0 = Math.max(i0, j0);
      // A(i, t) = A[(d0 + t)·m + i0 + i], B(j, t) = B[(d0 + t)·m + j0 + j].
      gemmStridedSimd(C, i0 * m + j0, m, A, d0 * m + i0, 1, m, B, d0 * m + j0, 1, m, rows, cols, m - d0, 1);
    }
  }
}

/**
 * D (m×m row-major, symmetric positive definite, Cholesky factor already in its lower
 * triangle as choleskyFactorSerial leaves it) ← D⁻¹, the whole symmetric matrix.
 */
export function choleskyInverseInPlace(D: Float64Array, m: number): void {
  if (m === 0) return;
  scratch(m);
  const X = S1;
  for (let i = 0; i < m; i++) {
    const r = i * m;
    for (let j = 0; j <= i; j++) X[r + j] = D[r + j];
  }
  invertLower(X, 0, m, m);
  lowerTransposedTimesLower(D, X, X, m, true);
  // The diagonal blocks also filled their upper parts; mirrored anyway, for exact symmetry.
  for (let i = 0; i < m; i++) for (let j = i + 1; j < m; j++) D[i * m + j] = D[j * m + i];
}

/**
 * D (m×m row-major, holding luFactorSerial's L\U with pivots `piv`) ← A⁻¹ = U⁻¹·L⁻¹·P.
 */
export function luInverseInPlace(D: Float64Array, piv: Int32Array, m: number): void {
  if (m === 0) return;
  scratch(m);
  // S1 = Uᵀ (lower), S2 = L with its unit diagonal; both inverted as lower triangles.
  const Ut = S1, L = S2;
  for (let i = 0; i < m; i++) {
    const r = i * m;
    for (let j = 0; j < i; j++) { L[r + j] = D[r + j]; Ut[r + j] = D[j * m + i]; }
    L[r + i] = 1; Ut[r + i] = D[r + i];
  }
  invertLower(Ut, 0, m, m);
  invertLower(L, 0, m, m);
  // U⁻¹·L⁻¹ = (U⁻ᵀ)ᵀ·L⁻¹: entry (i, j) = Σ_t U⁻ᵀ[t][i]·L⁻¹[t][j].
  lowerTransposedTimesLower(D, Ut, L, m, false);
  // ·P, P = S_{m−1}···S_0 (row c swapped with piv[c] in order): swap columns from the last step back.
  for (let c = m - 1; c >= 0; c--) {
    const p = piv[c];
    if (p === c) continue;
    for (let i = 0; i < m; i++) { const r = i * m, t = D[r + c]; D[r + c] = D[r + p]; D[r + p] = t; }
  }
}

/**
 * Right-hand sides at or above which `applyInverse` uses the SIMD kernel. Measured on single
 * 256- and 512-blocks (tests/bench/jacobi.bench.mjs blocks, load 2.4): at k = 1 the plain dot
 * products take 0.6 of the SIMD product's time (which is mostly packing D⁻¹); from k = 2 the
 * SIMD product wins (0.26 against 0.59 ms at m = 256, 10 GFLOP/s at k = 64).
 */
export const SIMD_COLUMNS = 2;

/**
 * Z ← D⁻¹·W for m×m D⁻¹ (row-major, at dOff) and m×k row-major W, Z (distinct arrays);
 * `simd` chooses the kernel (default: SIMD from SIMD_COLUMNS columns, where available).
 */
export function applyInverse(Dinv: Float64Array, dOff: number, m: number, W: Float64Array, Z: Float64Array, k: number,
  simd: boolean = k >= SIMD_COLUMNS && simdAvailable()): void {
  if (simd) {
    Z.fill(0, 0, m * k);
    // B(j, t) = W[t][j]: W read by columns.
    gemmStridedSimd(Z, 0, k, Dinv, dOff, m, 1, W, 0, 1, k, m, k, m, 1);
    return;
  }
  if (k === 1) {
    for (let a = 0; a < m; a++) {
      const r = dOff + a * m;
      let s = 0;
      for (let j = 0; j < m; j++) s += Dinv[r + j] * W[j];
      Z[a] = s;
    }
    return;
  }
  for (let a = 0; a < m; a++) {
    const r = dOff + a * m, z = a * k;
    for (let c = 0; c < k; c++) Z[z + c] = 0;
    for (let j = 0; j < m; j++) {
      const d = Dinv[r + j], w = j * k;
      for (let c = 0; c < k; c++) Z[z + c] += d * W[w + c];
    }
  }
}
