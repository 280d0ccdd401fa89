/**
 * Uniform refinement: every triangle split into four at new points on its edges, each new
 * point placed on the true surface as far as the input knows it.
 *
 * Straight midpoints would keep the facets of the coarse mesh, so a refinement sequence
 * would converge to the faceted body instead of the curved one the CAD model drew.
 *
 * With a reference surface (`mesh.faces` and `mesh.reference`: CAD input, generated shapes)
 * each new point goes onto it (reference-surface.ts): the new point of an edge inside face f
 * onto face f (starting from the PN point below with the reference's normals at the two
 * ends), of an edge between faces f and g onto the curve where they meet, of a free rim edge
 * onto the face's rim. `faces` passes to the children (triangle t gives 4t … 4t+3) and the
 * reference is kept, so every later level does the same.
 *
 * Without one, the surface is rebuilt from the mesh. Midpoints are placed on the cubic edge
 * curve of Curved PN Triangles (A. Vlachos, J. Peters, C. Boyd, J. L. Mitchell, "Curved PN
 * Triangles", ACM Symposium on Interactive 3D Graphics 2001, section 3): for an edge P1-P2
 * with vertex normals N1, N2 the Bezier control points are b210 = (2 P1 + P2 - w12 N1)/3 with
 * w12 = (P2 - P1).N1, and symmetrically b120; the curve at t = 1/2 is
 *   (P1 + 3 b210 + 3 b120 + P2)/8 = (P1 + P2)/2 - (w12 N1 + w21 N2)/8.
 * The curve interpolates the vertices and is tangent to the planes normal to N1 and N2,
 * so for a sphere the new points are off the surface by O(h^4) (see tests/mesh/refine.test.ts).
 *
 * Which edges are curved is decided per patch, not from one averaged vertex normal:
 * - Flat faces of the part (planarRegions, planar-regions.ts: coplanar regions wide against
 *   the facets beside them) stay exactly flat: an edge inside one, or between two, is split at
 *   its straight midpoint. Coplanarity alone is not enough (a quad-split cylinder strip is two
 *   coplanar triangles whose diagonal must bulge), which is what the width rule settles.
 * - An edge is a feature edge, kept straight, when it is a boundary (open sheet rim),
 *   non-manifold, joins two conductors or two inconsistently oriented or degenerate
 *   triangles, or its dihedral angle exceeds the feature angle — except an edge where a flat
 *   face meets a curved patch (a plate and the cylinder of its hole, a face and its fillet):
 *   its new point stays in the flat face's plane, on the PN edge curve of the curved side's
 *   normals projected into that plane and renormalised. That is the circle where a plate
 *   meets a hole's cylinder (to O(h^4)), and straight where a fillet meets its face
 *   tangentially (the projected normals are then square to the edge).
 * - Curved patches: around a vertex, the corners of curved-facet triangles joined through
 *   non-feature edges form one patch with its own normal: the mean of its face normals with
 *   the weights of N. Max, "Weights for computing vertex normals from facet normals",
 *   J. Graphics Tools 4(2), 1999, exact when the vertex and its neighbours lie on a sphere
 *   (angle weights are only first-order accurate on irregular meshes and would cap the
 *   midpoint error at O(h^2)). Where a curved patch meets a flat face through an edge of
 *   less than half the feature angle, the vertex takes the flat face's normal on both sides:
 *   the curved patch's own facets there give a normal tilted by half a facet angle, and such
 *   a junction between a flat face and a curved one is, on CAD parts, a tangent blend (a
 *   fillet). Measured on a CAD-style filleted prism (tests/mesh/refine.test.ts, 15° facets):
 *   the fillet's new points land 1.1e-7 m off the true 1 mm cylinder, against 4.3e-6 m
 *   with the curved side's one-sided normals and 8.6e-6 m for straight midpoints; a least-squares
 *   quadric fit was not needed for that. Steeper smooth junctions (a shallow crease) keep the
 *   curved side's own normal.
 *
 * Each refinement reports how far it moved its new points off the straight midpoints
 * (relative to the edge length): zero to rounding means the refined mesh is nested in the
 * coarse one, the same flat panels split, which is what makes Galerkin's finest capacitance a
 * lower bound (src/extract/accuracy.ts).
 */
import type { SurfaceMesh } from "./model.js";
import { triangleArea } from "../geometry/triangle.js";
import { meshEdges, faceNormals, featureEdges, type MeshEdges } from "./edges.js";
import { planarRegions } from "./planar-regions.js";
import { referenceProjector, type ReferenceProjector } from "./reference-surface.js";

