/**
 * Flat-triangle measures: area vector, unit normal, area, centroid, and the signed volume of the
 * tetrahedron a point makes with a triangle.
 *
 * The lowest layer of sigmesh (with src/errors.ts): imports nothing of the project, so every
 * layer may use it. Conventions, as gl-matrix: plain functions over typed arrays, the output
 * argument first (`out`, then its offset `oo`) where there is one, no allocation. A triangle is
 * three corner offsets a, b, c into one coordinate array p (x, y, z at p[a], p[a + 1], p[a + 2]),
 * so the same call serves an indexed mesh (a = 3·triangles[3t], …) and packed corners (a = 9t,
 * b = a + 3, c = a + 6). Corners run counter-clockwise about the normal n = (b − a) × (c − a).
 * Units are those of p (metres in sigmesh).
 *
 * The cross product is written as (b − a) × (c − a) component by component, in one fixed
 * order: callers that used to inline it get the same rounding, bit for bit.
 *
 * Written here rather than taken from gl-matrix: its vec3 functions take one small array per
 * vector, not offsets into the struct-of-arrays buffers sigmesh keeps, so every call would
 * first copy three corners out (and gl-matrix was a dependency nothing imported; dropped).
 */

/** (b − a) × (c − a), twice the area vector, into out[oo..oo+2]; returns out. */
export function triangleAreaVector(out: Float64Array, oo: number, p: ArrayLike<number>, a: number, b: number, c: number): Float64Array {
  const ux = p[b] - p[a], uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2];
  const vx = p[c] - p[a], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
  out[oo] = uy * vz - uz * vy;
  out[oo + 1] = uz * vx - ux * vz;
  out[oo + 2] = ux * vy - uy * vx;
  return out;
}

/**
 * Unit normal into out[oo..oo+2] (0, 0, 0 for a degenerate triangle); returns |(b − a) × (c − a)|,
 * twice the area, so a caller needing both pays for one square root.
 */
export function triangleNormal(out: Float64Array, oo: number, p: ArrayLike<number>, a: number, b: number, c: number): number {
  const ux = p[b] - p[a], uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2];
  const vx = p[c] - p[a], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
  const nx = uy * vz - uz * vy, ny = uz * vx - ux * vz, nz = ux * vy - uy * vx;
  const l = Math.sqrt(nx * nx + ny * ny + nz * nz);
  if (l > 0) { out[oo] = nx / l; out[oo + 1] = ny / l; out[oo + 2] = nz / l; }
  else { out[oo] = 0; out[oo + 1] = 0; out[oo + 2] = 0; }
  return l;
}

/** Area, ½|(b − a) × (c − a)| (units of p squared). */
export function triangleArea(p: ArrayLike<number>, a: number, b: number, c: number): number {
  const ux = p[b] - p[a], uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2];
  const vx = p[c] - p[a], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
  const nx = uy * vz - uz * vy, ny = uz * vx - ux * vz, nz = ux * vy - uy * vx;
  return 0.5 * Math.sqrt(nx * nx + ny * ny + nz * nz);
}

/** Centroid (a + b + c)/3 into out[oo..oo+2]; returns out. */
export function triangleCentroid(out: Float64Array, oo: number, p: ArrayLike<number>, a: number, b: number, c: number): Float64Array {
  out[oo] = (p[a] + p[b] + p[c]) / 3;
  out[oo + 1] = (p[a + 1] + p[b + 1] + p[c + 1]) / 3;
  out[oo + 2] = (p[a + 2] + p[b + 2] + p[c + 2]) / 3;
  return out;
}

/**
 * Six times the signed volume of the tetrahedron with apex (x, y, z) over the triangle:
 * (a − x)·((b − x) × (c − x)). Positive when the apex lies behind the triangle (as for
 * solid-angle.ts), so over a closed outward surface the sum is six times the enclosed volume,
 * about any apex; an apex near the surface keeps the digits a far-off origin would cancel.
 */
export function tetrahedronVolume6(p: ArrayLike<number>, a: number, b: number, c: number, x: number, y: number, z: number): number {
  const ax = p[a] - x, ay = p[a + 1] - y, az = p[a + 2] - z;
  const bx = p[b] - x, by = p[b + 1] - y, bz = p[b + 2] - z;
  const cx = p[c] - x, cy = p[c + 1] - y, cz = p[c + 2] - z;
  return ax * (by * cz - bz * cy) + ay * (bz * cx - bx * cz) + az * (bx * cy - by * cx);
}
