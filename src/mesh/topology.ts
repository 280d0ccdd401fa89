/**
 * Edge topology of a conductor mesh: which triangles share which edges, whether each
 * conductor's surface is closed, where it is open or non-manifold, and whether its
 * triangle windings agree across every edge.
 *
 * An edge belongs to one conductor: triangles of two conductors that happen to share
 * vertices do not close each other's surfaces. Edges are found by hashing the vertex
 * pair (and conductor) into an open-addressed table of typed arrays, so a 1M-triangle
 * mesh costs a few flat arrays and no per-edge objects.
 */
import { type SurfaceMesh, triangleCount } from "./model.js";
import { buildBoxTree, forEachItemInBox } from "./bvh.js";
import { windingNumber } from "../geometry/solid-angle.js";
import { triangleArea, tetrahedronVolume6 } from "../geometry/triangle.js";

export interface EdgeTable {
  edgeCount: number;
  /** Lower and higher vertex index of each edge, 2 per edge. */
  edgeVertices: Uint32Array;
  /** Conductor of each edge. */
  edgeConductor: Uint32Array;
  /** How many triangle sides lie on each edge (2 for a closed manifold surface, 1 on a boundary, 3+ non-manifold). */
  edgeUses: Uint32Array;
  /** The first two half-edges (3·triangle + side) on each edge; -1 when absent. */
  edgeHalf: Int32Array;
  /** Edge of each half-edge (side j runs from corner j to corner j+1); -1 for a side whose two corners are the same vertex. */
  halfEdgeEdge: Int32Array;
}

function nextPow2(n: number): number {
  let p = 1;
  while (p < n) p *= 2;
  return p;
}

/** Build the edge table of a mesh, O(number of triangles). */
export function buildEdgeTable(mesh: SurfaceMesh): EdgeTable {
  const tri = mesh.triangles, cond = mesh.conductor;
  const nt = triangleCount(mesh);
  const maxEdges = 3 * nt;
  const edgeVertices = new Uint32Array(2 * maxEdges);
  const edgeConductor = new Uint32Array(maxEdges);
  const edgeUses = new Uint32Array(maxEdges);
  const edgeHalf = new Int32Array(2 * maxEdges).fill(-1);
  const halfEdgeEdge = new Int32Array(3 * nt).fill(-1);
  const cap = nextPow2(Math.max(16, Math.ceil(maxEdges * 1.5)));
  const mask = cap - 1;
  const slots = new Int32Array(cap).fill(-1);
  let ne = 0;
  for (let t = 0; t < nt; t++) {
    const c = cond[t];
    for (let j = 0; j < 3; j++) {
      const va = tri[3 * t + j], vb = tri[3 * t + (j === 2 ? 0 : j + 1)];
      if (va === vb) continue;
      const lo = va < vb ? va : vb, hi = va < vb ? vb : va;
      let h = (Math.imul(lo, 0x9e3779b1) ^ Math.imul(hi, 0x85ebca77) ^ Math.imul(c, 0xc2b2ae3d)) >>> 0;
      h = (h ^ (h >>> 15)) & mask;
      let e = -1;
      for (;;) {
        const s = slots[h];
        if (s < 0) {
          e = ne++;
          slots[h] = e;
          edgeVertices[2 * e] = lo;
          edgeVertices[2 * e + 1] = hi;
          edgeConductor[e] = c;
          break;
        }
        if (edgeVertices[2 * s] === lo && edgeVertices[2 * s + 1] === hi && edgeConductor[s] === c) { e = s; break; }
        h = (h + 1) & mask;
      }
      const u = edgeUses[e]++;
      if (u < 2) edgeHalf[2 * e + u] = 3 * t + j;
      halfEdgeEdge[3 * t + j] = e;
    }
  }
  return {
    edgeCount: ne,
    edgeVertices: edgeVertices.slice(0, 2 * ne),
    edgeConductor: edgeConductor.slice(0, ne),
    edgeUses: edgeUses.slice(0, ne),
    edgeHalf: edgeHalf.slice(0, 2 * ne),
    halfEdgeEdge,
  };
}

