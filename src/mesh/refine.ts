/**
 * Uniform refinement: every triangle split into four at its edge midpoints.
 *
 * Flat midpoints would keep the facets of the coarse mesh, so a refinement sequence
 * would converge to the faceted body instead of the curved one the CAD model drew.
 * Midpoints are therefore placed on the cubic edge curve of Curved PN Triangles
 * (A. Vlachos, J. Peters, C. Boyd, J. L. Mitchell, "Curved PN Triangles", ACM Symposium
 * on Interactive 3D Graphics 2001, section 3): for an edge P1-P2 with vertex normals
 * N1, N2 the Bezier control points are b210 = (2 P1 + P2 - w12 N1)/3 with
 * w12 = (P2 - P1).N1, and symmetrically b120; the curve at t = 1/2 is
 *   (P1 + 3 b210 + 3 b120 + P2)/8 = (P1 + P2)/2 - (w12 N1 + w21 N2)/8.
 * The curve interpolates the vertices and is tangent to the planes normal to N1 and N2,
 * so for a sphere the new points are off the surface by O(h^4) (see tests/mesh/refine.test.ts).
 *
 * Vertex normals are taken per smooth patch. An edge is a feature edge, kept straight, when
 * it is a boundary (open sheet rim), non-manifold, joins two conductors or two inconsistently
 * oriented or degenerate triangles, or its dihedral angle exceeds the feature angle. Around
 * a vertex the triangle corners joined through non-feature edges form one patch, and each
 * patch has its own normal: the mean of its face normals with the weights of N. Max,
 * "Weights for computing vertex normals from facet normals", J. Graphics Tools 4(2), 1999,
 * which are exact when the vertex and its neighbours lie on a sphere. Angle weights are only
 * first-order accurate on irregular meshes and would cap the midpoint error at O(h^2).
 * Flat faces thus keep the exact face normal, so box faces stay flat and box edges straight.
 */
import type { SurfaceMesh } from "./model.js";
import { triangleArea, triangleNormal } from "../geometry/triangle.js";

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

export interface RefineOptions {
  /** Place midpoints on the PN-triangle edge curve (true, default) or on the straight edge. */
  smooth?: boolean;
  /** Dihedral angle above which an edge is a crease and stays straight; degrees, default 30. */
  featureAngle?: number;
}

const nextCorner = (h: number): number => h - (h % 3) + ((h % 3) + 1) % 3;

/** Unit normals of the triangles (zero for degenerate ones), 3 per triangle. */
function faceNormals(mesh: SurfaceMesh): Float64Array {
  const p = mesh.positions, tr = mesh.triangles;
  const nt = tr.length / 3;
  const n = new Float64Array(3 * nt);
  for (let t = 0; t < nt; t++) {
    triangleNormal(n, 3 * t, p, 3 * tr[3 * t], 3 * tr[3 * t + 1], 3 * tr[3 * t + 2]);
  }
  return n;
}

function findRoot(parent: Uint32Array, i: number): number {
  let r = i;
  while (parent[r] !== r) r = parent[r];
  while (parent[i] !== r) { const next = parent[i]; parent[i] = r; i = next; }
  return r;
}

