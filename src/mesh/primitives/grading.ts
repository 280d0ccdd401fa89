/**
 * Spacing laws for the structured sides of generated meshes.
 *
 * Surface charge crowds toward edges and rims (it is singular there, like d^(-1/2) at
 * the rim of a thin sheet and d^(-1/3) at a right-angled edge), so panels are made
 * smaller toward them. The law is a geometric progression: each spacing is a constant
 * factor q larger than its neighbour nearer the edge, so the spacing varies smoothly
 * (the ratio of neighbouring spacings is q everywhere, and q -> 1 as the count grows).
 * The user states `ratio` = largest spacing / smallest spacing along the side; 1 is uniform.
 */

/**
 * Nodes on [-1, 1] graded symmetrically toward both ends: n spacings
 * h, hq, ..., hq^(m-1) from each end toward the middle, m = ceil(n/2), with
 * q^(m-1) = ratio (for n <= 2 the spacing is necessarily uniform).
 * Exactly symmetric: s[n-i] = -s[i], s[0] = -1, s[n] = 1.
 */
export function symmetricNodes(n: number, ratio = 1): Float64Array {
  if (!(Number.isInteger(n) && n >= 1)) throw new RangeError(`symmetricNodes: n must be a positive integer, got ${n}`);
  if (!(ratio >= 1 && Number.isFinite(ratio))) throw new RangeError(`symmetricNodes: ratio must be >= 1, got ${ratio}`);
  const s = new Float64Array(n + 1);
  const m = Math.ceil(n / 2);
  const q = m > 1 ? Math.pow(ratio, 1 / (m - 1)) : 1;
  // Length of one half in units of the smallest spacing h: sum of the m-1 full steps
  // plus, for odd n, half of the middle spacing hq^(m-1).
  let half = 0;
  for (let i = 0; i < m; i++) half += Math.pow(q, i);
  if (n % 2 === 1) half -= 0.5 * Math.pow(q, m - 1);
  s[0] = -1;
  let acc = 0;
  for (let i = 1; 2 * i < n; i++) {
    acc += Math.pow(q, i - 1);
    s[i] = -1 + acc / half;
  }
  if (n % 2 === 0) s[n / 2] = 0;
  for (let i = 0; 2 * i < n; i++) s[n - i] = -s[i];
  return s;
}

/**
 * Nodes on [0, 1] graded toward t = 1 only (a rim): n spacings decreasing geometrically
 * from the largest at t = 0 to the smallest at t = 1, largest/smallest = ratio.
 * t[0] = 0 and t[n] = 1 exactly.
 */
export function rimNodes(n: number, ratio = 1): Float64Array {
  if (!(Number.isInteger(n) && n >= 1)) throw new RangeError(`rimNodes: n must be a positive integer, got ${n}`);
  if (!(ratio >= 1 && Number.isFinite(ratio))) throw new RangeError(`rimNodes: ratio must be >= 1, got ${ratio}`);
  const t = new Float64Array(n + 1);
  const q = n > 1 ? Math.pow(ratio, 1 / (n - 1)) : 1;
  let total = 0;
  for (let i = 0; i < n; i++) total += Math.pow(q, -i);
  let acc = 0;
  for (let i = 1; i < n; i++) {
    acc += Math.pow(q, -(i - 1));
    t[i] = acc / total;
  }
  t[n] = 1;
  return t;
}

/** Coordinates centre + halfLength * s[i] for symmetric nodes s; metres in, metres out. Ends are exact. */
export function placeSymmetric(s: Float64Array, centre: number, halfLength: number): Float64Array {
  const n = s.length - 1;
  const out = new Float64Array(n + 1);
  for (let i = 0; i <= n; i++) out[i] = centre + halfLength * s[i];
  out[0] = centre - halfLength;
  out[n] = centre + halfLength;
  return out;
}
