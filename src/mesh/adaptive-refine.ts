/**
 * Local refinement: split the marked triangles, and as few others as a conforming mesh needs,
 * by newest-vertex bisection (NVB), in the edge-marking form of S. Funken, D. Praetorius,
 * P. Wissgott, "Efficient implementation of adaptive P1-FEM in Matlab", Comput. Methods Appl.
 * Math. 11 (2011), section 4.
 *
 * The vertex order of a triangle [v0, v1, v2] carries its state: (v0, v1) is its refinement
 * edge, v2 its newest vertex. Bisecting at the new point m of the refinement edge gives
 * [v2, v0, m] and [v1, v2, m]: both keep the parent's orientation, m is their newest vertex and
 * their refinement edges are the parent's two other edges. Marking a triangle marks its three
 * edges (as refineNVB of Funken et al. does), so a marked triangle is split into four, its
 * edges halved as in uniform refinement; the closure marks the refinement edge of every
 * triangle with a marked edge,
 * to a fixed point (one pass of a stack over edges: each edge enters once). A triangle is then
 * split by its marked edges: the refinement edge alone gives 2 children (green), with one
 * other edge 3 (blue, two variants), with all three 4 (bisec3, two levels of bisection). Every
 * marked edge is split at one new vertex shared by all its triangles, so the result has no
 * hanging vertex. Edges are vertex pairs (edges.ts): an edge on a seam between two conductors
 * that share its vertices, or a non-manifold edge, is split once for all its triangles.
 *
 * Shape: the descendants of a triangle under NVB fall into at most four similarity classes
 * (E. G. Sewell's and W. F. Mitchell's result, surveyed in W. F. Mitchell, "30 years of newest
 * vertex bisection", AIP Conf. Proc. 1738 (2016)): the triangle, its two children, and the
 * half of the parallelogram bisec3 leaves in the middle, whose angles are the children's angles
 * at v2 and pi - (the angle at v2). With the longest edge as the first refinement edge
 * (`withLongestRefinementEdges`) the children are longest-edge bisections, whose angles are at
 * least half the parent's smallest (I. G. Rosenberg, F. Stenger, "A lower bound on the angles of
 * triangles constructed by bisecting the longest side", Math. Comp. 29 (1975)); so no
 * triangle of any refinement has an angle under half the smallest angle of the initial mesh
 * (on flat faces; on curved ones new points leave the midpoints by O(h^2) of the edge and the
 * bound holds to that order).
 *
 * New points are placed exactly as uniform refinement places them (`edgePoints`, refine.ts):
 * on the reference surface when the mesh carries one, else on the surface rebuilt from the mesh.
 */
import type { SurfaceMesh } from "./model.js";
import { meshEdges } from "./edges.js";
import { edgePoints, type RefineOptions } from "./refine.js";

/** A local refinement of a mesh and where each new triangle came from. */
export interface LocalRefinement {
  /** Conforming, same orientation; conductor (and faces/reference) carried to the children. */
  mesh: SurfaceMesh;
  /** Per new triangle, the index of the input triangle it lies in (nondecreasing: children are stored in their parent's order). */
  parent: Uint32Array;
  /** Input triangles that were split (marked ones and those the closure added). */
  refined: number;
  /** Largest distance of a new point from its edge's straight midpoint over the edge's length, over the split edges (0 = nested). */
  displacement: number;
}

/**
 * Reorder each triangle's vertices (a rotation only, so the orientation is kept) so that its
 * longest edge is the refinement edge (v0, v1). Call once on the initial mesh: later meshes
 * carry NVB's own order. Ties keep the first of the longest edges in the input order.
 */
export function withLongestRefinementEdges(mesh: SurfaceMesh): SurfaceMesh {
  const p = mesh.positions, tr = mesh.triangles;
  const triangles = new Uint32Array(tr.length);
  for (let o = 0; o < tr.length; o += 3) {
    const a = tr[o], b = tr[o + 1], c = tr[o + 2];
    const lab = dist2(p, a, b), lbc = dist2(p, b, c), lca = dist2(p, c, a);
    if (lbc > lab && lbc >= lca) { triangles[o] = b; triangles[o + 1] = c; triangles[o + 2] = a; }
    else if (lca > lab && lca > lbc) { triangles[o] = c; triangles[o + 1] = a; triangles[o + 2] = b; }
    else { triangles[o] = a; triangles[o + 1] = b; triangles[o + 2] = c; }
  }
  return { ...mesh, triangles };
}

function dist2(p: Float64Array, i: number, j: number): number {
  const dx = p[3 * j] - p[3 * i], dy = p[3 * j + 1] - p[3 * i + 1], dz = p[3 * j + 2] - p[3 * i + 2];
  return dx * dx + dy * dy + dz * dz;
}