/** True when half-edge h (3·t + side) runs from the lower to the higher vertex index of its edge. */
function runsForward(tri: Uint32Array, h: number): boolean {
  const t3 = h - (h % 3), j = h % 3;
  return tri[t3 + j] < tri[t3 + (j === 2 ? 0 : j + 1)];
}

export interface ConductorTopology {
  edges: number;
  /** Every edge shared by exactly two triangles of this conductor. */
  closed: boolean;
  /** Edges used by one triangle only. */
  boundaryEdges: number;
  /** Edges used by three or more triangles. */
  nonManifoldEdges: number;
  /** Two-triangle edges that both triangles traverse in the same direction (windings disagree). */
  inconsistentEdges: number;
}

/** Edge counts per conductor, in `mesh.names` order. */
export function conductorTopology(mesh: SurfaceMesh, table: EdgeTable = buildEdgeTable(mesh)): ConductorTopology[] {
  const nc = mesh.names.length;
  const edges = new Uint32Array(nc), boundary = new Uint32Array(nc), nonManifold = new Uint32Array(nc), inconsistent = new Uint32Array(nc);
  const hasTriangles = new Uint8Array(nc);
  for (let t = 0; t < triangleCount(mesh); t++) hasTriangles[mesh.conductor[t]] = 1;
  for (let e = 0; e < table.edgeCount; e++) {
    const c = table.edgeConductor[e], u = table.edgeUses[e];
    edges[c]++;
    if (u === 1) boundary[c]++;
    else if (u > 2) nonManifold[c]++;
    else if (runsForward(mesh.triangles, table.edgeHalf[2 * e]) === runsForward(mesh.triangles, table.edgeHalf[2 * e + 1])) inconsistent[c]++;
  }
  const out: ConductorTopology[] = [];
  for (let c = 0; c < nc; c++) {
    out.push({
      edges: edges[c],
      closed: hasTriangles[c] === 1 && boundary[c] === 0 && nonManifold[c] === 0,
      boundaryEdges: boundary[c],
      nonManifoldEdges: nonManifold[c],
      inconsistentEdges: inconsistent[c],
    });
  }
  return out;
}

/**
 * What orientation did to one connected component (triangles joined across
 * two-triangle edges):
 * - `outward`: closed, consistent, already facing out of the conductor material;
 * - `inward-flipped`: closed and consistent but facing in; every winding was reversed;
 * - `repaired`: closed, some triangles disagreed with their neighbours and were reversed;
 * - `open`: has boundary edges, so no inside exists; windings were made to agree
 *   with the majority (by area) where they did not;
 * - `non-orientable`: no consistent winding exists (a Möbius-like surface); left as given;
 * - `non-manifold`: touches an edge of three or more triangles; made consistent where
 *   possible but not turned outward, since its inside is undefined.
 */
export type ComponentOrientation = "outward" | "inward-flipped" | "repaired" | "open" | "non-orientable" | "non-manifold";

export interface OrientedComponent {
  conductor: number;
  triangles: number;
  closed: boolean;
  status: ComponentOrientation;
  /** Triangles whose winding was reversed in the oriented copy. */
  flippedTriangles: number;
  /** Enclosed volume after orientation (positive = outward normals), cubic metres; NaN unless closed and orientable. */
  signedVolume: number;
  /** How many other closed components of the same conductor enclose this one (odd = a cavity wall, whose normals face into the cavity). */
  enclosedBy: number;
}

export interface OrientationResult {
  /** A copy of the mesh with windings reversed where needed; positions and conductors are shared with the input. */
  mesh: SurfaceMesh;
  components: OrientedComponent[];
  /** Component index of each triangle. */
  componentOf: Uint32Array;
}

/** Signed volume of the triangles tr[list], taken about point o (for conditioning), with per-triangle winding sign. */
function signedVolume(p: Float64Array, tr: Uint32Array, list: Uint32Array, from: number, to: number, flip: Uint8Array, ox: number, oy: number, oz: number): number {
  let v = 0;
  for (let k = from; k < to; k++) {
    const t = list[k];
    const d = tetrahedronVolume6(p, 3 * tr[3 * t], 3 * tr[3 * t + 1], 3 * tr[3 * t + 2], ox, oy, oz);
    v += flip[t] ? -d : d;
  }
  return v / 6;
}

