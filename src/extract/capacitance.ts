/**
 * From solved panel charges to capacitance matrices.
 *
 * Maxwell matrix C: C_ij is the charge on conductor i with conductor j at 1 V and all
 * others at 0 V. The computed matrix is symmetrised ((C + Cᵀ)/2) and its measured
 * asymmetry reported, since a discretised operator is symmetric only to solver tolerance
 * (Galerkin) or not at all (collocation).
 * Mutual (two-terminal) matrix: C^m_ij = −C_ij for i ≠ j, C^m_ii = Σ_j C_ij, the capacitance
 * from i to the reference (infinity, or a ground plane when there is one).
 */

export interface CapacitanceMatrices {
  /** Maxwell matrix, symmetrised, row-major k×k; farads. */
  maxwell: Float64Array;
  /** Two-terminal matrix, row-major k×k; farads. */
  mutual: Float64Array;
  /** max |C_ij − C_ji| / max |C_ij| of the unsymmetrised matrix. */
  asymmetry: number;
  k: number;
  warnings: string[];
}

/**
 * Sum panel charges per conductor.
 * `panelCharges` is n×k row-major (panel p, excitation j); charges in coulombs.
 * Returns the k×k matrix Q with Q[i*k + j] = Σ_{p on i} panelCharges[p*k + j], plus
 * `correction[i*k + j]` when given (variationalCorrection, in the units of panelCharges).
 */
export function conductorCharges(panelCharges: Float64Array, conductorOf: Uint32Array, k: number, correction?: Float64Array): Float64Array {
  const n = conductorOf.length;
  const q = new Float64Array(k * k);
  for (let p = 0; p < n; p++) {
    const i = conductorOf[p];
    for (let j = 0; j < k; j++) q[i * k + j] += panelCharges[p * k + j];
  }
  if (correction) for (let a = 0; a < k * k; a++) q[a] += correction[a];
  return q;
}

/**
 * Variational correction of the conductor charges from an approximate Galerkin solution.
 * With A symmetric, b_j the right-hand side of conductor j (1 on its panels), x_j ≈ A⁻¹b_j and
 * the true residual r_j = b_j − A·x_j, the estimate
 *   C_ij ≈ b_iᵀx_j + x_iᵀr_j = b_iᵀx_j + x_iᵀb_j − x_iᵀA·x_j
 * errs by exactly −e_iᵀA·e_j (e = A⁻¹b − x; two lines of algebra, checked to rounding in
 * tests/extract/variational.test.ts): quadratic in the solution error where b_iᵀx_j alone is
 * linear. It is the stationary (variational) form of the capacitance functional, 2⟨x, b⟩ −
 * ⟨x, A·x⟩, whose maximiser over the discrete space is the Galerkin solution (from memory:
 * R. F. Harrington, Field Computation by Moment Methods, 1968, on variational expressions).
 * The diagonal can only fall: C_ii − e_iᵀA·e_i ≤ C_ii for A positive definite.
 * Returns D = (XᵀR + RᵀX)/2, k×k row-major, to add to conductorCharges(X): symmetric, so the
 * measured asymmetry of the raw matrix still reports the solver's.
 * X and R are n×k row-major.
 */
export function variationalCorrection(X: Float64Array, R: Float64Array, n: number, k: number): Float64Array {
  const d = new Float64Array(k * k);
  for (let p = 0; p < n; p++) {
    const o = p * k;
    for (let i = 0; i < k; i++) {
      const xi = X[o + i];
      if (xi === 0) continue;
      const row = i * k;
      for (let j = 0; j < k; j++) d[row + j] += xi * R[o + j];
    }
  }
  for (let i = 0; i < k; i++) {
    for (let j = i + 1; j < k; j++) {
      const m = 0.5 * (d[i * k + j] + d[j * k + i]);
      d[i * k + j] = m; d[j * k + i] = m;
    }
  }
  return d;
}

/** Symmetrise a raw Maxwell matrix, derive the mutual matrix and check the sign pattern. */
export function capacitanceMatrices(raw: Float64Array, k: number, names: string[]): CapacitanceMatrices {
  const maxwell = new Float64Array(k * k);
  let maxAbs = 0, maxAsym = 0;
  for (let i = 0; i < k; i++) {
    for (let j = 0; j < k; j++) {
      const a = raw[i * k + j], b = raw[j * k + i];
      maxwell[i * k + j] = 0.5 * (a + b);
      maxAbs = Math.max(maxAbs, Math.abs(a));
      maxAsym = Math.max(maxAsym, Math.abs(a - b));
    }
  }
  const mutual = mutualFromMaxwell(maxwell, k);
  const warnings: string[] = [];
  const scale = maxAbs > 0 ? maxAbs : 1;
  // Tolerances: entries within 1e-9 of the largest are numerically zero.
  const tiny = 1e-9 * scale;
  for (let i = 0; i < k; i++) {
    if (!(maxwell[i * k + i] > 0)) warnings.push(`Maxwell diagonal entry of ${names[i]} is not positive (${maxwell[i * k + i]} F): check the mesh of that conductor`);
    let row = 0;
    for (let j = 0; j < k; j++) {
      row += maxwell[i * k + j];
      if (i < j && maxwell[i * k + j] > tiny) warnings.push(`Maxwell entry ${names[i]}–${names[j]} is positive (${maxwell[i * k + j]} F): mutual capacitances should be negative; the mesh may be too coarse for the gap`);
    }
    if (row < -tiny) warnings.push(`Maxwell row sum of ${names[i]} is negative (${row} F): capacitance to the reference cannot be negative; the mesh may be too coarse`);
  }
  return { maxwell, mutual, asymmetry: maxAbs > 0 ? maxAsym / maxAbs : 0, k, warnings };
}

/** C^m from the Maxwell matrix (row-major k×k). */
export function mutualFromMaxwell(maxwell: Float64Array, k: number): Float64Array {
  const m = new Float64Array(k * k);
  for (let i = 0; i < k; i++) {
    let row = 0;
    for (let j = 0; j < k; j++) {
      row += maxwell[i * k + j];
      if (i !== j) m[i * k + j] = -maxwell[i * k + j];
    }
    m[i * k + i] = row;
  }
  return m;
}

/** Q = C·V for a row-major k×k matrix; coulombs. */
export function chargesAt(maxwell: Float64Array, k: number, potentials: ArrayLike<number>): Float64Array {
  const q = new Float64Array(k);
  for (let i = 0; i < k; i++) {
    let s = 0;
    for (let j = 0; j < k; j++) s += maxwell[i * k + j] * potentials[j];
    q[i] = s;
  }
  return q;
}

/** Stored energy W = ½ VᵀCV; joules. */
export function storedEnergy(maxwell: Float64Array, k: number, potentials: ArrayLike<number>): number {
  const q = chargesAt(maxwell, k, potentials);
  let w = 0;
  for (let i = 0; i < k; i++) w += potentials[i] * q[i];
  return 0.5 * w;
}

/** Row-major k×k as rows (for JSON). */
export function toRows(m: Float64Array, k: number): number[][] {
  const rows: number[][] = [];
  for (let i = 0; i < k; i++) rows.push(Array.from(m.subarray(i * k, (i + 1) * k)));
  return rows;
}
