/**
 * Discretisation-error estimate by Richardson extrapolation over uniform refinements.
 *
 * Each refinement splits every triangle into four, halving the panel size h. If an entry
 * behaves as C(h) = C* + a·h^p, then from levels h and h/2
 *   C* ≈ C(h/2) + (C(h/2) − C(h)) / (2^p − 1)
 * (L. F. Richardson, Phil. Trans. R. Soc. A 210, 1911; the observed order from three levels
 * as in Roache's grid-convergence practice, J. Fluids Eng. 116, 1994):
 *   p = log2((C(h) − C(2h)) / (C(h/2) − C(h))).
 * With two levels the order cannot be observed and is assumed (see `assumedOrder`).
 *
 * The error estimate reported for the extrapolated value is the size of the correction
 * |C* − C(h_finest)|: the extrapolation normally removes most of that error, so the
 * estimate errs on the safe side.
 *
 * Galerkin capacitances converge from below when the levels are nested: the Galerkin
 * solution minimises the energy functional over a subspace, and each uniform refinement of
 * the same flat panels enlarges that subspace on the same surface, so each level's diagonal
 * entries rise and the finest are lower bounds. Then (`fromBelow`) a diagonal entry that falls
 * under refinement means the meshes are not yet in the asymptotic range: a warning says so.
 * When refinement moved new points toward the curved surface (refine.ts), each level solves
 * on a different surface: the entries still converge, but neither monotonically nor from
 * below (the inscribed polygon of a hole is smaller than the hole, so a plate grows less
 * than its faceting suggests), and the caller passes fromBelow: false.
 */

export interface RichardsonResult {
  /** Extrapolated matrix, row-major k×k. */
  extrapolated: Float64Array;
  /** Estimated absolute error of each extrapolated entry (same layout). */
  errorEstimate: Float64Array;
  /** Largest estimated error relative to the largest |entry| of its row. */
  relativeError: number;
  /** Order used: observed (three or more levels) or assumed (two). */
  order: number;
  orderObserved: boolean;
  warnings: string[];
}

/**
 * Extrapolate a sequence of k×k matrices from coarse to fine (each level h/2 of the last).
 * `assumedOrder` is used with two levels, and as a fallback when the observed order is not
 * meaningful (differences of changing sign, or growing). `fromBelow`: the levels are nested
 * Galerkin solves, whose diagonal entries must rise (see the file comment).
 */
export function richardson(levels: Float64Array[], k: number, opts: { assumedOrder: number; fromBelow: boolean }): RichardsonResult {
  const L = levels.length;
  if (L < 2) throw new Error("Richardson extrapolation needs at least two levels");
  const fine = levels[L - 1], mid = levels[L - 2];
  const warnings: string[] = [];
  let order = opts.assumedOrder;
  let observed = false;
  if (L >= 3) {
    // One order for the whole matrix, observed on the diagonal sum: the diagonal entries
    // are the largest and best resolved, and one order keeps the extrapolated matrix consistent.
    const coarse = levels[L - 3];
    let d1 = 0, d2 = 0;
    for (let i = 0; i < k; i++) { d1 += mid[i * k + i] - coarse[i * k + i]; d2 += fine[i * k + i] - mid[i * k + i]; }
    if (d1 !== 0 && d2 !== 0 && Math.sign(d1) === Math.sign(d2) && Math.abs(d2) < Math.abs(d1)) {
      const p = Math.log2(d1 / d2);
      order = Math.min(4, Math.max(0.5, p));
      observed = true;
      if (p !== order) warnings.push(`observed convergence order ${p.toFixed(2)} clipped to ${order}`);
    } else {
      warnings.push(`the capacitance does not converge monotonically over the last three meshes; the order ${opts.assumedOrder} is assumed and the estimate is uncertain: refine the mesh further`);
    }
  }
  const factor = 1 / (Math.pow(2, order) - 1);
  const extrapolated = new Float64Array(k * k);
  const errorEstimate = new Float64Array(k * k);
  for (let e = 0; e < k * k; e++) {
    const corr = (fine[e] - mid[e]) * factor;
    extrapolated[e] = fine[e] + corr;
    errorEstimate[e] = Math.abs(corr);
  }
  if (opts.fromBelow) {
    for (let i = 0; i < k; i++) {
      if (fine[i * k + i] < mid[i * k + i]) {
        warnings.push(`diagonal entry ${i + 1} fell under refinement (${mid[i * k + i]} F → ${fine[i * k + i]} F): Galerkin values should rise toward the limit; the coarse mesh is not in the asymptotic range`);
        break;
      }
    }
  }
  let rel = 0;
  for (let i = 0; i < k; i++) {
    let rowMax = 0;
    for (let j = 0; j < k; j++) rowMax = Math.max(rowMax, Math.abs(extrapolated[i * k + j]));
    if (rowMax === 0) continue;
    for (let j = 0; j < k; j++) rel = Math.max(rel, errorEstimate[i * k + j] / rowMax);
  }
  return { extrapolated, errorEstimate, relativeError: rel, order, orderObserved: observed, warnings };
}
