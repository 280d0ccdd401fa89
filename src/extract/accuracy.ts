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
  return finish(extrapolated, errorEstimate, k, order, observed, warnings, opts.fromBelow, fine, mid);
}

/** Increments fitted, at most (the last ones: the earliest solves are the least asymptotic). */
export const FIT_INCREMENTS = 4;
/**
 * The estimate of the extrapolated value's error, as a fraction of the fitted tail (the correction
 * added to the finest values). The tail estimates the finest value's error; on the reference cases
 * measured (sphere, cube and plate, adaptive sequences of 5 to 11 solves; docs/measurements.md) the
 * fitted tail fell within a factor 0.77 to 1.46 of the finest value's true error with four
 * increments, and 0.70 to 1.50 with three. The extrapolated value's error is then at most half
 * the tail whenever the tail is within a factor 2/3 to 2 of the finest error. This is a safety
 * factor calibrated by measurement, as Roache's grid-convergence index Fs = 1.25 is (P. J.
 * Roache, "Perspective: a method for uniform reporting of grid refinement studies", J. Fluids
 * Eng. 116, 1994); with two increments only (three solves: the power law then fits exactly and
 * says nothing of its own error) the whole tail is the estimate.
 */
export const TAIL_FRACTION = 0.5;

/**
 * Richardson extrapolation over a sequence of solves of growing panel counts N_j (adaptive
 * refinement: the counts grow by irregular factors), in the model C(N) = C* + a·N^(−q):
 * - q from the diagonal sum (one order for the whole matrix, as `richardson`): the increments
 *   d_j = S_{j+1} − S_j of the last FIT_INCREMENTS steps fitted as a·(N_j^−q − N_{j+1}^−q) by least
 *   squares in log d (a 1-D search over q, a in closed form); the order reported is p = 2q, the
 *   order in the panel size;
 * - per entry, its own a_e by linear least squares at that q, the tail a_e·N_J^−q added to the
 *   finest value;
 * - the estimate: TAIL_FRACTION of |tail| (the whole tail with two increments), plus the entry's
 *   largest fit residual carried to the finest level (how far its increments stray from the power law).
 * When the diagonal sum does not rise or fall steadily (increments of both signs) or q comes out
 * at the bottom of its range, no power law is fitted: the finest values are reported with twice
 * the last change.
 */
export function sequenceRichardson(levels: Float64Array[], panels: readonly number[], k: number, opts: { fromBelow: boolean }): RichardsonResult {
  const L = levels.length;
  if (L < 3) throw new Error("sequenceRichardson needs at least three solves");
  const warnings: string[] = [];
  const fine = levels[L - 1], mid = levels[L - 2];
  const m = Math.min(FIT_INCREMENTS, L - 1);
  const first = L - 1 - m;
  const diag = (c: Float64Array) => { let s = 0; for (let i = 0; i < k; i++) s += c[i * k + i]; return s; };
  const d = new Float64Array(m);
  for (let j = 0; j < m; j++) d[j] = diag(levels[first + j + 1]) - diag(levels[first + j]);
  const sign = Math.sign(d[m - 1]);
  const steady = sign !== 0 && d.every((x) => Math.sign(x) === sign);
  const n = panels.slice(first);
  const g = (q: number, j: number) => n[j] ** -q - n[j + 1] ** -q;
  const Q0 = 0.05, Q1 = 4;
  // The misfit of the log increments at order q (the best log a is their mean).
  const misfit = (qq: number) => {
    let mean = 0;
    for (let j = 0; j < m; j++) mean += Math.log(Math.abs(d[j]) / g(qq, j));
    mean /= m;
    let ss = 0;
    for (let j = 0; j < m; j++) { const r = Math.log(Math.abs(d[j]) / g(qq, j)) - mean; ss += r * r; }
    return ss;
  };
  let q = NaN;
  if (steady) {
    // A grid over the range, then a golden-section search in the grid cell around its best point.
    const STEPS = 400, h = (Q1 - Q0) / STEPS;
    let best = Infinity;
    for (let s = 0; s <= STEPS; s++) { const qq = Q0 + s * h, f = misfit(qq); if (f < best) { best = f; q = qq; } }
    let lo = Math.max(Q0, q - h), hi = Math.min(Q1, q + h);
    const r = (Math.sqrt(5) - 1) / 2;
    for (let it = 0; it < 60; it++) {
      const a = hi - r * (hi - lo), b = lo + r * (hi - lo);
      if (misfit(a) < misfit(b)) hi = b; else lo = a;
    }
    if (misfit(0.5 * (lo + hi)) <= best) q = 0.5 * (lo + hi);
  }
  const extrapolated = new Float64Array(k * k);
  const errorEstimate = new Float64Array(k * k);
  if (!(q > Q0)) {
    for (let e = 0; e < k * k; e++) { extrapolated[e] = fine[e]; errorEstimate[e] = 2 * Math.abs(fine[e] - mid[e]); }
    warnings.push("the capacitance does not converge as a power of the panel count over the last meshes: the finest values are reported, with twice their last change as the error estimate");
    return finish(extrapolated, errorEstimate, k, NaN, false, warnings, opts.fromBelow, fine, mid);
  }
  const gs = Float64Array.from({ length: m }, (_, j) => g(q, j));
  let gg = 0;
  for (let j = 0; j < m; j++) gg += gs[j] * gs[j];
  const NJ = n[m] ** -q;
  const fraction = m >= 3 ? TAIL_FRACTION : 1;
  for (let e = 0; e < k * k; e++) {
    let dg = 0;
    for (let j = 0; j < m; j++) dg += (levels[first + j + 1][e] - levels[first + j][e]) * gs[j];
    const a = dg / gg;
    let stray = 0;
    for (let j = 0; j < m; j++) stray = Math.max(stray, Math.abs(levels[first + j + 1][e] - levels[first + j][e] - a * gs[j]) / gs[j]);
    const tail = a * NJ;
    extrapolated[e] = fine[e] + tail;
    errorEstimate[e] = fraction * Math.abs(tail) + stray * NJ;
  }
  return finish(extrapolated, errorEstimate, k, 2 * q, true, warnings, opts.fromBelow, fine, mid);
}

function finish(extrapolated: Float64Array, errorEstimate: Float64Array, k: number, order: number, observed: boolean, warnings: string[],
  fromBelow: boolean, fine: Float64Array, mid: Float64Array): RichardsonResult {
  if (fromBelow) {
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
