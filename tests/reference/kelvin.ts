/**
 * Reference values by Kelvin's method of iterated images (W. Thomson, later Lord Kelvin, 1840s;
 * the construction as in J. D. Jackson, Classical Electrodynamics, 3rd ed., §2.2–2.3, section
 * numbers from memory: a point charge q at distance D from the centre of a grounded sphere of
 * radius a has the image −q a/D at distance a²/D from the centre, on the line to q; a grounded
 * plane mirrors q as −q).
 *
 * Independent of src/: plain point charges in SI, the fields summed exactly as Coulomb fields.
 * Every series is iterated until a new generation of charges is below 1e-16 of the total.
 *
 * (a) Sphere (radius a, centre at height d > a) at potential V above a grounded plane z = 0:
 *     the charge 4πε0 a V at the centre holds the sphere at V; each charge's mirror below the
 *     plane gets an image inside the sphere, and so on. The sphere stays at V, the plane at 0.
 * (b) Two spheres on the x axis (radii a1, a2, centre distance s) at potentials V1, V2: a charge
 *     4πε0 a_i V_i at each centre, then generation after generation the images in the other
 *     sphere of the charges last added to each.
 */

/** F/m: CODATA 2022, the value src/extract/constants.ts uses (written here, not imported: the reference stays independent of src/). */
export const EPS0 = 8.8541878188e-12;
const K = 1 / (4 * Math.PI * EPS0);
const STOP = 1e-16;
const MAX_GENERATIONS = 100000;

/** Point charges on one axis: positions (m) and values (C). */
export interface AxisCharges {
  at: number[];
  q: number[];
}

/** Sphere above a grounded plane z = 0: the charges inside the sphere (on the z axis); their mirrors are −q at −z. */
export function spherePlaneCharges(a: number, d: number, V: number): AxisCharges {
  if (!(d > a && a > 0)) throw new RangeError("spherePlaneCharges: need d > a > 0");
  const at = [d], q = [4 * Math.PI * EPS0 * a * V];
  let total = q[0];
  for (let n = 0; n < MAX_GENERATIONS; n++) {
    // The mirror −q_n at −z_n, at distance D = d + z_n below the centre, has the image +q_n a/D
    // at a²/D below the centre.
    const D = d + at[n];
    const qn = (q[n] * a) / D;
    at.push(d - (a * a) / D);
    q.push(qn);
    total += qn;
    if (Math.abs(qn) < STOP * Math.abs(total)) return { at, q };
  }
  throw new Error("spherePlaneCharges: the series did not converge");
}

/** Total charge on the sphere above the plane over its potential: the capacitance to ground; F. */
export function spherePlaneCapacitance(a: number, d: number): number {
  return spherePlaneCharges(a, d, 1).q.reduce((s, x) => s + x, 0);
}

/** Potential at (x, y, z) of the sphere-over-plane image charges and their mirrors; V. */
export function spherePlanePotential(c: AxisCharges, x: number, y: number, z: number): number {
  const r2 = x * x + y * y;
  let phi = 0;
  for (let i = 0; i < c.q.length; i++) {
    phi += c.q[i] * (1 / Math.sqrt(r2 + (z - c.at[i]) ** 2) - 1 / Math.sqrt(r2 + (z + c.at[i]) ** 2));
  }
  return K * phi;
}

/** z component of the field on the axis at height z (charges and mirrors as Coulomb fields); V/m. */
export function spherePlaneAxialField(c: AxisCharges, z: number): number {
  let e = 0;
  for (let i = 0; i < c.q.length; i++) {
    const u = z - c.at[i], w = z + c.at[i];
    e += c.q[i] * (Math.sign(u) / (u * u) - Math.sign(w) / (w * w));
  }
  return K * e;
}

/** Field magnitudes at the sphere's lowest point (nearest the plane) and its top; V/m. */
export function spherePlaneFields(a: number, d: number, V: number): { lowest: number; top: number } {
  const c = spherePlaneCharges(a, d, V);
  return { lowest: Math.abs(spherePlaneAxialField(c, d - a)), top: Math.abs(spherePlaneAxialField(c, d + a)) };
}

/**
 * Capacitance of a sphere above a grounded plane in bispherical coordinates, cosh α = d/a:
 * C = 4π ε0 a sinh α Σ_{n≥1} 1/sinh(nα) (W. R. Smythe, Static and Dynamic Electricity, 3rd ed.,
 * 1968, §5.08; from memory — the same series is tests/reference/images.test.ts's).
 */
export function spherePlaneBispherical(a: number, d: number): number {
  const al = Math.acosh(d / a);
  let s = 0;
  for (let n = 1; n < 100000; n++) {
    const t = 1 / Math.sinh(n * al);
    s += t;
    if (t < STOP * s) break;
  }
  return 4 * Math.PI * EPS0 * a * Math.sinh(al) * s;
}

/** Two spheres on the x axis, centres at 0 and s: the charges inside each (positions on x). */
export interface TwoSphereCharges {
  one: AxisCharges;
  two: AxisCharges;
}

