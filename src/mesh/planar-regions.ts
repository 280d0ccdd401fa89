/**
 * Planar regions of a triangle mesh, and which of them are flat faces of the part.
 *
 * A region is a maximal edge-connected set of triangles of one conductor, joined across
 * manifold, consistently oriented edges, whose vertices all lie on one plane to within
 * rounding (`tolerance` × the largest coordinate; the default covers STL's float32
 * coordinates). The plane is the one of the region's largest triangle, its seed, whose
 * normal is the best conditioned. Growth is greedy in decreasing triangle area.
 *
 * Coplanarity alone does not make a face flat: a faceted cylinder is made of planar strips,
 * one panel wide, and a sphere of single triangles. What tells a facet from a flat face is
 * its width against the facets beside it. A facet of a uniformly faceted curved surface is
 * about as wide as its neighbours; a flat face of the part next to a tessellated fillet is
 * many fillet facets wide. So a region is `flat` when it has no smooth neighbour at all (it
 * is bounded by creases of more than `featureAngle`, by rims or by other conductors: a box
 * face), or when its width 2A/P (area over half the perimeter: the width of a long strip,
 * half the side of a square) is at least `flatWidthRatio` times the largest height, over
 * the shared edge, of a neighbouring triangle across a smooth edge. The ratio is ours
 * (default 2): facets of uniform faceting score 0.3–1, flat faces beside fillets of radius
 * up to their own width score 3 and more.
 */
import type { SurfaceMesh } from "./model.js";
import { triangleArea, triangleNormal } from "../geometry/triangle.js";
import { meshEdges, type MeshEdges } from "./edges.js";

export interface PlanarRegionOptions {
  /** Vertices within tolerance × (largest absolute coordinate) of the plane are on it; default 2e-7 (float32 rounding, twice over). */
  tolerance?: number;
  /** Dihedral angle above which an edge is a crease; degrees, default 30 (as refineUniform). */
  featureAngle?: number;
  /** Width against the neighbouring facets' heights from which a region is a flat face; default 2. */
  flatWidthRatio?: number;
  /** When the mesh carries CAD faces (`mesh.faces`), never join triangles of different faces into one region. */
  byFace?: boolean;
}

export interface PlanarRegions {
  /** Number of regions. */
  count: number;
  /** Region of each triangle. */
  region: Uint32Array;
  /** Unit normal of each region's plane, 3 per region (its seed triangle's). */
  normal: Float64Array;
  /** The plane of region r is normal·x = offset[r]. */
  offset: Float64Array;
  /** 1 when the region is a flat face of the part, 0 when it is a facet of a curved surface. */
  flat: Uint8Array;
  /** Number of triangles in each region. */
  size: Uint32Array;
  /** Area of each region; square metres. */
  area: Float64Array;
}

