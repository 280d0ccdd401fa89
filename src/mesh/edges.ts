/**
 * The edges of a triangle mesh and which of them are feature edges (creases, rims,
 * non-manifold edges, seams between conductors): shared by refinement, planar regions and
 * the solve's choice of accuracy model.
 */
import type { SurfaceMesh } from "./model.js";
import { triangleNormal } from "../geometry/triangle.js";

/** The edges of a triangle mesh; edge j of triangle t runs from its corner j to corner (j+1) mod 3. */
export interface MeshEdges {
  /** Number of distinct edges. */
  count: number;
  /** Endpoints of each edge, v0 < v1. */
  v0: Uint32Array;
  v1: Uint32Array;
  /** Edge id of each half-edge 3t+j. */
  edgeOfHalf: Uint32Array;
  /** Number of triangles using each edge (1 on a boundary, 2 inside a manifold, more if non-manifold). */
  faces: Uint32Array;
  /** First and second half-edge using each edge (second is -1 when only one). */
  half0: Int32Array;
  half1: Int32Array;
}

/**
 * Build the edge table with a bucket per lower vertex (compressed rows), so memory stays
 * a few words per half-edge and no hash of pairs is needed.
 */
export function meshEdges(mesh: SurfaceMesh): MeshEdges {
  const tr = mesh.triangles;
  const nh = tr.length;
  const nv = mesh.positions.length / 3;
  const start = new Uint32Array(nv + 1);
  for (let h = 0; h < nh; h++) {
    const a = tr[h], b = tr[h - (h % 3) + ((h % 3) + 1) % 3];
    start[(a < b ? a : b) + 1]++;
  }
  for (let v = 0; v < nv; v++) start[v + 1] += start[v];
  const fill = start.slice(0, nv);
  const bucket = new Uint32Array(nh);
  for (let h = 0; h < nh; h++) {
    const a = tr[h], b = tr[h - (h % 3) + ((h % 3) + 1) % 3];
    bucket[fill[a < b ? a : b]++] = h;
  }
  const edgeOfHalf = new Uint32Array(nh);
  const v0 = new Uint32Array(nh), v1 = new Uint32Array(nh);
  const faces = new Uint32Array(nh);
  const half0 = new Int32Array(nh).fill(-1), half1 = new Int32Array(nh).fill(-1);
  let ne = 0;
  for (let v = 0; v < nv; v++) {
    const first = ne;
    for (let k = start[v]; k < start[v + 1]; k++) {
      const h = bucket[k];
      const a = tr[h], b = tr[h - (h % 3) + ((h % 3) + 1) % 3];
      const hi = a < b ? b : a;
      let e = -1;
      for (let f = first; f < ne; f++) if (v1[f] === hi) { e = f; break; }
      if (e < 0) {
        e = ne++;
        v0[e] = v; v1[e] = hi; half0[e] = h;
      } else if (half1[e] < 0) {
        half1[e] = h;
      }
      faces[e]++;
      edgeOfHalf[h] = e;
    }
  }
  return {
    count: ne,
    v0: v0.slice(0, ne), v1: v1.slice(0, ne),
    edgeOfHalf,
    faces: faces.slice(0, ne),
    half0: half0.slice(0, ne), half1: half1.slice(0, ne),
  };
}

/** Unit normals of the triangles (zero for degenerate ones), 3 per triangle. */
export function faceNormals(mesh: SurfaceMesh): Float64Array {
  const p = mesh.positions, tr = mesh.triangles;
  const nt = tr.length / 3;
  const n = new Float64Array(3 * nt);
  for (let t = 0; t < nt; t++) {
    triangleNormal(n, 3 * t, p, 3 * tr[3 * t], 3 * tr[3 * t + 1], 3 * tr[3 * t + 2]);
  }
  return n;
}

/**
 * Which edges are feature edges (1) and which lie inside a smooth patch (0).
 * `cosFeature` is the cosine of the feature angle.
 */
export function featureEdges(mesh: SurfaceMesh, edges: MeshEdges, normals: Float64Array, cosFeature: number): Uint8Array {
  const tr = mesh.triangles;
  const feature = new Uint8Array(edges.count);
  for (let e = 0; e < edges.count; e++) {
    if (edges.faces[e] !== 2) { feature[e] = 1; continue; }
    const h0 = edges.half0[e], h1 = edges.half1[e];
    const t0 = (h0 - (h0 % 3)) / 3, t1 = (h1 - (h1 % 3)) / 3;
    // Consistently oriented neighbours run the shared edge in opposite directions.
    const sameDirection = tr[h0] === tr[h1];
    const n0 = 3 * t0, n1 = 3 * t1;
    const l0 = normals[n0] * normals[n0] + normals[n0 + 1] * normals[n0 + 1] + normals[n0 + 2] * normals[n0 + 2];
    const l1 = normals[n1] * normals[n1] + normals[n1 + 1] * normals[n1 + 1] + normals[n1 + 2] * normals[n1 + 2];
    const cos = normals[n0] * normals[n1] + normals[n0 + 1] * normals[n1 + 1] + normals[n0 + 2] * normals[n1 + 2];
    if (sameDirection || l0 === 0 || l1 === 0 || mesh.conductor[t0] !== mesh.conductor[t1] || cos < cosFeature) feature[e] = 1;
  }
  return feature;
}

/**
 * Whether the mesh has any feature edge (a crease above `featureAngle` degrees, a boundary
 * or a non-manifold edge): where the surface charge density is singular.
 */
export function hasFeatureEdges(mesh: SurfaceMesh, featureAngle = 30): boolean {
  const f = featureEdges(mesh, meshEdges(mesh), faceNormals(mesh), Math.cos((featureAngle * Math.PI) / 180));
  for (let e = 0; e < f.length; e++) if (f[e]) return true;
  return false;
}