export { hasFeatureEdges } from "./edges.js";

export interface RefineOptions {
  /** Place new points on the surface (true, default) or at the straight midpoints. */
  smooth?: boolean;
  /** Dihedral angle above which an edge is a crease and stays straight; degrees, default 30. */
  featureAngle?: number;
  /** Without a reference: give a curved patch the flat face's normal where they meet through a smooth edge (tangent blends; default true). */
  tangentBlends?: boolean;
}

/** A refinement and how far it moved the geometry. */
export interface RefinedMesh {
  mesh: SurfaceMesh;
  /** Largest distance of a new point from its edge's straight midpoint, over that edge's length (0 when every edge was split straight). */
  displacement: number;
}

/**
 * Displacements below this (relative to the edge) are rounding: a projection onto a plane
 * moves a midpoint by a few ulps of its coordinates, which is below 1e-9 of any edge sigmesh
 * accepts (physical-size.ts bounds the coordinates against the mesh's size).
 */
export const NESTED_DISPLACEMENT = 1e-9;

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
 * Split each triangle into four; new vertices on the edges shared between neighbours,
 * conductor index (and face) kept, old vertices unchanged. Triangle count x4, orientation kept.
 */
export function refineUniform(mesh: SurfaceMesh, opts: RefineOptions = {}): SurfaceMesh {
  return refineLevel(mesh, opts).mesh;
}

/**
 * Whether the mesh lies on its reference surface: a sample of its vertices (up to 64, spread
 * over the triangles) each within 1e-6 of the mesh's size of its own face. A mesh moved without
 * its reference (positions changed by hand, not by a placement that moves both) would otherwise
 * have its new points pulled onto a surface elsewhere; it is refined from the mesh alone instead.
 */
function onReference(mesh: SurfaceMesh, projector: ReferenceProjector): boolean {
  const p = mesh.positions, tr = mesh.triangles, faces = mesh.faces!;
  const nt = tr.length / 3;
  if (nt === 0) return true;
  let lo0 = Infinity, lo1 = Infinity, lo2 = Infinity, hi0 = -Infinity, hi1 = -Infinity, hi2 = -Infinity;
  for (let i = 0; i < p.length; i += 3) {
    lo0 = Math.min(lo0, p[i]); lo1 = Math.min(lo1, p[i + 1]); lo2 = Math.min(lo2, p[i + 2]);
    hi0 = Math.max(hi0, p[i]); hi1 = Math.max(hi1, p[i + 1]); hi2 = Math.max(hi2, p[i + 2]);
  }
  const tol = 1e-6 * Math.hypot(hi0 - lo0, hi1 - lo1, hi2 - lo2);
  const out = new Float64Array(6);
  const samples = Math.min(64, nt);
  for (let k = 0; k < samples; k++) {
    const t = Math.floor((k * nt) / samples);
    // Triangles of no face (a mesh part joined with a CAD part: NO_FACE) say nothing here.
    if (faces[t] >= projector.reference.faceCount) continue;
    const v = 3 * tr[3 * t];
    if (!projector.projectToFace(faces[t], p[v], p[v + 1], p[v + 2], out)) return false;
    if (Math.hypot(out[0] - p[v], out[1] - p[v + 1], out[2] - p[v + 2]) > tol) return false;
  }
  return true;
}

/** The new point of every edge of a mesh, placed as refinement places it (see the file comment). */
export interface EdgePoints {
  /** The mesh's vertices followed by one new point per edge (edge e's at vertex nv + e); metres. */
  positions: Float64Array;
  /** Whether the new points went onto the mesh's reference surface (then `faces` and `reference` pass to the children). */
  withReference: boolean;
  /** Per edge: distance of its new point from the edge's straight midpoint over the edge's length (0 for an edge of zero length). */
  displacement: Float64Array;
}

/**
 * New points on the edges of `edges` (the table of `mesh`): on the reference surface when the
 * mesh carries one and lies on it, else on the surface rebuilt from the mesh (flat regions
 * flat, PN curves in curved patches), or straight midpoints with `smooth: false`. The one
 * placement both uniform (`refineLevel`) and local (adaptive-refine.ts) refinement use. With
 * `only`, edges e with `only[e] = 0` keep their straight midpoint, saving the placement of
 * points the caller will not use.
 */
