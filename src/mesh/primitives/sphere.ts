/**
 * Sphere: the icosahedron subdivided L times (each triangle into four at its edge
 * midpoints), every new vertex projected radially onto the sphere; 20 * 4^L triangles.
 * The panels stay nearly equal (largest / smallest area measured 1.19, 1.27, 1.29, 1.30 at
 * levels 1-4, 1.30 beyond) and there are no poles, unlike a latitude-longitude grid.
 */
import type { SurfaceMesh } from "../model.js";
import { refineUniform } from "../refine.js";
import { checkTriangleBudget } from "./placement.js";
import { facedShape, referenceFactor, type FacedTriangulation, type FaceNormal } from "./reference.js";
import { triangleAreaVector } from "../../geometry/triangle.js";

export interface SphereParams {
  /** metres */
  radius: number;
  /** Subdivision level L (20 * 4^L triangles). */
  level?: number;
  /** Target number of panels: the smallest level giving at least this many. */
  panels?: number;
  /** Target mean panel edge length; metres: the smallest level whose mean edge is not longer. */
  panelSize?: number;
  /** metres */
  center?: readonly number[];
  name?: string;
}

export const MAX_SPHERE_LEVEL = 10;

/** Mean edge length of the level-L icosphere, from equilateral panels of the mean area; metres. */
export function icosphereEdge(radius: number, level: number): number {
  const areaPerPanel = (4 * Math.PI * radius * radius) / (20 * 4 ** level);
  return Math.sqrt((4 / Math.sqrt(3)) * areaPerPanel);
}

/** Level chosen from the parameters (level, else panels, else panel size, else 3). */
export function sphereLevel(params: SphereParams): number {
  if (params.level !== undefined) return params.level;
  if (params.panels !== undefined) {
    let L = 0;
    while (20 * 4 ** L < params.panels && L <= MAX_SPHERE_LEVEL) L++;
    return L;
  }
  if (params.panelSize !== undefined) {
    let L = 0;
    while (icosphereEdge(params.radius, L) > params.panelSize && L <= MAX_SPHERE_LEVEL) L++;
    return L;
  }
  return 3;
}

/** The regular icosahedron inscribed in the unit sphere, outward-oriented. */
function icosahedron(): SurfaceMesh {
  const t = (1 + Math.sqrt(5)) / 2;
  const raw = [-1, t, 0, 1, t, 0, -1, -t, 0, 1, -t, 0, 0, -1, t, 0, 1, t, 0, -1, -t, 0, 1, -t, t, 0, -1, t, 0, 1, -t, 0, -1, -t, 0, 1];
  const positions = new Float64Array(raw);
  const s = 1 / Math.hypot(1, t);
  for (let i = 0; i < positions.length; i++) positions[i] *= s;
  const triangles = new Uint32Array([
    0, 11, 5, 0, 5, 1, 0, 1, 7, 0, 7, 10, 0, 10, 11, 1, 5, 9, 5, 11, 4, 11, 10, 2, 10, 7, 6, 7, 1, 8,
    3, 9, 4, 3, 4, 2, 3, 2, 6, 3, 6, 8, 3, 8, 9, 4, 9, 5, 2, 4, 11, 6, 2, 10, 8, 6, 7, 9, 8, 1,
  ]);
  // Orientation fixed by construction check rather than trusted: the normal must point away from the centre.
  const scratch = new Float64Array(3);
  for (let f = 0; f < 20; f++) {
    const a = 3 * triangles[3 * f];
    const n = triangleAreaVector(scratch, 0, positions, a, 3 * triangles[3 * f + 1], 3 * triangles[3 * f + 2]);
    if (n[0] * positions[a] + n[1] * positions[a + 1] + n[2] * positions[a + 2] < 0) {
      const tmp = triangles[3 * f + 1]; triangles[3 * f + 1] = triangles[3 * f + 2]; triangles[3 * f + 2] = tmp;
    }
  }
  return { positions, triangles, conductor: new Uint32Array(20), names: ["sphere"] };
}

export function sphereMesh(params: SphereParams): SurfaceMesh {
  const r = params.radius;
  if (!(r > 0 && Number.isFinite(r))) throw new RangeError("sphereMesh: radius must be positive");
  const level = sphereLevel(params);
  if (!(Number.isInteger(level) && level >= 0 && level <= MAX_SPHERE_LEVEL)) throw new RangeError(`sphere level must be an integer from 0 to ${MAX_SPHERE_LEVEL}, got ${level}`);
  checkTriangleBudget(20 * 4 ** level, `sphere level ${level}`);
  // The mesh, and its reference surface: the icosphere up to two levels finer (4x in every
  // count, within the reference budget), one face, its exact normal the radial direction, so that
  // refinement places new points on the sphere itself (reference.ts).
  const factor = referenceFactor(20 * 4 ** level);
  const fineLevel = level + Math.log2(factor);
  const coarse = unitIcosphere(level, r);
  const fine = level === fineLevel ? unitIcosphere(level, r) : unitIcosphere(fineLevel, r);
  const radial: FaceNormal = (out, oo, _face, q, o) => {
    const x = q[o], y = q[o + 1], z = q[o + 2], l = Math.sqrt(x * x + y * y + z * z);
    out[oo] = x / l; out[oo + 1] = y / l; out[oo + 2] = z / l;
  };
  return facedShape(coarse, fine, radial, params.name ?? "sphere", "z", params.center);
}

/** The icosphere of `level` subdivisions of radius r about the origin, every triangle on face 0. */
function unitIcosphere(level: number, r: number): FacedTriangulation {
  let mesh = icosahedron();
  for (let l = 0; l < level; l++) {
    mesh = refineUniform(mesh, { smooth: false });
    const p = mesh.positions;
    for (let i = 0; i < p.length; i += 3) {
      const s = 1 / Math.sqrt(p[i] * p[i] + p[i + 1] * p[i + 1] + p[i + 2] * p[i + 2]);
      p[i] *= s; p[i + 1] *= s; p[i + 2] *= s;
    }
  }
  const p = mesh.positions;
  for (let i = 0; i < p.length; i++) p[i] *= r;
  return { positions: p, triangles: mesh.triangles, faces: new Uint32Array(mesh.triangles.length / 3) };
}
