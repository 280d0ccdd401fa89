/**
 * Faces and reference surfaces of generated shapes (the `faces` and `reference` of
 * src/mesh/model.ts). A generator that knows its analytic faces (flat faces, fillet cylinders,
 * sphere patches, ...) numbers each triangle's face and gives the exact unit normal of each face
 * at any point on it; the reference is the same generator run at a finer resolution, its
 * vertices split per face so that a vertex on the curve where two faces meet carries each
 * face's own normal (a sharp edge keeps both sides' normals).
 *
 * Geometry arrays here are output-first where they are written (src/geometry's convention).
 */
import type { ReferenceSurface, SurfaceMesh } from "../model.js";
import { type Axis, placeShape } from "./placement.js";

/** Exact outward unit normal of face `face` at the point p[o..o+2] of that face, written into out[oo..oo+2]. */
export type FaceNormal = (out: Float64Array, oo: number, face: number, p: Float64Array, o: number) => void;

/** A generated triangulation that knows the analytic face of every triangle, in the shape's local frame. */
export interface FacedTriangulation {
  /** metres, 3 per vertex */
  positions: Float64Array;
  triangles: Uint32Array;
  /** Face code of each triangle (a generator's own numbering; compacted by `facedShape`). */
  faces: Uint32Array;
}

/** The most reference triangles a shape carries; a finer reference is coarsened (4x, then 2x, then 1x the mesh's resolution). */
export const REFERENCE_TRIANGLE_BUDGET = 2 ** 20;

/**
 * How many times finer than the mesh the reference is built: 4 (16x the triangles) when that fits
 * the budget, else 2, else 1 (the mesh itself, with exact normals, which still places new points
 * on the true surface to O(h^4) by Curved PN Triangles).
 */
export function referenceFactor(meshTriangles: number): 1 | 2 | 4 {
  if (16 * meshTriangles <= REFERENCE_TRIANGLE_BUDGET) return 4;
  if (4 * meshTriangles <= REFERENCE_TRIANGLE_BUDGET) return 2;
  return 1;
}

/**
 * The reference surface of a faced triangulation: vertices duplicated per face, each with its
 * face's exact normal. `faceOf` maps a generator's face code to the compacted face number.
 */
function referenceFrom(fine: FacedTriangulation, normal: FaceNormal, faceOf: Map<number, number>): ReferenceSurface {
  const nt = fine.triangles.length / 3;
  const slot = new Map<number, number>();
  const faceCount = faceOf.size;
  const triangles = new Uint32Array(3 * nt);
  const face = new Uint32Array(nt);
  const source: number[] = [];
  const sourceFace: number[] = [];
  for (let t = 0; t < nt; t++) {
    const code = fine.faces[t];
    const f = faceOf.get(code) as number;
    face[t] = f;
    for (let j = 0; j < 3; j++) {
      const v = fine.triangles[3 * t + j];
      const key = v * faceCount + f;
      let s = slot.get(key);
      if (s === undefined) {
        s = source.length;
        slot.set(key, s);
        source.push(v);
        sourceFace.push(code);
      }
      triangles[3 * t + j] = s;
    }
  }
  const positions = new Float64Array(3 * source.length);
  const normals = new Float64Array(3 * source.length);
  for (let s = 0; s < source.length; s++) {
    const v = source[s];
    positions[3 * s] = fine.positions[3 * v];
    positions[3 * s + 1] = fine.positions[3 * v + 1];
    positions[3 * s + 2] = fine.positions[3 * v + 2];
    normal(normals, 3 * s, sourceFace[s], positions, 3 * s);
  }
  return { positions, normals, triangles, face, faceCount };
}

/**
 * The finished mesh of one generated conductor: the coarse triangulation with its faces, the
 * reference from the fine one, both turned to `axis` and moved to `center` (normals turned only).
 * Face codes are renumbered 0, 1, ... in increasing code order over the faces the fine
 * triangulation uses, so a face that a shape's proportions leave empty takes no number.
 */
export function facedShape(coarse: FacedTriangulation, fine: FacedTriangulation, normal: FaceNormal, name: string, axis: Axis = "z", center?: readonly number[]): SurfaceMesh {
  const codes = [...new Set(fine.faces)].sort((a, b) => a - b);
  const faceOf = new Map<number, number>(codes.map((c, i) => [c, i]));
  const faces = new Uint32Array(coarse.faces.length);
  for (let t = 0; t < faces.length; t++) {
    const f = faceOf.get(coarse.faces[t]);
    if (f === undefined) throw new Error(`facedShape: face code ${coarse.faces[t]} of the mesh is missing from its reference`);
    faces[t] = f;
  }
  const reference = referenceFrom(fine, normal, faceOf);
  placeShape(coarse.positions, axis, center);
  placeShape(reference.positions, axis, center);
  placeShape(reference.normals, axis);
  const nt = coarse.triangles.length / 3;
  return { positions: coarse.positions, triangles: coarse.triangles, conductor: new Uint32Array(nt), names: [name], faces, reference };
}