/**
 * Bisect the marked triangles (`marked[t]` nonzero; newest-vertex bisection, each marked
 * triangle into four) and as few others as conformity needs. Marking nothing returns the input mesh itself, each triangle its own parent.
 */
export function refineMarked(mesh: SurfaceMesh, marked: Uint8Array, opts: RefineOptions = {}): LocalRefinement {
  const tr = mesh.triangles;
  const nt = tr.length / 3, nh = tr.length, nv = mesh.positions.length / 3;
  if (marked.length !== nt) throw new RangeError(`refineMarked: ${marked.length} marks for ${nt} triangles`);
  const edges = meshEdges(mesh);
  const ne = edges.count, eh = edges.edgeOfHalf;

  // The half-edges on each edge (compressed rows): a non-manifold edge has more than two.
  const start = new Uint32Array(ne + 1);
  for (let h = 0; h < nh; h++) start[eh[h] + 1]++;
  for (let e = 0; e < ne; e++) start[e + 1] += start[e];
  const fill = start.slice(0, ne);
  const halves = new Uint32Array(nh);
  for (let h = 0; h < nh; h++) halves[fill[eh[h]]++] = h;

  // A marked triangle has all three edges marked (bisec3); closure: a triangle with a marked
  // edge gets its refinement edge (half-edge 3t) marked.
  const split = new Uint8Array(ne);
  const stack = new Uint32Array(ne);
  let top = 0;
  for (let h = 0; h < nh; h++) {
    if (marked[(h - (h % 3)) / 3] === 0) continue;
    const e = eh[h];
    if (split[e] === 0) { split[e] = 1; stack[top++] = e; }
  }
  while (top > 0) {
    const e = stack[--top];
    for (let k = start[e]; k < start[e + 1]; k++) {
      const h = halves[k];
      const r = eh[h - (h % 3)];
      if (split[r] === 0) { split[r] = 1; stack[top++] = r; }
    }
  }
  let ns = 0;
  for (let e = 0; e < ne; e++) ns += split[e];
  if (ns === 0) {
    const parent = new Uint32Array(nt);
    for (let t = 0; t < nt; t++) parent[t] = t;
    return { mesh, parent, refined: 0, displacement: 0 };
  }

  const points = edgePoints(mesh, edges, opts, split);
  const positions = new Float64Array(3 * (nv + ns));
  positions.set(mesh.positions);
  const vertexOf = new Uint32Array(ne);
  let displacement = 0;
  for (let e = 0, v = nv; e < ne; e++) {
    if (split[e] === 0) continue;
    const o = 3 * (nv + e), q = 3 * v;
    positions[q] = points.positions[o]; positions[q + 1] = points.positions[o + 1]; positions[q + 2] = points.positions[o + 2];
    if (points.displacement[e] > displacement) displacement = points.displacement[e];
    vertexOf[e] = v++;
  }

  // Children per triangle: 1 + the marked edges (closure: any marked edge means the refinement edge is).
  let count = 0, refined = 0;
  for (let t = 0; t < nt; t++) {
    const s0 = split[eh[3 * t]];
    count += 1 + s0 + split[eh[3 * t + 1]] + split[eh[3 * t + 2]];
    refined += s0;
  }
  const triangles = new Uint32Array(3 * count);
  const parent = new Uint32Array(count);
  const conductor = new Uint32Array(count);
  const faces = points.withReference ? new Uint32Array(count) : undefined;
  let k = 0;
  const put = (t: number, a: number, b: number, c: number): void => {
    triangles[3 * k] = a; triangles[3 * k + 1] = b; triangles[3 * k + 2] = c;
    parent[k] = t; conductor[k] = mesh.conductor[t];
    if (faces) faces[k] = mesh.faces![t];
    k++;
  };
  for (let t = 0; t < nt; t++) {
    const a = tr[3 * t], b = tr[3 * t + 1], c = tr[3 * t + 2];
    const e0 = eh[3 * t], e1 = eh[3 * t + 1], e2 = eh[3 * t + 2];
    if (split[e0] === 0) { put(t, a, b, c); continue; }
    const m0 = vertexOf[e0];
    // [a, b, c] -> [c, a, m0] (refinement edge c-a) and [b, c, m0] (refinement edge b-c).
    if (split[e2] === 0) put(t, c, a, m0);
    else { const m2 = vertexOf[e2]; put(t, m0, c, m2); put(t, a, m0, m2); }
    if (split[e1] === 0) put(t, b, c, m0);
    else { const m1 = vertexOf[e1]; put(t, m0, b, m1); put(t, c, m0, m1); }
  }
  const out: SurfaceMesh = { positions, triangles, conductor, names: [...mesh.names] };
  if (faces) { out.faces = faces; out.reference = mesh.reference; }
  return { mesh: out, parent, refined, displacement };
}