export function edgePoints(mesh: SurfaceMesh, edges: MeshEdges, opts: RefineOptions = {}, only?: Uint8Array): EdgePoints {
  const smooth = opts.smooth ?? true;
  const featureAngle = opts.featureAngle ?? 30;
  if (!(featureAngle >= 0 && featureAngle <= 180)) throw new RangeError(`refineUniform: featureAngle must be in [0, 180] degrees, got ${featureAngle}`);
  const p = mesh.positions;
  const nv = p.length / 3, nt = mesh.triangles.length / 3;
  const ne = edges.count;
  const positions = new Float64Array(3 * (nv + ne));
  positions.set(p);
  for (let e = 0; e < ne; e++) {
    const a = 3 * edges.v0[e], b = 3 * edges.v1[e], o = 3 * (nv + e);
    positions[o] = 0.5 * (p[a] + p[b]); positions[o + 1] = 0.5 * (p[a + 1] + p[b + 1]); positions[o + 2] = 0.5 * (p[a + 2] + p[b + 2]);
  }
  const projector = smooth && mesh.faces !== undefined && mesh.reference !== undefined && mesh.faces.length === nt
    ? referenceProjector(mesh.reference) : undefined;
  const withReference = projector !== undefined && onReference(mesh, projector);
  if (withReference) placeOnReference(mesh, edges, projector, positions, only);
  else if (smooth) placeOnPatches(mesh, edges, featureAngle, opts.tangentBlends ?? true, positions, only);

  const displacement = new Float64Array(ne);
  for (let e = 0; e < ne; e++) {
    const a = 3 * edges.v0[e], b = 3 * edges.v1[e], o = 3 * (nv + e);
    const len = Math.hypot(p[b] - p[a], p[b + 1] - p[a + 1], p[b + 2] - p[a + 2]);
    if (len === 0) continue;
    displacement[e] = Math.hypot(positions[o] - 0.5 * (p[a] + p[b]), positions[o + 1] - 0.5 * (p[a + 1] + p[b + 1]), positions[o + 2] - 0.5 * (p[a + 2] + p[b + 2])) / len;
  }
  return { positions, withReference, displacement };
}

/** `refineUniform`, with the largest displacement of a new point off its straight midpoint. */
export function refineLevel(mesh: SurfaceMesh, opts: RefineOptions = {}): RefinedMesh {
  const tr = mesh.triangles;
  const nv = mesh.positions.length / 3, nt = tr.length / 3, nh = tr.length;
  const edges = meshEdges(mesh);
  const { positions, withReference, displacement: moved } = edgePoints(mesh, edges, opts);
  let displacement = 0;
  for (let e = 0; e < edges.count; e++) if (moved[e] > displacement) displacement = moved[e];

  const triangles = new Uint32Array(4 * nh);
  const conductor = new Uint32Array(4 * nt);
  const faces = withReference ? new Uint32Array(4 * nt) : undefined;
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
    if (faces) { const f = mesh.faces![t]; faces[4 * t] = f; faces[4 * t + 1] = f; faces[4 * t + 2] = f; faces[4 * t + 3] = f; }
  }
  const refined: SurfaceMesh = { positions, triangles, conductor, names: [...mesh.names] };
  if (faces) { refined.faces = faces; refined.reference = mesh.reference; }
  return { mesh: refined, displacement };
}

const ends = new Float64Array(12);
const proj = new Float64Array(6);

