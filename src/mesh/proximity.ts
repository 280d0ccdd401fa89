/**
 * Proximity between conductors: the search over a whole mesh for conductors that intersect,
 * touch, or come closer than the local panel size; the nearest triangle to a point; and, on
 * the oriented mesh, touching solids that overlap and conductors enclosed in another's material.
 * The triangle-pair measures it runs on live in triangle-distance.ts (distance, closest points)
 * and triangle-intersection.ts (Möller's test, proper crossing, coincident faces).
 *
 * Conductors that touch are one net electrically, and intersecting surfaces make the
 * boundary-integral problem meaningless, so both are errors. A gap narrower than the
 * panels beside it is legal but the piecewise-constant charge cannot follow the field
 * there, so it is a warning with a suggestion to refine.
 *
 * The per-pair work uses module-level scratch: no allocation per triangle pair.
 */
import { type SurfaceMesh, triangleCount, boundingDiagonal } from "./model.js";
import { buildBoxTree, triangleBoxes, forEachOverlappingPair, forEachItemInBox, nodeLabels, nearestItem, type BoxTree } from "./bvh.js";
import { panelSizes } from "./quality.js";
import { windingNumber as generalisedWinding } from "../geometry/solid-angle.js";
import { closestPointTriangle } from "../geometry/closest-point.js";
import { triangleAreaVector } from "../geometry/triangle.js";
import { task } from "../linalg/task.js";
import { triangleTriangleDistance } from "./triangle-distance.js";
import { trianglesIntersect, trianglesCrossProperly, coincidentSameFacing } from "./triangle-intersection.js";

const cp = new Float64Array(3);
/** Scratch for a triangle's area vector (src/geometry/triangle.ts). */
const NRM = new Float64Array(3);

export type ProximityKind = "intersect" | "touch" | "gap";

export interface ProximityFinding {
  /** intersect and touch are errors; gap is a warning. */
  kind: ProximityKind;
  /** Conductor indices, a < b. */
  a: number;
  b: number;
  /** Smallest distance found between the two conductors; metres (0 when they intersect). */
  distance: number;
  /** Midpoint of the closest points there; metres. */
  position: [number, number, number];
  /** Local panel size there: the longer of the two triangles' longest edges; metres. */
  panelSize: number;
  /** The triangle pair (mesh-wide indices). */
  triangles: [number, number];
  /** For touches: up to CONTACT_SAMPLES touching triangle pairs (a's, b's), flattened. */
  contacts: number[];
}

/** Touching triangle pairs kept per conductor pair to decide touch against overlap. */
const CONTACT_SAMPLES = 16;

export interface ProximityOptions {
  /**
   * Conductors closer than this fraction of the local panel size are touching (default 1e-6);
   * never less than the same fraction of the mesh's bounding-box diagonal, the scale at
   * which loading welds vertices (coordinates rounded by a CAD export differ by about that).
   */
  touchTolerance?: number;
  /** Gaps narrower than this multiple of the local panel size are reported (default 1). */
  gapFactor?: number;
}

const KIND_RANK: Record<ProximityKind, number> = { gap: 0, touch: 1, intersect: 2 };

/**
 * Intersections, touches and narrow gaps between different conductors, one finding per
 * conductor pair (the worst kind; for each kind the smallest distance). Candidate
 * triangle pairs come from one BVH over triangle boxes grown by each panel's size,
 * traversed against itself with subtrees of a single conductor pruned, so the cost is
 * O(N log N) plus the triangle pairs that are actually close.
 *
 * Surfaces that cross are an intersection; surfaces that only meet are touching here.
 * Orientation plays no part, so this runs on the mesh as loaded (and may run in a
 * worker while the mesh is being oriented); `resolveOverlaps` then tells touching
 * solids from overlapping ones.
 */
