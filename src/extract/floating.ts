/**
 * Floating conductors: bodies carrying zero net charge at a potential the field decides (a
 * shield left unconnected, a metal part in a plastic housing).
 *
 * Split the Maxwell matrix into driven (d) and floating (f) conductors. Q_f = 0 gives
 *   V_f = −C_ff⁻¹ C_fd V_d,
 * and the charges on the driven conductors are then Q_d = C_red V_d with
 *   C_red = C_dd − C_df C_ff⁻¹ C_fd,
 * the Schur complement of C_ff (elimination of the floating unknowns; e.g. Golub & Van Loan,
 * Matrix Computations, 4th ed., §3.2.10 on block elimination — the capacitance use is common
 * practice in circuit reduction). C_ff is a principal submatrix of a symmetric positive
 * definite matrix, so it is itself SPD and a Cholesky factorisation solves it; C_red is again
 * symmetric positive definite with the Maxwell sign pattern.
 */

export interface FloatingReduction {
  /** Conductor indices of the driven conductors, in order. */
  driven: Uint32Array;
  /** Conductor indices of the floating conductors, in order. */
  floating: Uint32Array;
  /** C_red, row-major kd×kd over `driven`; farads. */
  reducedMaxwell: Float64Array;
  /** −C_ff⁻¹ C_fd, row-major kf×kd: volts on each floating conductor per volt on each driven one. */
  transfer: Float64Array;
}

/**
 * Eliminate the floating conductors of a k×k Maxwell matrix (row-major, farads).
 * Throws a RangeError when every conductor floats or C_ff is not positive definite.
 */
export function eliminateFloating(maxwell: Float64Array, k: number, isFloating: ArrayLike<boolean>): FloatingReduction {
  if (isFloating.length !== k) throw new RangeError(`${isFloating.length} floating flags for ${k} conductors`);
  const d: number[] = [], f: number[] = [];
  for (let i = 0; i < k; i++) (isFloating[i] ? f : d).push(i);
  if (d.length === 0) throw new RangeError("every conductor is floating: at least one must be held at a potential");
  const kd = d.length, kf = f.length;
  const Cff = new Float64Array(kf * kf), Cfd = new Float64Array(kf * kd);
  for (let a = 0; a < kf; a++) {
    for (let b = 0; b < kf; b++) Cff[a * kf + b] = maxwell[f[a] * k + f[b]];
    for (let b = 0; b < kd; b++) Cfd[a * kd + b] = maxwell[f[a] * k + d[b]];
  }
  // X = C_ff⁻¹ C_fd, by Cholesky (C_ff = L Lᵀ).
  const L = choleskySmall(Cff, kf);
  const X = Cfd.slice();
  for (let c = 0; c < kd; c++) {
    for (let a = 0; a < kf; a++) {
      let s = X[a * kd + c];
      for (let m = 0; m < a; m++) s -= L[a * kf + m] * X[m * kd + c];
      X[a * kd + c] = s / L[a * kf + a];
    }
    for (let a = kf - 1; a >= 0; a--) {
      let s = X[a * kd + c];
      for (let m = a + 1; m < kf; m++) s -= L[m * kf + a] * X[m * kd + c];
      X[a * kd + c] = s / L[a * kf + a];
    }
  }
  const reduced = new Float64Array(kd * kd);
  for (let a = 0; a < kd; a++) {
    for (let b = 0; b < kd; b++) {
      let s = maxwell[d[a] * k + d[b]];
      for (let m = 0; m < kf; m++) s -= maxwell[d[a] * k + f[m]] * X[m * kd + b];
      reduced[a * kd + b] = s;
    }
  }
  // Rounding leaves C_red a hair off symmetric; it is symmetric in exact arithmetic.
  for (let a = 0; a < kd; a++) for (let b = a + 1; b < kd; b++) {
    const m = 0.5 * (reduced[a * kd + b] + reduced[b * kd + a]);
    reduced[a * kd + b] = m; reduced[b * kd + a] = m;
  }
  const transfer = new Float64Array(kf * kd);
  for (let i = 0; i < kf * kd; i++) transfer[i] = -X[i];
  return { driven: Uint32Array.from(d), floating: Uint32Array.from(f), reducedMaxwell: reduced, transfer };
}

/**
 * The potentials of all k conductors: the driven ones as given in `potentials` (volts, one
 * per conductor; the entries of floating conductors are ignored), the floating ones solved.
 */
export function withFloatingPotentials(red: FloatingReduction, k: number, potentials: ArrayLike<number>): Float64Array {
  const v = new Float64Array(k);
  const kd = red.driven.length;
  for (let a = 0; a < kd; a++) v[red.driven[a]] = potentials[red.driven[a]];
  for (let m = 0; m < red.floating.length; m++) {
    let s = 0;
    for (let b = 0; b < kd; b++) s += red.transfer[m * kd + b] * potentials[red.driven[b]];
    v[red.floating[m]] = s;
  }
  return v;
}

/** Lower Cholesky factor of a small SPD matrix (row-major n×n). */
function choleskySmall(A: Float64Array, n: number): Float64Array {
  const L = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    let s = A[j * n + j];
    for (let m = 0; m < j; m++) s -= L[j * n + m] * L[j * n + m];
    if (!(s > 0)) throw new RangeError("the Maxwell matrix block of the floating conductors is not positive definite: check their meshes");
    const ljj = Math.sqrt(s);
    L[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let t = A[i * n + j];
      for (let m = 0; m < j; m++) t -= L[i * n + m] * L[j * n + m];
      L[i * n + j] = t / ljj;
    }
  }
  return L;
}