/** New points on the reference surface (see the file comment); positions hold the straight midpoints on entry. */
function placeOnReference(mesh: SurfaceMesh, edges: MeshEdges, R: ReferenceProjector, positions: Float64Array, only?: Uint8Array): void {
  const p = mesh.positions, tr = mesh.triangles, faces = mesh.faces!;
  const nv = p.length / 3;
  for (let e = 0; e < edges.count; e++) {
    if (only !== undefined && only[e] === 0) continue;
    const o = 3 * (nv + e);
    const mx = positions[o], my = positions[o + 1], mz = positions[o + 2];
    const h0 = edges.half0[e], h1 = edges.half1[e];
    const f0 = faces[(h0 - (h0 % 3)) / 3];
    let ok: boolean;
    if (h1 < 0) {
      ok = R.projectToRim(f0, mx, my, mz, proj) || R.projectToFace(f0, mx, my, mz, proj);
    } else {
      const f1 = faces[(h1 - (h1 % 3)) / 3];
      if (f1 !== f0) ok = R.projectToCurve(f0, f1, mx, my, mz, proj);
      else {
        // Start from the PN point of the reference's normals at the two ends, which is on the
        // face to O(h^4): the closest point from there cannot jump to another sheet of the face.
        const a = 3 * tr[h0], b = 3 * tr[nextCorner(h0)];
        ok = R.projectToFace(f0, p[a], p[a + 1], p[a + 2], proj);
        if (ok) { ends[0] = proj[3]; ends[1] = proj[4]; ends[2] = proj[5]; ok = R.projectToFace(f0, p[b], p[b + 1], p[b + 2], proj); }
        if (ok) {
          const dx = p[b] - p[a], dy = p[b + 1] - p[a + 1], dz = p[b + 2] - p[a + 2];
          const wab = dx * ends[0] + dy * ends[1] + dz * ends[2];
          const wba = -(dx * proj[3] + dy * proj[4] + dz * proj[5]);
          const sx = mx - (wab * ends[0] + wba * proj[3]) / 8;
          const sy = my - (wab * ends[1] + wba * proj[4]) / 8;
          const sz = mz - (wab * ends[2] + wba * proj[5]) / 8;
          ok = R.projectToFace(f0, sx, sy, sz, proj);
        }
      }
    }
    if (ok) { positions[o] = proj[0]; positions[o + 1] = proj[1]; positions[o + 2] = proj[2]; }
  }
}

