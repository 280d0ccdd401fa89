/**
 * Panel quality per conductor: edge-length range and the worst triangle shape.
 *
 * Aspect ratio here is the radius ratio R / (2 r) (circumradius over twice the
 * inradius): 1 for an equilateral triangle, growing without bound as a triangle
 * degenerates into a sliver or a needle. It is one of the standard shape measures
 * surveyed in Shewchuk, "What is a good linear finite element?" (2002), and unlike
 * longest-edge-over-shortest-altitude it treats needles and caps alike.
 * With sides a, b, c, area A and semi-perimeter s: R = abc / (4A), r = A / s, so
 * R / (2r) = abc·s / (8A²).
 */
import { type SurfaceMesh, triangleCount } from "./model.js";
import { triangleArea } from "../geometry/triangle.js";

/**
 * A triangle is degenerate when its area is below this fraction of its longest edge
 * squared (collinear or repeated vertices up to round-off). A boundary-element solver
 * cannot use it: its panel carries no area.
 */
export const DEGENERATE_AREA_RATIO = 1e-10;

/** Radius ratio R/(2r) of triangle t; Infinity when degenerate. Dimensionless. */
export function triangleAspect(positions: Float64Array, triangles: Uint32Array, t: number): number {
  const p = positions;
  const i = 3 * triangles[3 * t], j = 3 * triangles[3 * t + 1], k = 3 * triangles[3 * t + 2];
  const ux = p[j] - p[i], uy = p[j + 1] - p[i + 1], uz = p[j + 2] - p[i + 2];
  const vx = p[k] - p[i], vy = p[k + 1] - p[i + 1], vz = p[k + 2] - p[i + 2];
  const wx = p[k] - p[j], wy = p[k + 1] - p[j + 1], wz = p[k + 2] - p[j + 2];
  const a = Math.sqrt(ux * ux + uy * uy + uz * uz), b = Math.sqrt(vx * vx + vy * vy + vz * vz), c = Math.sqrt(wx * wx + wy * wy + wz * wz);
  const area = triangleArea(p, i, j, k);
  const longest = Math.max(a, b, c);
  if (!(area > DEGENERATE_AREA_RATIO * longest * longest)) return Infinity;
  const s = 0.5 * (a + b + c);
  return (a * b * c * s) / (8 * area * area);
}

/** Longest edge of each triangle (the panel size used for proximity warnings); metres. */
export function panelSizes(positions: Float64Array, triangles: Uint32Array): Float64Array {
  const nt = triangles.length / 3;
  const out = new Float64Array(nt);
  const p = positions;
  for (let t = 0; t < nt; t++) {
    const i = 3 * triangles[3 * t], j = 3 * triangles[3 * t + 1], k = 3 * triangles[3 * t + 2];
    const a = (p[j] - p[i]) ** 2 + (p[j + 1] - p[i + 1]) ** 2 + (p[j + 2] - p[i + 2]) ** 2;
    const b = (p[k] - p[i]) ** 2 + (p[k + 1] - p[i + 1]) ** 2 + (p[k + 2] - p[i + 2]) ** 2;
    const c = (p[k] - p[j]) ** 2 + (p[k + 1] - p[j + 1]) ** 2 + (p[k + 2] - p[j + 2]) ** 2;
    out[t] = Math.sqrt(Math.max(a, b, c));
  }
  return out;
}

export interface MeshQuality {
  /** Shortest and longest triangle edge; metres (NaN for a conductor without triangles). */
  minEdge: number;
  maxEdge: number;
  /** Largest radius ratio R/(2r); Infinity when a degenerate triangle exists. */
  worstAspect: number;
  /** Triangle (mesh-wide index) with the worst aspect; -1 when none. */
  worstAspectTriangle: number;
  /** Triangles with (near) zero area, see DEGENERATE_AREA_RATIO. */
  degenerateTriangles: number;
}

/** Quality figures per conductor, in `mesh.names` order. */
export function conductorQuality(mesh: SurfaceMesh): MeshQuality[] {
  const nc = mesh.names.length;
  const minEdge = new Float64Array(nc).fill(Infinity), maxEdge = new Float64Array(nc).fill(-Infinity);
  const worst = new Float64Array(nc).fill(-Infinity);
  const worstAt = new Int32Array(nc).fill(-1);
  const degenerate = new Uint32Array(nc);
  const p = mesh.positions, tr = mesh.triangles;
  const nt = triangleCount(mesh);
  for (let t = 0; t < nt; t++) {
    const c = mesh.conductor[t];
    for (let e = 0; e < 3; e++) {
      const i = 3 * tr[3 * t + e], j = 3 * tr[3 * t + (e === 2 ? 0 : e + 1)];
      const l = Math.hypot(p[j] - p[i], p[j + 1] - p[i + 1], p[j + 2] - p[i + 2]);
      if (l < minEdge[c]) minEdge[c] = l;
      if (l > maxEdge[c]) maxEdge[c] = l;
    }
    const q = triangleAspect(p, tr, t);
    if (q === Infinity) degenerate[c]++;
    if (q > worst[c]) { worst[c] = q; worstAt[c] = t; }
  }
  const out: MeshQuality[] = [];
  for (let c = 0; c < nc; c++) {
    const any = worstAt[c] >= 0;
    out.push({
      minEdge: any ? minEdge[c] : NaN,
      maxEdge: any ? maxEdge[c] : NaN,
      worstAspect: any ? worst[c] : NaN,
      worstAspectTriangle: worstAt[c],
      degenerateTriangles: degenerate[c],
    });
  }
  return out;
}
