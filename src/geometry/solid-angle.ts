/**
 * The solid angle a flat triangle subtends at a point, and the generalised winding number of a
 * set of triangles (the sum of their solid angles over 4π).
 *
 * Solid angle by A. van Oosterom & J. Strackee, "The solid angle of a plane triangle", IEEE
 * Trans. Biomed. Eng. 30(2):125–126, 1983, eq. (8): with a, b, c the corners relative to the
 * point and l their lengths,
 *   tan(Ω/2) = a·(b × c) / (la lb lc + (a·b) lc + (a·c) lb + (b·c) la),
 * taken with atan2 so that Ω ∈ (−2π, 2π]. Sign: Ω > 0 when the point lies behind the triangle,
 * on the side opposite its normal n = (b − a) × (c − a) (the corners then run clockwise as seen
 * from the point). So the triangles of a closed outward surface sum to 4π at an inside point
 * and 0 outside: the winding number as generalised to any triangle soup by A. Jacobson,
 * L. Kavan & O. Sorkine-Hornung, "Robust inside-outside segmentation using generalized winding
 * numbers", ACM Trans. Graph. 32(4):33, 2013.
 *
 * Same layer and conventions as triangle.ts: corner offsets a, b, c into one coordinate array,
 * no allocation, imports nothing of the project.
 */

/**
 * Signed solid angle (steradians) of the triangle with corners at p[a..], p[b..], p[c..] seen
 * from (x, y, z); positive from behind (see the module comment). A point in the triangle's
 * plane sees it under 0 outside or ±2π inside, by the sign of a rounding-level triple product:
 * with planeTolerance > 0, a triple product below planeTolerance·la·lb·lc counts as in the
 * plane and gives 0 (0, the default, keeps the bare formula).
 */
export function solidAngle(p: ArrayLike<number>, a: number, b: number, c: number, x: number, y: number, z: number, planeTolerance = 0): number {
  const ax = p[a] - x, ay = p[a + 1] - y, az = p[a + 2] - z;
  const bx = p[b] - x, by = p[b + 1] - y, bz = p[b + 2] - z;
  const cx = p[c] - x, cy = p[c + 1] - y, cz = p[c + 2] - z;
  const la = Math.sqrt(ax * ax + ay * ay + az * az);
  const lb = Math.sqrt(bx * bx + by * by + bz * bz);
  const lc = Math.sqrt(cx * cx + cy * cy + cz * cz);
  const trip = ax * (by * cz - bz * cy) - ay * (bx * cz - bz * cx) + az * (bx * cy - by * cx);
  if (planeTolerance > 0 && Math.abs(trip) <= planeTolerance * la * lb * lc) return 0;
  const den = la * lb * lc + (ax * bx + ay * by + az * bz) * lc + (ax * cx + ay * cy + az * cz) * lb
    + (bx * cx + by * cy + bz * cz) * la;
  return 2 * Math.atan2(trip, den);
}

/** Relative triple product below which windingNumber takes a point to lie in a triangle's plane. */
export const WINDING_PLANE_TOLERANCE = 1e-12;

/**
 * Generalised winding number about (x, y, z) of the triangles list[from..to) (indices into
 * `triangles`, 3 vertex indices each into `positions`): Σ Ω / 4π, 1 inside a closed outward
 * surface, 0 outside, fractional near holes and on the surface. A triangle whose plane holds
 * the point counts 0 (WINDING_PLANE_TOLERANCE), so a point on the surface gets a fractional
 * value (½ on a face) rather than a whole one decided by rounding. Where flip[t] is 1, triangle
 * t counts with the opposite orientation.
 */
export function windingNumber(positions: ArrayLike<number>, triangles: ArrayLike<number>, list: ArrayLike<number>, from: number, to: number,
  x: number, y: number, z: number, flip: ArrayLike<number> | null = null): number {
  let w = 0;
  for (let k = from; k < to; k++) {
    const t = list[k];
    const omega = solidAngle(positions, 3 * triangles[3 * t], 3 * triangles[3 * t + 1], 3 * triangles[3 * t + 2], x, y, z, WINDING_PLANE_TOLERANCE);
    w += flip !== null && flip[t] ? -omega : omega;
  }
  return w / (4 * Math.PI);
}