/** New points on the surface rebuilt from the mesh: flat regions flat, PN curves within curved patches (see the file comment). */
function placeOnPatches(mesh: SurfaceMesh, edges: MeshEdges, featureAngle: number, tangentBlends: boolean, positions: Float64Array, only?: Uint8Array): void {
  const cosFeature = Math.cos((featureAngle * Math.PI) / 180);
  const p = mesh.positions, tr = mesh.triangles;
  const nv = p.length / 3, nh = tr.length, ne = edges.count;
  const normals = faceNormals(mesh);
  const feature = featureEdges(mesh, edges, normals, cosFeature);
  const regions = planarRegions(mesh, { featureAngle }, edges);
  const flat = new Uint8Array(nh / 3);
  for (let t = 0; t < flat.length; t++) flat[t] = regions.flat[regions.region[t]];

  // Curved patches: corners of curved triangles joined through smooth edges between curved triangles.
  const parent = new Uint32Array(nh);
  for (let h = 0; h < nh; h++) parent[h] = h;
  for (let e = 0; e < ne; e++) {
    if (feature[e]) continue;
    const h0 = edges.half0[e], h1 = edges.half1[e];
    if (flat[(h0 - (h0 % 3)) / 3] || flat[(h1 - (h1 % 3)) / 3]) continue;
    // h0 runs a->b, h1 runs b->a: corner h0 (a) pairs with next(h1) (a), next(h0) (b) with h1 (b).
    union(parent, h0, nextCorner(h1));
    union(parent, nextCorner(h0), h1);
  }
  const acc = new Float64Array(3 * nh);
  for (let h = 0; h < nh; h++) {
    const t = (h - (h % 3)) / 3;
    if (flat[t]) continue;
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
  // Tangent blends: a curved patch's corner at a vertex it shares, through a smooth edge, with a
  // flat face takes that face's normal (see the file comment).
  const blend = new Int32Array(nh).fill(-1);
  const cosBlend = Math.cos((featureAngle * Math.PI) / 360);
  for (let e = 0; e < ne && tangentBlends; e++) {
    if (feature[e]) continue;
    const h0 = edges.half0[e], h1 = edges.half1[e];
    const t0 = (h0 - (h0 % 3)) / 3, t1 = (h1 - (h1 % 3)) / 3;
    if (flat[t0] === flat[t1]) continue;
    const hc = flat[t0] ? h1 : h0, r = regions.region[flat[t0] ? t0 : t1];
    // Half a facet angle of a tangent blend is well under half the feature angle; a steeper
    // junction is taken for a shallow crease, and the curved side keeps its own normal.
    const tc = (hc - (hc % 3)) / 3;
    if (normals[3 * tc] * regions.normal[3 * r] + normals[3 * tc + 1] * regions.normal[3 * r + 1] + normals[3 * tc + 2] * regions.normal[3 * r + 2] < cosBlend) continue;
    blend[findRoot(parent, hc)] = r;
    blend[findRoot(parent, nextCorner(hc))] = r;
  }
  const cornerNormal = new Float64Array(3 * nh);
  for (let h = 0; h < nh; h++) {
    const t = (h - (h % 3)) / 3;
    const root = findRoot(parent, h);
    if (flat[t] || blend[root] >= 0) {
      const r = 3 * (flat[t] ? regions.region[t] : blend[root]);
      cornerNormal[3 * h] = regions.normal[r]; cornerNormal[3 * h + 1] = regions.normal[r + 1]; cornerNormal[3 * h + 2] = regions.normal[r + 2];
      continue;
    }
    const r = 3 * root;
    const x = acc[r], y = acc[r + 1], z = acc[r + 2];
    const len = Math.sqrt(x * x + y * y + z * z);
    if (len > 0) { cornerNormal[3 * h] = x / len; cornerNormal[3 * h + 1] = y / len; cornerNormal[3 * h + 2] = z / len; }
  }

  for (let e = 0; e < ne; e++) {
    if (edges.faces[e] !== 2 || (only !== undefined && only[e] === 0)) continue;
    const h0 = edges.half0[e], h1 = edges.half1[e];
    const t0 = (h0 - (h0 % 3)) / 3, t1 = (h1 - (h1 % 3)) / 3;
    if (flat[t0] && flat[t1]) continue;
    const o = 3 * (nv + e);
    let h = h0, plane = -1;
    if (flat[t0] || flat[t1]) {
      // Flat meets curved: only a crease by angle may bend (not a seam between conductors, a
      // misoriented or a degenerate neighbour).
      if (feature[e] && (tr[h0] === tr[h1] || mesh.conductor[t0] !== mesh.conductor[t1] || zero(normals, t0) || zero(normals, t1))) continue;
      h = flat[t0] ? h1 : h0;
      plane = regions.region[flat[t0] ? t0 : t1];
    } else if (feature[e]) continue;
    const a = 3 * tr[h], b = 3 * tr[nextCorner(h)];
    const na = 3 * h, nb = 3 * nextCorner(h);
    let ax = cornerNormal[na], ay = cornerNormal[na + 1], az = cornerNormal[na + 2];
    let bx = cornerNormal[nb], by = cornerNormal[nb + 1], bz = cornerNormal[nb + 2];
    if (plane >= 0) {
      // The curved side's normals projected into the flat face's plane and renormalised.
      const px = regions.normal[3 * plane], py = regions.normal[3 * plane + 1], pz = regions.normal[3 * plane + 2];
      let k = ax * px + ay * py + az * pz;
      ax -= k * px; ay -= k * py; az -= k * pz;
      let l = Math.sqrt(ax * ax + ay * ay + az * az);
      if (l > 1e-6) { ax /= l; ay /= l; az /= l; } else { ax = 0; ay = 0; az = 0; }
      k = bx * px + by * py + bz * pz;
      bx -= k * px; by -= k * py; bz -= k * pz;
      l = Math.sqrt(bx * bx + by * by + bz * bz);
      if (l > 1e-6) { bx /= l; by /= l; bz /= l; } else { bx = 0; by = 0; bz = 0; }
    }
    const dx = p[b] - p[a], dy = p[b + 1] - p[a + 1], dz = p[b + 2] - p[a + 2];
    // Vlachos et al. 2001: w_ij = (P_j - P_i).N_i; midpoint = (P1+P2)/2 - (w12 N1 + w21 N2)/8.
    const wab = dx * ax + dy * ay + dz * az;
    const wba = -(dx * bx + dy * by + dz * bz);
    let mx = positions[o] - (wab * ax + wba * bx) / 8;
    let my = positions[o + 1] - (wab * ay + wba * by) / 8;
    let mz = positions[o + 2] - (wab * az + wba * bz) / 8;
    if (plane >= 0) {
      // Back into the plane exactly: the ends are on it only to the region's tolerance.
      const px = regions.normal[3 * plane], py = regions.normal[3 * plane + 1], pz = regions.normal[3 * plane + 2];
      const s = (positions[o] - mx) * px + (positions[o + 1] - my) * py + (positions[o + 2] - mz) * pz;
      mx += s * px; my += s * py; mz += s * pz;
    }
    positions[o] = mx; positions[o + 1] = my; positions[o + 2] = mz;
  }
}

function zero(n: Float64Array, t: number): boolean {
  return n[3 * t] === 0 && n[3 * t + 1] === 0 && n[3 * t + 2] === 0;
}
