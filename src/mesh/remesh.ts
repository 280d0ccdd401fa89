/**
 * Remeshing of CAD-style flat patches into panels fit for boundary elements.
 *
 * A CAD exporter tessellates for display: each flat face is a fan of long slivers from a few
 * boundary points (aspect ratios of 10 to 100), however large the face. Piecewise-constant
 * charge on such panels cannot follow the charge crowding toward the face's edges. Here every
 * flat patch (a planar region that is a flat face of the part, src/mesh/planar-regions.ts;
 * never across CAD faces) that needs it — a panel worse than `aspectTrigger`, or larger than
 * the user's panel size — is triangulated anew in its plane (src/mesh/remesh-patch.ts) at
 * the size of src/mesh/size-field.ts. Good meshes are returned as they are (the same object).
 *
 * What stays: every vertex of the input, at its exact coordinates, so the part's polyhedron and
 * its sharp edges are unchanged; every triangle outside the remeshed regions; the
 * orientation (new triangles face along the patch's normal). New points lie on the patch's
 * boundary edges (on the straight edge, so on both planes that meet there) or inside it (on
 * its plane). A boundary edge longer than the size wanted there is split, once, into points
 * both sides share; the planar region on the other side is then triangulated anew as well
 * (with the same points on the shared edge), so the mesh stays watertight and conforming.
 * This spreads across a tessellated fillet (its facets are planar strips, split along their
 * length) to the next flat face. Regions with a triangle `only` excludes are never touched,
 * and their edges never split.
 */
import type { SurfaceMesh } from "./model.js";
import { meshEdges, faceNormals } from "./edges.js";
import { planarRegions, neighboursAcross } from "./planar-regions.js";
import { triangleAspect, panelSizes } from "./quality.js";
import { triangulatePatch } from "./remesh-patch.js";
import { sizeAt, otherConductors, type SizeField, type OtherConductors } from "./size-field.js";
import { nearestTriangle } from "./proximity.js";

export interface RemeshOptions {
  /** Largest panel size wanted on flat faces; metres. Default: from each patch's own size. */
  panelSize?: number;
  /** Per triangle: 1 where remeshing may change it (a mesh file's triangle), 0 to keep it. Default: all. */
  only?: Uint8Array;
  /** Radius ratio R/(2r) above which a flat patch is remeshed; default 6 (a graded generated box reaches about 5). */
  aspectTrigger?: number;
  /** Dihedral angle above which a patch edge is sharp (the size is graded toward it); degrees, default 30. */
  featureAngle?: number;
}

/** What remeshing changed (or, for `sigmesh check`, would change). */
export interface RemeshSummary {
  /** Flat patches remeshed because they needed it. */
  patches: number;
  /** Further planar regions triangulated anew to stay conforming with them (fillet facets, neighbouring faces). */
  neighbours: number;
  /** Triangles in those regions before and after. */
  panelsBefore: number;
  panelsAfter: number;
  /** Worst radius ratio R/(2r) in those regions before and after (1 = equilateral). */
  worstAspectBefore: number;
  worstAspectAfter: number;
  /** Triangles of the whole mesh before and after. */
  trianglesBefore: number;
  trianglesAfter: number;
}

export interface RemeshResult {
  /** The remeshed mesh, or the input itself when nothing needed remeshing. */
  mesh: SurfaceMesh;
  summary: RemeshSummary;
}

/**
 * The change in words, for a warning: `applied` for what was done, else what would be done
 * (`sigmesh check`); `scene` names the scene key beside the option that turns it off.
 */