function union(parent: Uint32Array, i: number, j: number): void {
  const a = findRoot(parent, i), b = findRoot(parent, j);
  if (a !== b) parent[a < b ? b : a] = a < b ? a : b;
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

/**
 * Split each triangle into four; new vertices at edge midpoints shared between neighbours,
 * conductor index kept, old vertices unchanged. Triangle count x4, orientation kept.
 */
export function refineUniform(mesh: SurfaceMesh, opts: RefineOptions = {}): SurfaceMesh {
  const smooth = opts.smooth ?? true;
  const featureAngle = opts.featureAngle ?? 30;
  if (!(featureAngle >= 0 && featureAngle <= 180)) throw new RangeError(`refineUniform: featureAngle must be in [0, 180] degrees, got ${featureAngle}`);
  const p = mesh.positions, tr = mesh.triangles;
  const nv = p.length / 3, nt = tr.length / 3, nh = tr.length;
  const edges = meshEdges(mesh);
  const ne = edges.count;
  const positions = new Float64Array(3 * (nv + ne));
  positions.set(p);

  let cornerNormal: Float64Array | undefined;
  let feature: Uint8Array | undefined;
  if (smooth) {
    const normals = faceNormals(mesh);
    feature = featureEdges(mesh, edges, normals, Math.cos((featureAngle * Math.PI) / 180));
    const parent = new Uint32Array(nh);
    for (let h = 0; h < nh; h++) parent[h] = h;
    for (let e = 0; e < ne; e++) {
      if (feature[e]) continue;
      const h0 = edges.half0[e], h1 = edges.half1[e];
      // h0 runs a->b, h1 runs b->a: corner h0 (a) pairs with next(h1) (a), next(h0) (b) with h1 (b).
      union(parent, h0, nextCorner(h1));
      union(parent, nextCorner(h0), h1);
    }
    const acc = new Float64Array(3 * nh);
    for (let h = 0; h < nh; h++) {
      const t = (h - (h % 3)) / 3;
      const a = 3 * tr[h], b = 3 * tr[nextCorner(h)], c = 3 * tr[nextCorner(nextCorner(h))];
      const ux = p[b] - p[a], uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2];
      const vx = p[c] - p[a], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
      // Max's weight sin(alpha)/(|u||v|) on the unit face normal, i.e. (u x v)/(|u|^2 |v|^2).
      const uu = ux * ux + uy * uy + uz * uz, vv = vx * vx + vy * vy + vz * vz;
      if (uu === 0 || vv === 0) continue;
      // |u × v| = 2·area exactly (doubling is exact).
      const weight = 2 * triangleArea(p, a, b, c) / (uu * vv);
      const r = 3 * findRoot(parent, h);
      acc[r] += weight * normals[3 * t];
      acc[r + 1] += weight * normals[3 * t + 1];
      acc[r + 2] += weight * normals[3 * t + 2];
    }
    cornerNormal = new Float64Array(3 * nh);
    for (let h = 0; h < nh; h++) {
      const r = 3 * findRoot(parent, h);
      const x = acc[r], y = acc[r + 1], z = acc[r + 2];
      const len = Math.sqrt(x * x + y * y + z * z);
      if (len > 0) { cornerNormal[3 * h] = x / len; cornerNormal[3 * h + 1] = y / len; cornerNormal[3 * h + 2] = z / len; }
    }
  }

  for (let e = 0; e < ne; e++) {
    const o = 3 * (nv + e);
    const h = edges.half0[e];
    const a = 3 * tr[h], b = 3 * tr[nextCorner(h)];
    let mx = 0.5 * (p[a] + p[b]), my = 0.5 * (p[a + 1] + p[b + 1]), mz = 0.5 * (p[a + 2] + p[b + 2]);
    if (cornerNormal !== undefined && feature !== undefined && feature[e] === 0) {
      const na = 3 * h, nb = 3 * nextCorner(h);
      const dx = p[b] - p[a], dy = p[b + 1] - p[a + 1], dz = p[b + 2] - p[a + 2];
      // Vlachos et al. 2001: w_ij = (P_j - P_i).N_i; midpoint = (P1+P2)/2 - (w12 N1 + w21 N2)/8.
      const wab = dx * cornerNormal[na] + dy * cornerNormal[na + 1] + dz * cornerNormal[na + 2];
      const wba = -(dx * cornerNormal[nb] + dy * cornerNormal[nb + 1] + dz * cornerNormal[nb + 2]);
      mx -= (wab * cornerNormal[na] + wba * cornerNormal[nb]) / 8;
      my -= (wab * cornerNormal[na + 1] + wba * cornerNormal[nb + 1]) / 8;
      mz -= (wab * cornerNormal[na + 2] + wba * cornerNormal[nb + 2]) / 8;
    }
    positions[o] = mx; positions[o + 1] = my; positions[o + 2] = mz;
  }

  const triangles = new Uint32Array(4 * nh);
  const conductor = new Uint32Array(4 * nt);
  const eh = edges.edgeOfHalf;
  for (let t = 0; t < nt; t++) {
    const v0 = tr[3 * t], v1 = tr[3 * t + 1], v2 = tr[3 * t + 2];
    const m01 = nv + eh[3 * t], m12 = nv + eh[3 * t + 1], m20 = nv + eh[3 * t + 2];
    const o = 12 * t;
    triangles[o] = v0; triangles[o + 1] = m01; triangles[o + 2] = m20;
    triangles[o + 3] = v1; triangles[o + 4] = m12; triangles[o + 5] = m01;
    triangles[o + 6] = v2; triangles[o + 7] = m20; triangles[o + 8] = m12;
    triangles[o + 9] = m01; triangles[o + 10] = m12; triangles[o + 11] = m20;
    const c = mesh.conductor[t];
    conductor[4 * t] = c; conductor[4 * t + 1] = c; conductor[4 * t + 2] = c; conductor[4 * t + 3] = c;
  }
  return { positions, triangles, conductor, names: [...mesh.names] };
}