/**
 * Make every connected component consistently wound and, when closed, facing out of
 * the conductor (positive signed volume; a closed component inside another closed
 * component of the same conductor is a cavity wall and faces the other way). Works on
 * a copy; reports per component what was done or why it could not be done.
 */
export function orientSurfaces(mesh: SurfaceMesh, table: EdgeTable = buildEdgeTable(mesh)): OrientationResult {
  const tr = mesh.triangles, p = mesh.positions;
  const nt = triangleCount(mesh);
  const flip = new Uint8Array(nt);
  const seen = new Uint8Array(nt);
  const componentOf = new Uint32Array(nt);
  const queue = new Uint32Array(nt);
  const compStart: number[] = [];
  const components: OrientedComponent[] = [];
  const uses = table.edgeUses, half = table.edgeHalf, hee = table.halfEdgeEdge;
  let qEnd = 0;
  for (let seed = 0; seed < nt; seed++) {
    if (seen[seed]) continue;
    const ci = components.length;
    const start = qEnd;
    compStart.push(start);
    queue[qEnd++] = seed;
    seen[seed] = 1;
    componentOf[seed] = ci;
    let orientable = true, open = false, nonManifold = false;
    for (let q = start; q < qEnd; q++) {
      const t = queue[q];
      for (let j = 0; j < 3; j++) {
        const h = 3 * t + j, e = hee[h];
        if (e < 0) continue;
        const u = uses[e];
        if (u === 1) { open = true; continue; }
        if (u > 2) { nonManifold = true; continue; }
        const other = half[2 * e] === h ? half[2 * e + 1] : half[2 * e];
        const n = (other - (other % 3)) / 3;
        // Neighbours agree when they run the shared edge in opposite directions.
        const want = (runsForward(tr, h) ? 1 : 0) ^ flip[t] ^ (runsForward(tr, other) ? 1 : 0) ^ 1;
        if (!seen[n]) {
          seen[n] = 1;
          flip[n] = want;
          componentOf[n] = ci;
          queue[qEnd++] = n;
        } else if (n !== t && flip[n] !== want) {
          orientable = false;
        }
      }
    }
    const end = qEnd;
    const count = end - start;
    const closed = !open && !nonManifold;
    let status: ComponentOrientation;
    if (!orientable) {
      for (let k = start; k < end; k++) flip[queue[k]] = 0;
      status = "non-orientable";
    } else {
      let flippedArea = 0, totalArea = 0;
      for (let k = start; k < end; k++) {
        const t = queue[k];
        const a = 2 * triangleArea(p, 3 * tr[3 * t], 3 * tr[3 * t + 1], 3 * tr[3 * t + 2]);
        totalArea += a;
        if (flip[t]) flippedArea += a;
      }
      // Keep the winding most of the surface already has; only closed components get a global sign below.
      if (flippedArea > 0.5 * totalArea) for (let k = start; k < end; k++) flip[queue[k]] ^= 1;
      status = nonManifold ? "non-manifold" : open ? "open" : "outward";
    }
    components.push({ conductor: mesh.conductor[seed], triangles: count, closed, status, flippedTriangles: 0, signedVolume: NaN, enclosedBy: 0 });
  }
  compStart.push(qEnd);

  // Closed, orientable components: fix the global sign by signed volume and nesting.
  const closedIdx: number[] = [];
  const compBox: Float64Array[] = [];
  for (let ci = 0; ci < components.length; ci++) {
    const c = components[ci];
    if (c.status !== "outward") continue;
    closedIdx.push(ci);
    const b = new Float64Array([Infinity, Infinity, Infinity, -Infinity, -Infinity, -Infinity]);
    for (let k = compStart[ci]; k < compStart[ci + 1]; k++) {
      const t = queue[k];
      for (let j = 0; j < 3; j++) {
        const v = 3 * tr[3 * t + j];
        for (let a = 0; a < 3; a++) { if (p[v + a] < b[a]) b[a] = p[v + a]; if (p[v + a] > b[a + 3]) b[a + 3] = p[v + a]; }
      }
    }
    compBox[ci] = b;
    const ox = 0.5 * (b[0] + b[3]), oy = 0.5 * (b[1] + b[4]), oz = 0.5 * (b[2] + b[5]);
    c.signedVolume = signedVolume(p, tr, queue, compStart[ci], compStart[ci + 1], flip, ox, oy, oz);
  }
  // Component boxes in a tree, so that many closed components cost N log N to test for nesting, not N².
  const flat = new Float64Array(6 * closedIdx.length);
  closedIdx.forEach((ci, k) => flat.set(compBox[ci], 6 * k));
  const boxTree = buildBoxTree(flat);
  const around: number[] = [];
  for (let kb = 0; kb < closedIdx.length; kb++) {
    const bi = closedIdx[kb];
    const inner = components[bi], bb = compBox[bi];
    const t0 = queue[compStart[bi]];
    const a = 3 * tr[3 * t0], b = 3 * tr[3 * t0 + 1], c = 3 * tr[3 * t0 + 2];
    const x = (p[a] + p[b] + p[c]) / 3, y = (p[a + 1] + p[b + 1] + p[c + 1]) / 3, z = (p[a + 2] + p[b + 2] + p[c + 2]) / 3;
    around.length = 0;
    forEachItemInBox(boxTree, flat, (k) => { around.push(closedIdx[k]); }, 6 * kb);
    for (const ai of around) {
      if (ai === bi || components[ai].conductor !== inner.conductor) continue;
      const ab = compBox[ai];
      if (!(ab[0] <= bb[0] && ab[1] <= bb[1] && ab[2] <= bb[2] && ab[3] >= bb[3] && ab[4] >= bb[4] && ab[5] >= bb[5])) continue;
      // Whole off the surface, fractional only on it: 3/4 separates inside from a touching point.
      if (Math.abs(windingNumber(p, tr, queue, compStart[ai], compStart[ai + 1], x, y, z, flip)) > 0.75) inner.enclosedBy++;
    }
  }
  for (const ci of closedIdx) {
    const c = components[ci];
    const wantPositive = c.enclosedBy % 2 === 0;
    if ((c.signedVolume > 0) !== wantPositive) {
      for (let k = compStart[ci]; k < compStart[ci + 1]; k++) flip[queue[k]] ^= 1;
      c.signedVolume = -c.signedVolume;
    }
  }

  const triangles = new Uint32Array(tr);
  for (let ci = 0; ci < components.length; ci++) {
    const c = components[ci];
    let flipped = 0;
    for (let k = compStart[ci]; k < compStart[ci + 1]; k++) {
      const t = queue[k];
      if (!flip[t]) continue;
      flipped++;
      triangles[3 * t + 1] = tr[3 * t + 2];
      triangles[3 * t + 2] = tr[3 * t + 1];
    }
    c.flippedTriangles = flipped;
    if (c.status === "outward" && flipped > 0) c.status = flipped === c.triangles ? "inward-flipped" : "repaired";
  }
  // Faces and the reference surface stay: triangles are only turned over, not renumbered.
  const oriented: SurfaceMesh = { positions: mesh.positions, triangles, conductor: mesh.conductor, names: mesh.names };
  if (mesh.faces !== undefined) { oriented.faces = mesh.faces; oriented.reference = mesh.reference; }
  return { mesh: oriented, components, componentOf };
}

/**
 * One orientation verdict per conductor, the worst over its components:
 * non-manifold, then inconsistent (non-orientable), open, repaired, inward-flipped, outward.
 * `empty` for a conductor with no triangles.
 */
export type ConductorOrientation = "outward" | "inward-flipped" | "repaired" | "open" | "inconsistent" | "non-manifold" | "empty";

export function conductorOrientation(result: OrientationResult, conductors: number): ConductorOrientation[] {
  const rank: Record<ConductorOrientation, number> = { empty: 0, outward: 1, "inward-flipped": 2, repaired: 3, open: 4, inconsistent: 5, "non-manifold": 6 };
  const out: ConductorOrientation[] = new Array(conductors).fill("empty");
  for (const c of result.components) {
    const s: ConductorOrientation = c.status === "non-orientable" ? "inconsistent" : c.status;
    if (rank[s] > rank[out[c.conductor]]) out[c.conductor] = s;
  }
  return out;
}