export function conductorProximity(mesh: SurfaceMesh, opts: ProximityOptions = {}): ProximityFinding[] {
  const touchRel = opts.touchTolerance ?? 1e-6;
  const gapFactor = opts.gapFactor ?? 1;
  const p = mesh.positions, tr = mesh.triangles, cond = mesh.conductor;
  const nt = triangleCount(mesh);
  if (nt === 0 || mesh.names.length < 2) return [];
  const h = panelSizes(p, tr);
  const floor = touchRel * boundingDiagonal(p);
  const pad = new Float64Array(nt);
  for (let t = 0; t < nt; t++) pad[t] = gapFactor * h[t];
  const tree = buildBoxTree(triangleBoxes(p, tr, pad));
  const labels = { item: cond, node: nodeLabels(tree, cond) };
  const found = new Map<number, ProximityFinding>();
  const nc = mesh.names.length;
  const closest = new Float64Array(6);
  const ib = tree.itemBounds;
  forEachOverlappingPair(tree, (i, j) => {
    const local = Math.max(h[i], h[j]);
    const tol = Math.max(touchRel * local, floor);
    // Distance between the unpadded boxes bounds the triangles' distance from below: skip
    // pairs that cannot be near enough, or cannot improve on what this conductor pair has.
    let lb2 = 0;
    for (let k = 0; k < 3; k++) {
      const g = Math.max(ib[6 * j + k] + pad[j] - (ib[6 * i + 3 + k] - pad[i]), ib[6 * i + k] + pad[i] - (ib[6 * j + 3 + k] - pad[j]), 0);
      lb2 += g * g;
    }
    const lb = Math.sqrt(lb2);
    if (lb >= gapFactor * local) return;
    const key0 = cond[i] < cond[j] ? cond[i] * nc + cond[j] : cond[j] * nc + cond[i];
    const seen = found.get(key0);
    if (seen !== undefined) {
      if (seen.kind === "intersect") return;
      if (seen.kind === "touch" && lb > tol) return;
      if (seen.kind === "gap" && lb >= seen.distance) return;
    }
    const d = triangleTriangleDistance(p, tr, i, j, closest);
    if (!(d < gapFactor * local)) return;
    let kind: ProximityKind = "gap";
    if (d <= tol) {
      kind = trianglesCrossProperly(p, tr, i, j, tol) && trianglesIntersect(p, tr, i, j) ? "intersect" : "touch";
    }
    const a = cond[i] < cond[j] ? cond[i] : cond[j], b = cond[i] < cond[j] ? cond[j] : cond[i];
    const key = a * nc + b;
    const prev = found.get(key);
    const ta = cond[i] === a ? i : j, tb = ta === i ? j : i;
    if (kind === "touch" && prev && prev.contacts.length < 2 * CONTACT_SAMPLES) prev.contacts.push(ta, tb);
    if (prev && (KIND_RANK[prev.kind] > KIND_RANK[kind] || (prev.kind === kind && prev.distance <= d))) return;
    found.set(key, {
      kind, a, b, distance: kind === "intersect" ? 0 : d,
      position: [0.5 * (closest[0] + closest[3]), 0.5 * (closest[1] + closest[4]), 0.5 * (closest[2] + closest[5])],
      panelSize: local, triangles: [ta, tb],
      contacts: prev ? prev.contacts : kind === "touch" ? [ta, tb] : [],
    });
  }, labels);
  return [...found.values()].sort((x, y) => KIND_RANK[y.kind] - KIND_RANK[x.kind] || x.a - y.a || x.b - y.b);
}

/** Nearest triangle of a mesh to point (x, y, z) using a tree built with `triangleBoxes` on the same mesh; distance in metres. */
export function nearestTriangle(tree: BoxTree, positions: Float64Array, triangles: Uint32Array, x: number, y: number, z: number, maxDistance = Infinity): { triangle: number; distance: number } {
  const r = nearestItem(tree, x, y, z, (t) => {
    const a = 3 * triangles[3 * t], b = 3 * triangles[3 * t + 1], c = 3 * triangles[3 * t + 2];
    const P = positions;
    return closestPointTriangle(cp, x, y, z, P[a], P[a + 1], P[a + 2], P[b], P[b + 1], P[b + 2], P[c], P[c + 1], P[c + 2]);
  }, maxDistance);
  return { triangle: r.item, distance: r.distance };
}

