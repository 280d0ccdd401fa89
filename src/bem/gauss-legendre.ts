/**
 * Gauss–Legendre nodes and weights on [0, 1], computed once by Newton's method on the
 * Legendre recurrence (the classical construction, e.g. Press et al., Numerical Recipes,
 * 3rd ed., §4.6.1 "gauleg"); tested for exactness on monomials in tests/bem/gauss-legendre.test.ts.
 */
export interface LineRule { readonly n: number; readonly t: Float64Array; readonly w: Float64Array }

export function gaussLegendre(n: number): LineRule {
  const t = new Float64Array(n), w = new Float64Array(n);
  for (let i = 0; i < Math.ceil(n / 2); i++) {
    let x = Math.cos(Math.PI * (i + 0.75) / (n + 0.5));
    let dp = 0;
    for (let it = 0; it < 100; it++) {
      let p0 = 1, p1 = x;
      for (let k = 2; k <= n; k++) { const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k; p0 = p1; p1 = p2; }
      dp = n * (x * p1 - p0) / (x * x - 1);
      const dx = p1 / dp;
      x -= dx;
      if (Math.abs(dx) < 1e-16) break;
    }
    let p0 = 1, p1 = x;
    for (let k = 2; k <= n; k++) { const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k; p0 = p1; p1 = p2; }
    dp = n * (x * p1 - p0) / (x * x - 1);
    const wi = 2 / ((1 - x * x) * dp * dp);
    t[i] = 0.5 * (1 - x); w[i] = 0.5 * wi;
    t[n - 1 - i] = 0.5 * (1 + x); w[n - 1 - i] = 0.5 * wi;
  }
  return { n, t, w };
}
