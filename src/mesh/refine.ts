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
import { triangleArea } from "../geometry/triangle.js";
import { meshEdges, faceNormals, featureEdges } from "./edges.js";

export interface RefineOptions {
  /** Place midpoints on the PN-triangle edge curve (true, default) or on the straight edge. */
  smooth?: boolean;
  /** Dihedral angle above which an edge is a crease and stays straight; degrees, default 30. */
  featureAngle?: number;
}

const nextCorner = (h: number): number => h - (h % 3) + ((h % 3) + 1) % 3;

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
