/**
 * Surface area and enclosed volume of a triangle mesh.
 *
 * The volume uses the divergence theorem: for a closed, consistently oriented surface,
 * V = (1/3) \oint x.n dA = sum over triangles of a.(b x c)/6 (each term the signed volume
 * of the tetrahedron on the triangle and the reference point). Outward orientation
 * (counter-clockwise seen from outside) gives a positive volume. The reference point is
 * the bounding-box centre, not the origin, so a small part far from the origin does not
 * lose digits to cancellation. For an open or inconsistently oriented surface the sum
 * depends on the reference point and means nothing.
 */
import type { SurfaceMesh } from "./model.js";
import { boundingBox } from "./model.js";
import { triangleArea, tetrahedronVolume6 } from "../geometry/triangle.js";

/** Total surface area; square metres. */
export function surfaceArea(mesh: SurfaceMesh): number {
  const p = mesh.positions, tr = mesh.triangles;
  let sum = 0;
  // Halving each term instead of the sum is exact (a power of two), so the total is unchanged.
  for (let i = 0; i < tr.length; i += 3) sum += triangleArea(p, 3 * tr[i], 3 * tr[i + 1], 3 * tr[i + 2]);
  return sum;
}

/**
 * Signed enclosed volume (divergence theorem); cubic metres. Positive for a closed
 * outward-oriented surface. With `conductor` given, only that conductor's triangles count.
 */
export function signedVolume(mesh: SurfaceMesh, conductor?: number): number {
  const p = mesh.positions, tr = mesh.triangles;
  const bb = boundingBox(p);
  const ox = p.length ? 0.5 * (bb[0] + bb[3]) : 0, oy = p.length ? 0.5 * (bb[1] + bb[4]) : 0, oz = p.length ? 0.5 * (bb[2] + bb[5]) : 0;
  let sum = 0;
  for (let i = 0; i < tr.length; i += 3) {
    if (conductor !== undefined && mesh.conductor[i / 3] !== conductor) continue;
    sum += tetrahedronVolume6(p, 3 * tr[i], 3 * tr[i + 1], 3 * tr[i + 2], ox, oy, oz);
  }
  return sum / 6;
}