export function remeshSentence(s: RemeshSummary, scene: boolean, applied = true): string {
  const regions = `${s.patches} flat patch${s.patches === 1 ? "" : "es"}${s.neighbours > 0 ? ` and ${s.neighbours} neighbouring planar region${s.neighbours === 1 ? "" : "s"}` : ""}`;
  const all = s.trianglesBefore === s.panelsBefore ? "" : `; ${s.trianglesBefore} → ${s.trianglesAfter} panels in all`;
  const what = `${regions} (${s.panelsBefore} → ${s.panelsAfter} panels; worst aspect ratio ${aspectText(s.worstAspectBefore)} → ${aspectText(s.worstAspectAfter)}${all})`;
  const off = scene ? `--keep-mesh or "keepMesh": true` : "--keep-mesh";
  return applied
    ? `remeshed ${what} for boundary elements: CAD-style slivers cannot carry the charge; ${off} solves on the mesh as given`
    : `extract would remesh ${what} for boundary elements (CAD-style slivers); ${off} keeps the mesh as given`;
}

function aspectText(x: number): string {
  return Number.isFinite(x) ? (x >= 100 ? x.toFixed(0) : x.toPrecision(2)) : "∞ (degenerate)";
}

/** Panel size at most this fraction of the square root of a patch's area. */
const AREA_CAP = 1 / 4;
/** Panel size at most this multiple of a patch's width 2A/P. */
const WIDTH_CAP = 1;
/** Size on sharp edges: the patch's cap over this. */
const EDGE_RATIO = 2.5;
/** Size increase per unit distance from a source. */
const GROWTH = 0.4;
/** Panels no larger than this multiple of the distance to another conductor. */
const GAP_FACTOR = 0.75;
/** Beside a tessellated curved neighbour: this multiple of its facets' width across the shared edge. */
const NEIGHBOUR_FACTOR = 1.5;
/** A patch whose panels exceed the user's panel size by this factor is remeshed. */
const SIZE_TRIGGER = 1.5;
/** A conductor's panels are at least its largest flat patch's cap over this. */
const FLOOR_RATIO = 10;
/** Most points one patch may receive. */
const MAX_PATCH_POINTS = 400_000;

