/**
 * Symmetric Gaussian quadrature rules for the triangle.
 *
 * Source: D. A. Dunavant, "High degree efficient symmetrical Gaussian quadrature rules for the
 * triangle", Int. J. Numer. Methods Eng. 21:1129–1148, 1985, Table I (degrees 1–10, 15 digits
 * as printed there). Each rule is stored by symmetry orbit — the centroid, the three
 * permutations of (a, b, b), the six permutations of (a, b, c) — and expanded here into
 * barycentric points with weights normalised to sum 1 (so Σ w f(x) is the mean of f over the
 * triangle; multiply by the area for the integral). Exactness for every monomial up to the
 * degree is checked in tests/bem/dunavant.test.ts.
 */

export interface TriangleRule {
  /** Polynomial degree integrated exactly. */
  readonly degree: number;
  /** Number of points. */
  readonly n: number;
  /** Barycentric coordinates of the points (l1 + l2 + l3 = 1). */
  readonly l1: Float64Array;
  readonly l2: Float64Array;
  readonly l3: Float64Array;
  /** Weights, summing to 1. */
  readonly w: Float64Array;
}

/**
 * Orbits per degree: [kind, a, b, weight] with kind 0 = centroid, 1 = (a, (1−a)/2, (1−a)/2),
 * 2 = (a, b, 1−a−b). Weight per point, scaled from Dunavant's reference area 1/2 to 1.
 */
const ORBITS: number[][][] = [
  [],
  [[0, 0, 0, 1]],
  [[1, 0.666666666666667, 0, 0.333333333333333]],
  [[0, 0, 0, -0.5625], [1, 0.6, 0, 0.520833333333333]],
  [[1, 0.108103018168070, 0, 0.223381589678011], [1, 0.816847572980459, 0, 0.109951743655322]],
  [[0, 0, 0, 0.225], [1, 0.059715871789770, 0, 0.132394152788506], [1, 0.797426985353087, 0, 0.125939180544827]],
  [[1, 0.501426509658179, 0, 0.116786275726379], [1, 0.873821971016996, 0, 0.050844906370207],
    [2, 0.053145049844817, 0.310352451033784, 0.082851075618374]],
  [[0, 0, 0, -0.149570044467682], [1, 0.479308067841920, 0, 0.175615257433208],
    [1, 0.869739794195568, 0, 0.053347235608838], [2, 0.048690315425316, 0.312865496004874, 0.077113760890257]],
  [[0, 0, 0, 0.144315607677787], [1, 0.081414823414554, 0, 0.095091634267285],
    [1, 0.658861384496480, 0, 0.103217370534718], [1, 0.898905543365938, 0, 0.032458497623198],
    [2, 0.008394777409958, 0.263112829634638, 0.027230314174435]],
  [[0, 0, 0, 0.097135796282799], [1, 0.020634961602525, 0, 0.031334700227139],
    [1, 0.125820817014127, 0, 0.077827541004774], [1, 0.623592928761935, 0, 0.079647738927210],
    [1, 0.910540973211095, 0, 0.025577675658698], [2, 0.036838412054736, 0.221962989160766, 0.043283539377289]],
  [[0, 0, 0, 0.090817990382754], [1, 0.028844733232685, 0, 0.036725957756467],
    [1, 0.781036849029926, 0, 0.045321059435528], [2, 0.141707219414880, 0.307939838764121, 0.072757916845420],
    [2, 0.025003534762686, 0.246672560639903, 0.028327242531057],
    [2, 0.009540815400299, 0.066803251012200, 0.009421666963733]],
];

/** Highest degree available. */
export const MAX_DUNAVANT_DEGREE = ORBITS.length - 1;

function expand(degree: number): TriangleRule {
  const l1: number[] = [], l2: number[] = [], l3: number[] = [], w: number[] = [];
  for (const [kind, a, b, wt] of ORBITS[degree]) {
    if (kind === 0) { l1.push(1 / 3); l2.push(1 / 3); l3.push(1 / 3); w.push(wt); continue; }
    if (kind === 1) {
      const c = (1 - a) / 2;
      for (const [p, q, r] of [[a, c, c], [c, a, c], [c, c, a]]) { l1.push(p); l2.push(q); l3.push(r); w.push(wt); }
      continue;
    }
    const c = 1 - a - b;
    for (const [p, q, r] of [[a, b, c], [a, c, b], [b, a, c], [b, c, a], [c, a, b], [c, b, a]]) {
      l1.push(p); l2.push(q); l3.push(r); w.push(wt);
    }
  }
  return { degree, n: w.length, l1: Float64Array.from(l1), l2: Float64Array.from(l2), l3: Float64Array.from(l3), w: Float64Array.from(w) };
}

const RULES: TriangleRule[] = [];
for (let d = 1; d <= MAX_DUNAVANT_DEGREE; d++) RULES[d] = expand(d);

/** The Dunavant rule of the lowest tabulated degree ≥ `degree` (clamped to 1…MAX_DUNAVANT_DEGREE). */
export function dunavantRule(degree: number): TriangleRule {
  const d = Math.min(MAX_DUNAVANT_DEGREE, Math.max(1, Math.ceil(degree)));
  return RULES[d];
}