/** The planar regions of `mesh` (see the file comment). `edges` may be passed when already built. */
export function planarRegions(mesh: SurfaceMesh, opts: PlanarRegionOptions = {}, edges: MeshEdges = meshEdges(mesh)): PlanarRegions {
  const p = mesh.positions, tr = mesh.triangles;
  const nt = tr.length / 3;
  const cosFeature = Math.cos(((opts.featureAngle ?? 30) * Math.PI) / 180);
  const ratio = opts.flatWidthRatio ?? 2;
  let scale = 0;
  for (let i = 0; i < p.length; i++) { const a = Math.abs(p[i]); if (a > scale) scale = a; }
  const tol = (opts.tolerance ?? 2e-7) * scale;

  const tn = new Float64Array(3 * nt), area = new Float64Array(nt);
  for (let t = 0; t < nt; t++) {
    triangleNormal(tn, 3 * t, p, 3 * tr[3 * t], 3 * tr[3 * t + 1], 3 * tr[3 * t + 2]);
    area[t] = triangleArea(p, 3 * tr[3 * t], 3 * tr[3 * t + 1], 3 * tr[3 * t + 2]);
  }
  const across = neighboursAcross(mesh, edges);

  const order = Array.from({ length: nt }, (_, i) => i).sort((a, b) => area[b] - area[a] || a - b);
  const region = new Uint32Array(nt).fill(0xffffffff);
  const normal: number[] = [], offset: number[] = [], size: number[] = [], regionArea: number[] = [];
  const stack = new Int32Array(nt);
  const faces = opts.byFace ? mesh.faces : undefined;
  const onPlane = (t: number, nx: number, ny: number, nz: number, d: number): boolean => {
    for (let j = 0; j < 3; j++) {
      const v = 3 * tr[3 * t + j];
      if (Math.abs(nx * p[v] + ny * p[v + 1] + nz * p[v + 2] - d) > tol) return false;
    }
    return true;
  };
  for (const seed of order) {
    if (region[seed] !== 0xffffffff) continue;
    const r = size.length;
    const nx = tn[3 * seed], ny = tn[3 * seed + 1], nz = tn[3 * seed + 2];
    const v0 = 3 * tr[3 * seed];
    const d = nx * p[v0] + ny * p[v0 + 1] + nz * p[v0 + 2];
    let top = 0, count = 0, a = 0;
    region[seed] = r; stack[top++] = seed;
    while (top > 0) {
      const t = stack[--top];
      count++; a += area[t];
      for (let j = 0; j < 3; j++) {
        const u = across[3 * t + j];
        if (u < 0 || region[u] !== 0xffffffff) continue;
        if (faces && faces[u] !== faces[t]) continue;
        // Same side of the plane (a fold back onto the plane is a crease, not a region).
        if (tn[3 * u] * nx + tn[3 * u + 1] * ny + tn[3 * u + 2] * nz < 0.5) continue;
        if (!onPlane(u, nx, ny, nz, d)) continue;
        region[u] = r; stack[top++] = u;
      }
    }
    normal.push(nx, ny, nz); offset.push(d); size.push(count); regionArea.push(a);
  }
  const count = size.length;

  // Perimeter of each region and the tallest neighbouring facet across a smooth boundary edge.
  const perimeter = new Float64Array(count), tallest = new Float64Array(count);
  for (let h = 0; h < 3 * nt; h++) {
    const t = (h - (h % 3)) / 3, r = region[t];
    const a = 3 * tr[h], b = 3 * tr[h - (h % 3) + ((h % 3) + 1) % 3];
    const len = Math.hypot(p[b] - p[a], p[b + 1] - p[a + 1], p[b + 2] - p[a + 2]);
    const u = across[h];
    if (u >= 0 && region[u] === r) continue;
    perimeter[r] += len;
    if (u < 0 || len === 0) continue;
    const cos = tn[3 * t] * tn[3 * u] + tn[3 * t + 1] * tn[3 * u + 1] + tn[3 * t + 2] * tn[3 * u + 2];
    if (cos < cosFeature) continue;
    const height = (2 * area[u]) / len;
    if (height > tallest[r]) tallest[r] = height;
  }
  const flat = new Uint8Array(count);
  for (let r = 0; r < count; r++) {
    flat[r] = tallest[r] === 0 || (perimeter[r] > 0 && (2 * regionArea[r]) / perimeter[r] >= ratio * tallest[r]) ? 1 : 0;
  }
  return {
    count, region,
    normal: Float64Array.from(normal), offset: Float64Array.from(offset), flat,
    size: Uint32Array.from(size), area: Float64Array.from(regionArea),
  };
}

/** The triangle across each half-edge 3t+j: over a manifold, consistently oriented edge of the same conductor; else -1. */
export function neighboursAcross(mesh: SurfaceMesh, edges: MeshEdges): Int32Array {
  const tr = mesh.triangles;
  const across = new Int32Array(tr.length).fill(-1);
  for (let e = 0; e < edges.count; e++) {
    if (edges.faces[e] !== 2) continue;
    const h0 = edges.half0[e], h1 = edges.half1[e];
    if (tr[h0] === tr[h1]) continue;
    const t0 = (h0 - (h0 % 3)) / 3, t1 = (h1 - (h1 % 3)) / 3;
    if (mesh.conductor[t0] !== mesh.conductor[t1]) continue;
    across[h0] = t1; across[h1] = t0;
  }
  return across;
}