/** Remesh the flat patches of `mesh` that need it (see the file comment). */
export function remeshFlatPatches(mesh: SurfaceMesh, opts: RemeshOptions = {}): RemeshResult {
  const p = mesh.positions, tr = mesh.triangles;
  const nt = tr.length / 3;
  const trigger = opts.aspectTrigger ?? 6;
  const cosFeature = Math.cos(((opts.featureAngle ?? 30) * Math.PI) / 180);
  const edges = meshEdges(mesh);
  const regions = planarRegions(mesh, { byFace: true, featureAngle: opts.featureAngle }, edges);
  const nr = regions.count;
  const region = regions.region;

  const aspect = new Float64Array(nt);
  // Each panel's longest edge, for the size and gap triggers below.
  const size = panelSizes(p, tr);
  const worst = new Float64Array(nr), longest = new Float64Array(nr);
  const allowed = new Uint8Array(nr).fill(1);
  for (let t = 0; t < nt; t++) {
    const r = region[t];
    aspect[t] = triangleAspect(p, tr, t);
    if (aspect[t] > worst[r]) worst[r] = aspect[t];
    if (size[t] > longest[r]) longest[r] = size[t];
    if (opts.only && !opts.only[t]) allowed[r] = 0;
  }
  const summary: RemeshSummary = { patches: 0, neighbours: 0, panelsBefore: 0, panelsAfter: 0, worstAspectBefore: 0, worstAspectAfter: 0, trianglesBefore: nt, trianglesAfter: nt };
  const chosen = new Uint8Array(nr);
  for (let r = 0; r < nr; r++) {
    if (!regions.flat[r] || !allowed[r]) continue;
    const tooLarge = opts.panelSize !== undefined && longest[r] > SIZE_TRIGGER * opts.panelSize;
    if (worst[r] > trigger || tooLarge) { chosen[r] = 1; summary.patches++; }
  }
  // A flat patch facing another conductor across a gap narrower than its panels (an electrode's
  // face of two triangles over a plate) is remeshed too: its panels may be at most GAP_FACTOR
  // times the gap there, and it is remeshed when one exceeds that by SIZE_TRIGGER.
  // The other conductors of each conductor, as a BVH: built once, for this check and the size fields.
  const others = new Map<number, OtherConductors | undefined>();
  const othersOf = (c: number) => {
    if (!others.has(c)) others.set(c, mesh.names.length > 1 ? otherConductors(p, tr, mesh.conductor, c) : undefined);
    return others.get(c);
  };
  if (mesh.names.length > 1) {
    for (let t = 0; t < nt; t++) {
      const r = region[t];
      if (chosen[r] || !regions.flat[r] || !allowed[r]) continue;
      const o = othersOf(mesh.conductor[t]);
      if (!o) continue;
      const reach = size[t] / (SIZE_TRIGGER * GAP_FACTOR);
      // The gap measured from the panel's centroid.
      const a = 3 * tr[3 * t], b = 3 * tr[3 * t + 1], cc = 3 * tr[3 * t + 2];
      const near = nearestTriangle(o.tree, o.positions, o.triangles, (p[a] + p[b] + p[cc]) / 3, (p[a + 1] + p[b + 1] + p[cc + 1]) / 3, (p[a + 2] + p[b + 2] + p[cc + 2]) / 3, reach);
      if (near.triangle >= 0 && near.distance < reach) { chosen[r] = 1; summary.patches++; }
    }
  }
  if (summary.patches === 0) return { mesh, summary };

  const across = neighboursAcross(mesh, edges);
  const normals = faceNormals(mesh);
  // Triangles of each region (compressed rows).
  const start = new Uint32Array(nr + 1);
  for (let t = 0; t < nt; t++) start[region[t] + 1]++;
  for (let r = 0; r < nr; r++) start[r + 1] += start[r];
  const members = new Uint32Array(nt);
  { const fill = start.slice(0, nr); for (let t = 0; t < nt; t++) members[fill[region[t]]++] = t; }
  const isBoundary = (h: number, r: number) => { const u = across[h]; return u < 0 || region[u] !== r; };

  // Smallest size of each conductor's field: its largest flat patch's cap over FLOOR_RATIO.
  const floors = new Float64Array(mesh.names.length);
  for (let r = 0; r < nr; r++) {
    if (!regions.flat[r]) continue;
    const c = mesh.conductor[members[start[r]]];
    floors[c] = Math.max(floors[c], (opts.panelSize ?? AREA_CAP * Math.sqrt(regions.area[r])) / FLOOR_RATIO);
  }
  const segs: number[][] = Array.from({ length: nr }, () => []);
  const sizes: number[][] = Array.from({ length: nr }, () => []);
  const fields = new Map<number, SizeField>();
  const addSource = (r: number, h: number, s: number) => {
    const a = 3 * tr[h], b = 3 * tr[h - (h % 3) + ((h % 3) + 1) % 3];
    segs[r].push(p[a], p[a + 1], p[a + 2], p[b], p[b + 1], p[b + 2]);
    sizes[r].push(s);
  };
  const makeField = (r: number, incoming?: { h: number; s: number }) => {
    const c = mesh.conductor[members[start[r]]];
    let cap: number;
    if (regions.flat[r]) {
      let perimeter = 0;
      for (let k = start[r]; k < start[r + 1]; k++) {
        const t = members[k];
        for (let j = 0; j < 3; j++) if (isBoundary(3 * t + j, r)) perimeter += halfLength(3 * t + j);
      }
      const area = regions.area[r];
      const areaCap = opts.panelSize ?? AREA_CAP * Math.sqrt(area);
      // Never below the conductor's floor: the rim face of a thin plate (35 µm of copper) would
      // otherwise set panels of its own width along the plate's edges and all over its faces.
      const floor = floors[c];
      cap = Math.max(floor, Math.min(areaCap, WIDTH_CAP * (2 * area) / perimeter));
      // On sharp edges a fraction of the patch's own scale: a thin strip, whose cap is its
      // width, is not graded further across that width.
      const sharp = Math.max(floor, Math.min(cap, areaCap / EDGE_RATIO));
      for (let k = start[r]; k < start[r + 1]; k++) {
        const t = members[k];
        for (let j = 0; j < 3; j++) {
          const h = 3 * t + j;
          if (!isBoundary(h, r)) continue;
          const u = across[h];
          const cos = u < 0 ? -1 : normals[3 * t] * normals[3 * u] + normals[3 * t + 1] * normals[3 * u + 1] + normals[3 * t + 2] * normals[3 * u + 2];
          if (cos < cosFeature) { addSource(r, h, sharp); continue; }
          // Beside a smooth neighbour (a fillet facet): about its width across the shared edge.
          const len = halfLength(h);
          const height = len > 0 ? (2 * triangleAreaOf(u)) / len : cap;
          addSource(r, h, Math.min(cap, Math.max(floor, cap / (2 * EDGE_RATIO), NEIGHBOUR_FACTOR * height)));
        }
      }
    } else {
      // A facet of a curved surface, entered from a neighbour: sized from where it was entered.
      cap = Infinity;
    }
    if (incoming) addSource(r, incoming.h, incoming.s);
    const f: SizeField = { cap, segments: new Float64Array(0), sizes: new Float64Array(0), growth: GROWTH, gapFactor: GAP_FACTOR, others: othersOf(c) };
    fields.set(r, f);
    return f;
  };
  const refreshed = (r: number) => {
    const f = fields.get(r)!;
    if (f.segments.length !== segs[r].length) { f.segments = Float64Array.from(segs[r]); f.sizes = Float64Array.from(sizes[r]); }
    return f;
  };
  function halfLength(h: number): number {
    const a = 3 * tr[h], b = 3 * tr[h - (h % 3) + ((h % 3) + 1) % 3];
    return Math.hypot(p[b] - p[a], p[b + 1] - p[a + 1], p[b + 2] - p[a + 2]);
  }
  function triangleAreaOf(t: number): number {
    const a = 3 * tr[3 * t], b = 3 * tr[3 * t + 1], c = 3 * tr[3 * t + 2];
    const ux = p[b] - p[a], uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2];
    const vx = p[c] - p[a], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
    return 0.5 * Math.hypot(uy * vz - uz * vy, uz * vx - ux * vz, ux * vy - uy * vx);
  }

  // Decide the points on every boundary edge of the regions to remesh, entering neighbours as needed.
  const newPositions: number[] = [];
  let nextVertex = p.length / 3;
  const edgePoints = new Map<number, number[]>();
  /** Where each split point lies along its edge, from v0 (0) to v1 (1). */
  const edgeParams = new Map<number, number[]>();
  const decided = new Uint8Array(edges.count);
  const queue: number[] = [];
  for (let r = 0; r < nr; r++) if (chosen[r]) { makeField(r); queue.push(r); }
  const inSet = chosen.slice();
  for (let qi = 0; qi < queue.length; qi++) {
    const r = queue[qi];
    for (let k = start[r]; k < start[r + 1]; k++) {
      const t = members[k];
      for (let j = 0; j < 3; j++) {
        const h = 3 * t + j;
        if (!isBoundary(h, r)) continue;
        const e = edges.edgeOfHalf[h];
        if (decided[e]) continue;
        decided[e] = 1;
        const u = across[h];
        // Only a rim or a manifold edge to a planar region that may change can take points.
        if (u < 0 && edges.faces[e] !== 1) continue;
        const s = u >= 0 ? region[u] : -1;
        if (s >= 0 && !allowed[s]) continue;
        const va = edges.v0[e], vb = edges.v1[e];
        const fr = refreshed(r), fs = s >= 0 && inSet[s] ? refreshed(s) : undefined;
        const placed = edgeSplit(p, va, vb, (x, y, z) => Math.min(sizeAt(fr, x, y, z), fs ? sizeAt(fs, x, y, z) : Infinity));
        if (placed.length === 0) continue;
        if (s >= 0 && !inSet[s]) {
          inSet[s] = 1; summary.neighbours++;
          makeField(s, { h: across[h] >= 0 ? findHalf(u, va, vb) : h, s: halfLength(h) / (placed.length / 3 + 1) });
          queue.push(s);
        }
        const ids: number[] = [];
        for (let i = 0; i < placed.length; i += 3) { newPositions.push(placed[i], placed[i + 1], placed[i + 2]); ids.push(nextVertex++); }
        edgePoints.set(e, ids);
        edgeParams.set(e, placed.params);
      }
    }
  }
  function findHalf(t: number, a: number, b: number): number {
    for (let j = 0; j < 3; j++) {
      const x = tr[3 * t + j], y = tr[3 * t + (j + 1) % 3];
      if ((x === a && y === b) || (x === b && y === a)) return 3 * t + j;
    }
    return 3 * t;
  }

  // Triangulate every region of the set anew.
  const outTri: number[] = [], outCond: number[] = [], outFace: number[] = [];
  const keep = new Uint8Array(nt);
  for (let t = 0; t < nt; t++) keep[t] = inSet[region[t]] ? 0 : 1;
  const faces = mesh.faces;
  let worstBefore = 0, worstAfter = 0, before = 0;
  const allPositions = (): Float64Array => {
    const out = new Float64Array(p.length + newPositions.length);
    out.set(p); out.set(newPositions, p.length);
    return out;
  };
  for (const r of queue) {
    before += start[r + 1] - start[r];
    for (let k = start[r]; k < start[r + 1]; k++) worstBefore = Math.max(worstBefore, aspect[members[k]]);
    const made = retriangulate(r);
    const t0 = members[start[r]];
    for (let i = 0; i < made.length; i += 3) {
      outTri.push(made[i], made[i + 1], made[i + 2]);
      outCond.push(mesh.conductor[t0]);
      if (faces) outFace.push(faces[t0]);
    }
  }

  function retriangulate(r: number): number[] {
    const nx = regions.normal[3 * r], ny = regions.normal[3 * r + 1], nz = regions.normal[3 * r + 2];
    // e1 ⟂ n, e2 = n × e1: (e1, e2, n) right-handed, so counter-clockwise in (u, v) faces along n.
    let ax = Math.abs(nx) < 0.9 ? 1 : 0, ay = ax ? 0 : 1;
    const d0 = ax * nx + ay * ny;
    let e1x = ax - d0 * nx, e1y = ay - d0 * ny, e1z = -d0 * nz;
    const l1 = Math.hypot(e1x, e1y, e1z); e1x /= l1; e1y /= l1; e1z /= l1;
    const e2x = ny * e1z - nz * e1y, e2y = nz * e1x - nx * e1z, e2z = nx * e1y - ny * e1x;
    ax = 0; ay = 0;
    const local = new Map<number, number>();
    const globalOf: number[] = [];
    const coordOf = (v: number): [number, number, number] => v < p.length / 3
      ? [p[3 * v], p[3 * v + 1], p[3 * v + 2]]
      : [newPositions[3 * v - p.length], newPositions[3 * v - p.length + 1], newPositions[3 * v - p.length + 2]];
    const idx = (v: number) => { let i = local.get(v); if (i === undefined) { i = globalOf.length; local.set(v, i); globalOf.push(v); } return i; };
    const domain: number[] = [], segments: number[] = [];
    for (let k = start[r]; k < start[r + 1]; k++) {
      const t = members[k];
      domain.push(idx(tr[3 * t]), idx(tr[3 * t + 1]), idx(tr[3 * t + 2]));
    }
    for (let k = start[r]; k < start[r + 1]; k++) {
      const t = members[k];
      for (let j = 0; j < 3; j++) {
        const h = 3 * t + j;
        if (!isBoundary(h, r)) continue;
        const a = tr[h], b = tr[3 * t + (j + 1) % 3];
        const e = edges.edgeOfHalf[h];
        const mid = edgePoints.get(e) ?? [];
        const chain = [a, ...(edges.v0[e] === a ? mid : mid.slice().reverse()), b];
        for (let i = 0; i + 1 < chain.length; i++) segments.push(idx(chain[i]), idx(chain[i + 1]));
      }
    }
    // Origin on the plane, near the patch.
    const [cx, cy, cz] = coordOf(globalOf[0]);
    const dist = nx * cx + ny * cy + nz * cz - regions.offset[r];
    const ox = cx - dist * nx, oy = cy - dist * ny, oz = cz - dist * nz;
    const fixed = globalOf.length;
    const uv = new Float64Array(2 * fixed);
    for (let i = 0; i < fixed; i++) {
      const [x, y, z] = coordOf(globalOf[i]);
      uv[2 * i] = (x - ox) * e1x + (y - oy) * e1y + (z - oz) * e1z;
      uv[2 * i + 1] = (x - ox) * e2x + (y - oy) * e2y + (z - oz) * e2z;
    }
    // Split points on the line of their edge in the plane too, as nearly as rounding allows:
    // Constrainautor can loop on boundary points a rounding error off a straight chain.
    for (const [e, ids] of edgePoints) {
      const i0 = local.get(edges.v0[e]), i1 = local.get(edges.v1[e]);
      if (i0 === undefined || i1 === undefined || !local.has(ids[0])) continue;
      const params = edgeParams.get(e)!;
      ids.forEach((v, k) => {
        const i = local.get(v)!, t = params[k];
        uv[2 * i] = uv[2 * i0] + t * (uv[2 * i1] - uv[2 * i0]);
        uv[2 * i + 1] = uv[2 * i0 + 1] + t * (uv[2 * i1 + 1] - uv[2 * i0 + 1]);
      });
    }
    const field = refreshed(r);
    const size = (u: number, v: number) => sizeAt(field, ox + u * e1x + v * e2x, oy + u * e1y + v * e2y, oz + u * e1z + v * e2z);
    let made: { points: Float64Array; triangles: Uint32Array } | undefined;
    try {
      made = triangulatePatch({ points: uv, segments: Uint32Array.from(segments), domain: Uint32Array.from(domain), size, maxPoints: MAX_PATCH_POINTS });
      if (!coversPatch(made, uv, Uint32Array.from(domain), fixed)) made = undefined;
    } catch {
      made = undefined;
    }
    const out: number[] = [];
    if (!made) {
      // The libraries refused (collinear or crossing input): split each triangle conformingly instead.
      fanSplit(r, out);
      return out;
    }
    const ids = globalOf.slice();
    for (let i = fixed; i < made.points.length / 2; i++) {
      const u = made.points[2 * i], v = made.points[2 * i + 1];
      newPositions.push(ox + u * e1x + v * e2x, oy + u * e1y + v * e2y, oz + u * e1z + v * e2z);
      ids.push(nextVertex++);
    }
    for (let k = 0; k < made.triangles.length; k++) out.push(ids[made.triangles[k]]);
    return out;
  }

  /** Each triangle of region r with points on its boundary edges: a fan from its centroid. */
  function fanSplit(r: number, out: number[]): void {
    for (let k = start[r]; k < start[r + 1]; k++) {
      const t = members[k];
      const ring: number[] = [];
      for (let j = 0; j < 3; j++) {
        const h = 3 * t + j, a = tr[h];
        ring.push(a);
        if (!isBoundary(h, r)) continue;
        const e = edges.edgeOfHalf[h];
        const mid = edgePoints.get(e);
        if (mid) ring.push(...(edges.v0[e] === a ? mid : mid.slice().reverse()));
      }
      if (ring.length === 3) { out.push(ring[0], ring[1], ring[2]); continue; }
      const a = 3 * tr[3 * t], b = 3 * tr[3 * t + 1], c = 3 * tr[3 * t + 2];
      newPositions.push((p[a] + p[b] + p[c]) / 3, (p[a + 1] + p[b + 1] + p[c + 1]) / 3, (p[a + 2] + p[b + 2] + p[c + 2]) / 3);
      const centre = nextVertex++;
      for (let i = 0; i < ring.length; i++) out.push(centre, ring[i], ring[(i + 1) % ring.length]);
    }
  }

  const positions = allPositions();
  let kept = 0;
  for (let t = 0; t < nt; t++) kept += keep[t];
  const triangles = new Uint32Array(3 * kept + outTri.length);
  const conductor = new Uint32Array(kept + outCond.length);
  const faceOut = faces ? new Uint32Array(kept + outCond.length) : undefined;
  let k = 0;
  for (let t = 0; t < nt; t++) {
    if (!keep[t]) continue;
    triangles[3 * k] = tr[3 * t]; triangles[3 * k + 1] = tr[3 * t + 1]; triangles[3 * k + 2] = tr[3 * t + 2];
    conductor[k] = mesh.conductor[t];
    if (faceOut) faceOut[k] = faces![t];
    k++;
  }
  triangles.set(outTri, 3 * kept);
  conductor.set(outCond, kept);
  if (faceOut) faceOut.set(outFace, kept);
  for (let t = kept; t < conductor.length; t++) worstAfter = Math.max(worstAfter, triangleAspect(positions, triangles, t));
  const out: SurfaceMesh = { positions, triangles, conductor, names: mesh.names.slice() };
  if (faceOut) { out.faces = faceOut; out.reference = mesh.reference; }
  summary.panelsBefore = before;
  summary.panelsAfter = outCond.length;
  summary.worstAspectBefore = worstBefore;
  summary.worstAspectAfter = worstAfter;
  summary.trianglesAfter = conductor.length;
  return { mesh: out, summary };
}