/**
 * Winding numbers are whole off the surface (1 inside, 0 outside) and fractional on it
 * (1/2 on a face, up to about 3/4 in a concave edge), so a point counts as inside above 3/4.
 */
export const INSIDE_WINDING = 0.75;

/** Triangles grouped by conductor: conductor c owns list[offset[c] .. offset[c+1]). */
export interface ConductorTriangles { offset: Uint32Array; list: Uint32Array }

export function conductorTriangles(mesh: SurfaceMesh): ConductorTriangles {
  const nc = mesh.names.length, nt = triangleCount(mesh);
  const offset = new Uint32Array(nc + 1);
  for (let t = 0; t < nt; t++) offset[mesh.conductor[t] + 1]++;
  for (let c = 0; c < nc; c++) offset[c + 1] += offset[c];
  const list = new Uint32Array(nt), fill = offset.slice(0, nc);
  for (let t = 0; t < nt; t++) list[fill[mesh.conductor[t]]++] = t;
  return { offset, list };
}

/**
 * Winding number of conductor c's surface about (x, y, z): the sum of its triangles'
 * signed solid angles over 4π, 1 inside a closed outward surface and 0 outside
 * (src/geometry/solid-angle.ts).
 */
export function windingNumber(mesh: SurfaceMesh, groups: ConductorTriangles, c: number, x: number, y: number, z: number): number {
  return generalisedWinding(mesh.positions, mesh.triangles, groups.list, groups.offset[c], groups.offset[c + 1], x, y, z);
}

/**
 * Turn touches between two closed solids into intersections where their volumes overlap.
 * Two tests on the touching triangle pairs kept with each finding: coincident faces
 * facing the same way (both solids on one side of the shared face); and, since meshes
 * whose edges lie exactly on the curve where two surfaces cross (common after CAD
 * booleans) show no crossing triangle pair, each touching triangle's centroid stepped
 * a little (1e-4 of its size) into its own solid and tested for lying inside the other.
 * Needs `mesh` oriented outward (`orientSurfaces`); open sheets have no inside and
 * their touches stay touches.
 */
export function resolveOverlaps(mesh: SurfaceMesh, findings: ProximityFinding[], solid: boolean[], groups: ConductorTriangles = conductorTriangles(mesh), opts: ProximityOptions = {}): void {
  const p = mesh.positions, tr = mesh.triangles;
  const touchRel = opts.touchTolerance ?? 1e-6;
  let floor = -1;
  for (const f of findings) {
    if (f.kind !== "touch" || !solid[f.a] || !solid[f.b]) continue;
    if (floor < 0) floor = touchRel * boundingDiagonal(p);
    const tol = Math.max(touchRel * f.panelSize, floor);
    let coincident = false;
    for (let s = 0; s < f.contacts.length && !coincident; s += 2) {
      coincident = coincidentSameFacing(p, tr, f.contacts[s], f.contacts[s + 1], tol);
    }
    if (coincident) { f.kind = "intersect"; f.distance = 0; continue; }
    search: for (let s = 0; s < f.contacts.length; s += 2) {
      for (let side = 0; side < 2; side++) {
        const t = f.contacts[s + side], other = side === 0 ? f.b : f.a;
        const i = 3 * tr[3 * t], j = 3 * tr[3 * t + 1], k = 3 * tr[3 * t + 2];
        const ux = p[j] - p[i], uy = p[j + 1] - p[i + 1], uz = p[j + 2] - p[i + 2];
        const vx = p[k] - p[i], vy = p[k + 1] - p[i + 1], vz = p[k + 2] - p[i + 2];
        triangleAreaVector(NRM, 0, p, i, j, k);
        const nx = NRM[0], ny = NRM[1], nz = NRM[2];
        const nl = Math.hypot(nx, ny, nz);
        if (nl === 0) continue;
        const h = Math.sqrt(Math.max(ux * ux + uy * uy + uz * uz, vx * vx + vy * vy + vz * vz));
        const step = (1e-4 * h) / nl;
        const x = (p[i] + p[j] + p[k]) / 3 - step * nx, y = (p[i + 1] + p[j + 1] + p[k + 1]) / 3 - step * ny, z = (p[i + 2] + p[j + 2] + p[k + 2]) / 3 - step * nz;
        if (windingNumber(mesh, groups, other, x, y, z) > INSIDE_WINDING) {
          f.kind = "intersect";
          f.distance = 0;
          f.position = [x, y, z];
          break search;
        }
      }
    }
  }
}

