/**
 * Where points lie against the conductors: on a surface (within a small fraction of the
 * nearest panel's size), inside a closed conductor (its winding number above INSIDE_WINDING),
 * or free. A probe on a surface reads about half the surface field (the principal value), and
 * one inside a conductor reads the interior of the model (potential that of the conductor,
 * field near zero): both are worth a word to whoever placed them.
 *
 * The nearest surface comes from one BVH over all triangles; the winding number (a sum over the
 * conductor's triangles) is taken only for points inside the conductor's bounding box.
 */
import type { SurfaceMesh } from "./model.js";
import { buildBoxTree, triangleBoxes } from "./bvh.js";
import { nearestTriangle, conductorTriangles, windingNumber, INSIDE_WINDING } from "./proximity.js";

export interface PointLocations {
  /** Conductor whose surface each point lies on, or -1. */
  onSurface: Int32Array;
  /** Closed conductor each point lies inside (off its surface), or -1. */
  inside: Int32Array;
}

/** A point within this fraction of the nearest panel's longest edge lies on the surface. */
export const ON_SURFACE = 1e-3;

/**
 * Locate `points` (3 per point, metres) against the conductors of `mesh`; `closed[c]` says
 * whether conductor c encloses a volume (open sheets have no inside).
 */
export function locatePoints(mesh: SurfaceMesh, closed: readonly boolean[], points: Float64Array): PointLocations {
  const m = points.length / 3, nc = mesh.names.length;
  const onSurface = new Int32Array(m).fill(-1), inside = new Int32Array(m).fill(-1);
  if (mesh.triangles.length === 0 || m === 0) return { onSurface, inside };
  const p = mesh.positions, tr = mesh.triangles;
  const tree = buildBoxTree(triangleBoxes(p, tr));
  const groups = conductorTriangles(mesh);
  // Bounding box of each conductor.
  const box = new Float64Array(6 * nc);
  for (let c = 0; c < nc; c++) box.set([Infinity, Infinity, Infinity, -Infinity, -Infinity, -Infinity], 6 * c);
  for (let t = 0; t < tr.length / 3; t++) {
    const o = 6 * mesh.conductor[t];
    for (let j = 0; j < 3; j++) {
      const v = 3 * tr[3 * t + j];
      for (let a = 0; a < 3; a++) {
        if (p[v + a] < box[o + a]) box[o + a] = p[v + a];
        if (p[v + a] > box[o + 3 + a]) box[o + 3 + a] = p[v + a];
      }
    }
  }
  for (let i = 0; i < m; i++) {
    const x = points[3 * i], y = points[3 * i + 1], z = points[3 * i + 2];
    const near = nearestTriangle(tree, p, tr, x, y, z);
    if (near.triangle >= 0) {
      const t = near.triangle;
      let h = 0;
      for (let j = 0; j < 3; j++) {
        const a = 3 * tr[3 * t + j], b = 3 * tr[3 * t + ((j + 1) % 3)];
        h = Math.max(h, Math.hypot(p[b] - p[a], p[b + 1] - p[a + 1], p[b + 2] - p[a + 2]));
      }
      if (near.distance <= ON_SURFACE * h) { onSurface[i] = mesh.conductor[t]; continue; }
    }
    for (let c = 0; c < nc; c++) {
      if (!closed[c]) continue;
      const o = 6 * c;
      if (x < box[o] || y < box[o + 1] || z < box[o + 2] || x > box[o + 3] || y > box[o + 4] || z > box[o + 5]) continue;
      if (windingNumber(mesh, groups, c, x, y, z) > INSIDE_WINDING) { inside[i] = c; break; }
    }
  }
  return { onSurface, inside };
}