/**
 * Points strictly inside edge a–b (flat x, y, z), spaced so that each step is about the size
 * there: equal steps of ∫ ds / h, the integral taken on a few samples along the edge.
 */
function edgeSplit(p: Float64Array, a: number, b: number, size: (x: number, y: number, z: number) => number): number[] & { params: number[] } {
  const ax = p[3 * a], ay = p[3 * a + 1], az = p[3 * a + 2];
  const dx = p[3 * b] - ax, dy = p[3 * b + 1] - ay, dz = p[3 * b + 2] - az;
  const len = Math.hypot(dx, dy, dz);
  const m = 32;
  const cum = new Float64Array(m + 1);
  for (let i = 0; i < m; i++) {
    const s = (i + 0.5) / m;
    cum[i + 1] = cum[i] + len / m / size(ax + s * dx, ay + s * dy, az + s * dz);
  }
  const n = Math.round(cum[m]);
  const out = Object.assign([] as number[], { params: [] as number[] });
  if (n <= 1) return out;
  for (let k = 1, i = 0; k < n; k++) {
    const target = (k * cum[m]) / n;
    while (cum[i + 1] < target) i++;
    const s = (i + (target - cum[i]) / (cum[i + 1] - cum[i])) / m;
    out.push(ax + s * dx, ay + s * dy, az + s * dz);
    out.params.push(s);
  }
  return out;
}

/** The triangulation uses every fixed point and covers the patch's area. */
function coversPatch(made: { points: Float64Array; triangles: Uint32Array }, uv: Float64Array, domain: Uint32Array, fixed: number): boolean {
  const used = new Uint8Array(fixed);
  let area = 0;
  const q = made.points, t = made.triangles;
  for (let k = 0; k < t.length; k += 3) {
    for (let j = 0; j < 3; j++) if (t[k + j] < fixed) used[t[k + j]] = 1;
    area += cross(q, t[k], t[k + 1], t[k + 2]);
  }
  let want = 0;
  for (let k = 0; k < domain.length; k += 3) want += Math.abs(cross(uv, domain[k], domain[k + 1], domain[k + 2]));
  for (let i = 0; i < fixed; i++) if (!used[i]) return false;
  return Math.abs(area - want) <= 1e-9 * want;
}

function cross(q: Float64Array, a: number, b: number, c: number): number {
  return (q[2 * b] - q[2 * a]) * (q[2 * c + 1] - q[2 * a + 1]) - (q[2 * b + 1] - q[2 * a + 1]) * (q[2 * c] - q[2 * a]);
}