export interface EnclosedConductor {
  /** The conductor lying inside the other's material. */
  inner: number;
  outer: number;
  /** A point of the inner conductor inside the outer one; metres. */
  position: [number, number, number];
}

/**
 * Conductors lying wholly inside the material of a closed conductor, which no surface
 * test can see (their surfaces never meet). `mesh` must be oriented outward
 * (`orientSurfaces`), so that a cavity wall cancels its enclosing surface: a wire in
 * the bore of a tube is outside the tube's material. The test point is the centroid of
 * the inner conductor's first triangle, inside when the winding number of the outer
 * surface there exceeds INSIDE_WINDING. Only pairs whose boxes nest are tested.
 */
export function enclosedConductors(mesh: SurfaceMesh, closed: boolean[], boxes: Float64Array[], groups: ConductorTriangles = conductorTriangles(mesh)): EnclosedConductor[] {
  const nc = mesh.names.length;
  const out: EnclosedConductor[] = [];
  const p = mesh.positions, tr = mesh.triangles;
  // Conductor boxes in a tree of their own, so that many small conductors cost N log N, not N².
  const flat = new Float64Array(6 * nc);
  for (let c = 0; c < nc; c++) flat.set(groups.offset[c + 1] > groups.offset[c] ? boxes[c] : [NaN, NaN, NaN, NaN, NaN, NaN], 6 * c);
  const tree = buildBoxTree(flat);
  const nested: number[] = [];
  for (let o = 0; o < nc; o++) {
    if (!closed[o] || groups.offset[o + 1] === groups.offset[o]) continue;
    const ob = boxes[o];
    nested.length = 0;
    forEachItemInBox(tree, flat, (i) => { nested.push(i); }, 6 * o);
    for (const inner of nested) {
      if (inner === o || groups.offset[inner + 1] === groups.offset[inner]) continue;
      const ib = boxes[inner];
      if (!(ob[0] <= ib[0] && ob[1] <= ib[1] && ob[2] <= ib[2] && ob[3] >= ib[3] && ob[4] >= ib[4] && ob[5] >= ib[5])) continue;
      const t0 = groups.list[groups.offset[inner]];
      const a = 3 * tr[3 * t0], b = 3 * tr[3 * t0 + 1], c = 3 * tr[3 * t0 + 2];
      const x = (p[a] + p[b] + p[c]) / 3, y = (p[a + 1] + p[b + 1] + p[c + 1]) / 3, z = (p[a + 2] + p[b + 2] + p[c + 2]) / 3;
      if (windingNumber(mesh, groups, o, x, y, z) > INSIDE_WINDING) out.push({ inner, outer: o, position: [x, y, z] });
    }
  }
  return out;
}

/**
 * Worker entry for `conductorProximity` (see src/linalg/pool.ts): the mesh arrives as its
 * typed arrays; findings go back as plain objects.
 */
export function proximityOfArrays(positions: Float64Array, triangles: Uint32Array, conductor: Uint32Array, conductors: number, opts: ProximityOptions): ProximityFinding[] {
  const names = Array.from({ length: conductors }, (_, i) => String(i));
  return conductorProximity({ positions, triangles, conductor, names }, opts);
}

export const proximityTask = task(import.meta.url, { proximityOfArrays });