/** The image series of two spheres (radii a1 at x = 0, a2 at x = s) at potentials V1, V2. */
export function twoSphereCharges(a1: number, a2: number, s: number, V1: number, V2: number): TwoSphereCharges {
  if (!(s > a1 + a2 && a1 > 0 && a2 > 0)) throw new RangeError("twoSphereCharges: the spheres must be apart");
  const one: AxisCharges = { at: [0], q: [4 * Math.PI * EPS0 * a1 * V1] };
  const two: AxisCharges = { at: [s], q: [4 * Math.PI * EPS0 * a2 * V2] };
  let last1 = [0], last2 = [0];
  let total = Math.abs(one.q[0]) + Math.abs(two.q[0]);
  for (let g = 0; g < MAX_GENERATIONS; g++) {
    const next1: number[] = [], next2: number[] = [];
    let added = 0;
    // Images in sphere 2 of sphere 1's newest charges: charge q at x (distance D = s − x from
    // centre 2) has the image −q a2/D at s − a2²/D.
    for (const i of last1) {
      const D = s - one.at[i];
      const q = (-one.q[i] * a2) / D;
      two.at.push(s - (a2 * a2) / D); two.q.push(q); next2.push(two.q.length - 1);
      added += Math.abs(q);
    }
    // And in sphere 1 of sphere 2's newest: distance D = x from centre 1, image at a1²/D.
    for (const i of last2) {
      const D = two.at[i];
      const q = (-two.q[i] * a1) / D;
      one.at.push((a1 * a1) / D); one.q.push(q); next1.push(one.q.length - 1);
      added += Math.abs(q);
    }
    total += added;
    last1 = next1; last2 = next2;
    if (added < STOP * total) return { one, two };
  }
  throw new Error("twoSphereCharges: the series did not converge");
}

/** Net charge of each sphere; C. */
export function sphereCharges(c: TwoSphereCharges): [number, number] {
  return [c.one.q.reduce((s, x) => s + x, 0), c.two.q.reduce((s, x) => s + x, 0)];
}

/** Maxwell capacitance matrix of two spheres, [C11, C12, C21, C22]; F (columns from V = (1, 0) and (0, 1)). */
export function twoSphereMaxwell(a1: number, a2: number, s: number): [number, number, number, number] {
  const [c11, c21] = sphereCharges(twoSphereCharges(a1, a2, s, 1, 0));
  const [c12, c22] = sphereCharges(twoSphereCharges(a1, a2, s, 0, 1));
  return [c11, c12, c21, c22];
}

/**
 * Equal spheres, centre distance s, cosh β = s/(2a): C11 = 4π ε0 a sinh β Σ_{n≥0} 1/sinh((2n+1)β),
 * C12 = −4π ε0 a sinh β Σ_{n≥1} 1/sinh(2nβ) (Smythe, Static and Dynamic Electricity, 3rd ed.,
 * §5.08; from memory).
 */
export function equalSpheresBispherical(a: number, s: number): { c11: number; c12: number } {
  const b = Math.acosh(s / (2 * a));
  let s11 = 0, s12 = 0;
  for (let n = 0; n < 100000; n++) {
    const t = 1 / Math.sinh((2 * n + 1) * b), u = n > 0 ? 1 / Math.sinh(2 * n * b) : 0;
    s11 += t; s12 += u;
    if (t < STOP * s11 && (n === 0 || u < STOP * s12)) break;
  }
  const f = 4 * Math.PI * EPS0 * a * Math.sinh(b);
  return { c11: f * s11, c12: -f * s12 };
}

/** Potential at (x, y, z) of the two-sphere charges (spheres on the x axis); V. */
export function twoSpherePotential(c: TwoSphereCharges, x: number, y: number, z: number): number {
  const r2 = y * y + z * z;
  let phi = 0;
  for (const set of [c.one, c.two]) for (let i = 0; i < set.q.length; i++) phi += set.q[i] / Math.sqrt(r2 + (x - set.at[i]) ** 2);
  return K * phi;
}

/** x component of the field on the x axis at x; V/m. */
export function twoSphereAxialField(c: TwoSphereCharges, x: number): number {
  let e = 0;
  for (const set of [c.one, c.two]) for (let i = 0; i < set.q.length; i++) { const u = x - set.at[i]; e += (set.q[i] * Math.sign(u)) / (u * u); }
  return K * e;
}

/**
 * Field magnitudes on the axis of two spheres (radii a1 at 0, a2 at s) at V1, V2: at the gap
 * points (x = a1 on sphere 1, x = s − a2 on sphere 2) and the outer points (x = −a1, x = s + a2); V/m.
 */
export function twoSphereFields(a1: number, a2: number, s: number, V1: number, V2: number): { gap: [number, number]; outer: [number, number] } {
  const c = twoSphereCharges(a1, a2, s, V1, V2);
  const f = (x: number): number => Math.abs(twoSphereAxialField(c, x));
  return { gap: [f(a1), f(s - a2)], outer: [f(-a1), f(s + a2)] };
}
