/**
 * Projection onto a reference surface (see `ReferenceSurface` in model.ts): where refinement
 * puts the new points of CAD and generated input.
 *
 * A point goes onto face f in two steps. First the closest point on f's reference triangles
 * (a bounding-volume hierarchy per face, bvh.ts; Ericson's point–triangle test). Then that
 * point, at its barycentric coordinates in the reference triangle, is lifted onto the cubic
 * Curved PN Triangle patch of that triangle built from its exact vertex normals (A. Vlachos,
 * J. Peters, C. Boyd, J. L. Mitchell, "Curved PN Triangles", ACM I3D 2001, section 3): the
 * patch interpolates the vertices and is tangent to the true face there, so it lies on the
 * true face to O(h^4) in the reference's edge length h, where the flat reference triangle alone
 * is off by O(h^2).
 *
 * Curves where two faces meet, and the free rims of open faces, are the reference edges used
 * by one triangle of a face; edges of two faces that coincide (same end points, to a
 * millionth of the reference's median edge) form the curve between them, the others the
 * face's rim. A point goes onto a curve by the closest point on its segments, lifted on a
 * cubic Bézier segment whose inner control points are the chord's projections onto the
 * tangent line at each end: there the tangent is N_f × N_g, the direction that lies in both
 * faces (the PN construction, which projects the chord onto the tangent plane, generalised
 * from one normal to two). Where the faces meet tangentially (a fillet running into a flat
 * face: N_f ∥ N_g) and on a rim, the tangent is the polyline's own by central differences
 * (the sum of the unit directions of the two segments at a vertex), made square to the face
 * normal: second-order in the reference's spacing where the chord alone is off by O(h^2).
 * This is exact where alternating projections onto the two faces would only converge, and
 * needs no iteration. A pair of faces with no common curve in the reference falls back to
 * alternating projections.
 *
 * Queries allocate nothing: one module-level scratch, a traversal stack grown on demand.
 */
import type { ReferenceSurface } from "./model.js";
import { buildBoxTree, triangleBoxes, boxDistanceSq, type BoxTree } from "./bvh.js";
import { meshEdges } from "./edges.js";
import { closestPointTriangle } from "../geometry/closest-point.js";

/** Projection of points onto the faces, curves and rims of one reference surface. */
export interface ReferenceProjector {
  readonly reference: ReferenceSurface;
  /** Closest point on face f, lifted onto its PN patches: position into out[0..2], unit normal into out[3..5]; returns false when face f has no triangles. */
  projectToFace(f: number, x: number, y: number, z: number, out: Float64Array): boolean;
  /** A point on the curve where faces f and g meet, near (x, y, z): out[0..2] (out has 6 entries); where they do not meet in the reference, by alternating projections onto f and g. False when f or g has no triangles. */
  projectToCurve(f: number, g: number, x: number, y: number, z: number, out: Float64Array): boolean;
  /** A point on the free rim of face f (its reference edges used by one triangle and by no other face): out[0..2]; false when f has none. */
  projectToRim(f: number, x: number, y: number, z: number, out: Float64Array): boolean;
}

interface FaceTree {
  tree: BoxTree;
  /** Reference triangle of each item of the tree. */
  tri: Uint32Array;
}

/** The segments of one curve (faces f < g, or a rim g = -1): endpoints as reference vertices of f and of g (for their normals). */
interface Curve {
  /** 4 per segment: vertex a and b of face f, the same points as vertices of face g (or of f again for a rim). */
  seg: Uint32Array;
  /** 6 per segment: the polyline's unit tangent at a and at b (central differences over the neighbouring segments; sign arbitrary). */
  tan: Float64Array;
}

const cache = new WeakMap<ReferenceSurface, ReferenceProjector>();

/** The projector of `reference`, built once and cached on the object (several refinement levels reuse it). */
export function referenceProjector(reference: ReferenceSurface): ReferenceProjector {
  let p = cache.get(reference);
  if (p === undefined) { p = buildProjector(reference); cache.set(reference, p); }
  return p;
}

let stack = new Int32Array(256);
const scratch = new Float64Array(3);
const other = new Float64Array(6);

function buildProjector(ref: ReferenceSurface): ReferenceProjector {
  const P = ref.positions, N = ref.normals, T = ref.triangles, F = ref.face;
  const nt = T.length / 3, nf = ref.faceCount;
  // Per face: its triangles and a tree over them.
  const counts = new Uint32Array(nf + 1);
  for (let t = 0; t < nt; t++) counts[F[t] + 1]++;
  for (let f = 0; f < nf; f++) counts[f + 1] += counts[f];
  const byFace = new Uint32Array(nt);
  const fill = counts.slice(0, nf);
  for (let t = 0; t < nt; t++) byFace[fill[F[t]]++] = t;
  const allBoxes = triangleBoxes(P, T);
  const trees: Array<FaceTree | undefined> = [];
  for (let f = 0; f < nf; f++) {
    const tri = byFace.slice(counts[f], counts[f + 1]);
    if (tri.length === 0) { trees.push(undefined); continue; }
    const boxes = new Float64Array(6 * tri.length);
    for (let i = 0; i < tri.length; i++) boxes.set(allBoxes.subarray(6 * tri[i], 6 * tri[i] + 6), 6 * i);
    trees.push({ tree: buildBoxTree(boxes), tri });
  }
  const curves = buildCurves(ref);

  /**
   * Nearest reference triangle of face f to (x, y, z); closest point into scratch; returns the
   * triangle or -1. The branch and bound of bvh.ts's nearestItem, inlined: that one calls back
   * per item and returns an object, and this runs several times per new point.
   */
  function nearestTriangle(f: number, x: number, y: number, z: number): number {
    const ft = trees[f];
    if (ft === undefined) return -1;
    const { tree, tri } = ft;
    let best = Infinity, bestT = -1, bx = 0, by = 0, bz = 0;
    let sp = 0;
    stack[sp++] = 0;
    while (sp > 0) {
      const n = stack[--sp];
      if (boxDistanceSq(tree.bounds, 6 * n, x, y, z) > best) continue;
      const l = tree.left[n];
      if (l < 0) {
        for (let k = tree.start[n], e = k + tree.count[n]; k < e; k++) {
          const item = tree.order[k];
          if (boxDistanceSq(tree.itemBounds, 6 * item, x, y, z) > best) continue;
          const t = tri[item];
          const a = 3 * T[3 * t], b = 3 * T[3 * t + 1], c = 3 * T[3 * t + 2];
          const d = closestPointTriangle(scratch, x, y, z, P[a], P[a + 1], P[a + 2], P[b], P[b + 1], P[b + 2], P[c], P[c + 1], P[c + 2]);
          if (d < best) { best = d; bestT = t; bx = scratch[0]; by = scratch[1]; bz = scratch[2]; }
        }
      } else {
        if (sp + 2 > stack.length) { const s = new Int32Array(2 * stack.length); s.set(stack); stack = s; }
        const dl = boxDistanceSq(tree.bounds, 6 * l, x, y, z), dr = boxDistanceSq(tree.bounds, 6 * (l + 1), x, y, z);
        if (dl <= dr) { stack[sp++] = l + 1; stack[sp++] = l; } else { stack[sp++] = l; stack[sp++] = l + 1; }
      }
    }
    scratch[0] = bx; scratch[1] = by; scratch[2] = bz;
    return bestT;
  }

  function projectToFace(f: number, x: number, y: number, z: number, out: Float64Array): boolean {
    if (!(f >= 0 && f < nf)) return false;
    const t = nearestTriangle(f, x, y, z);
    if (t < 0) return false;
    pnLift(P, N, T[3 * t], T[3 * t + 1], T[3 * t + 2], scratch[0], scratch[1], scratch[2], out);
    return true;
  }

  function projectOnSegments(c: Curve, twoFaced: boolean, x: number, y: number, z: number, out: Float64Array): boolean {
    const s = c.seg;
    let best = Infinity, bi = -1, bu = 0;
    for (let i = 0; i < s.length; i += 4) {
      const a = 3 * s[i], b = 3 * s[i + 1];
      const dx = P[b] - P[a], dy = P[b + 1] - P[a + 1], dz = P[b + 2] - P[a + 2];
      const l2 = dx * dx + dy * dy + dz * dz;
      let u = l2 > 0 ? ((x - P[a]) * dx + (y - P[a + 1]) * dy + (z - P[a + 2]) * dz) / l2 : 0;
      u = u < 0 ? 0 : u > 1 ? 1 : u;
      const rx = P[a] + u * dx - x, ry = P[a + 1] + u * dy - y, rz = P[a + 2] + u * dz - z;
      const d = rx * rx + ry * ry + rz * rz;
      if (d < best) { best = d; bi = i; bu = u; }
    }
    if (bi < 0) return false;
    curveLift(P, N, s[bi], s[bi + 1], twoFaced ? s[bi + 2] : s[bi], twoFaced ? s[bi + 3] : s[bi + 1], c.tan, 6 * (bi / 4), bu, out);
    return true;
  }

  function projectToCurve(f: number, g: number, x: number, y: number, z: number, out: Float64Array): boolean {
    if (f === g) return projectToFace(f, x, y, z, out);
    const c = curves.get(f < g ? f * (nf + 1) + g : g * (nf + 1) + f);
    if (c !== undefined) return projectOnSegments(c, true, x, y, z, out);
    // No common curve in the reference: alternating projections (converge where the faces meet transversally).
    let px = x, py = y, pz = z;
    for (let it = 0; it < 8; it++) {
      if (!projectToFace(f, px, py, pz, other)) return false;
      if (!projectToFace(g, other[0], other[1], other[2], out)) return false;
      const moved = Math.hypot(out[0] - px, out[1] - py, out[2] - pz);
      px = out[0]; py = out[1]; pz = out[2];
      if (moved === 0) break;
    }
    return true;
  }

  function projectToRim(f: number, x: number, y: number, z: number, out: Float64Array): boolean {
    const c = curves.get(f * (nf + 1) + nf);
    return c !== undefined && projectOnSegments(c, false, x, y, z, out);
  }

  return { reference: ref, projectToFace, projectToCurve, projectToRim };
}

/**
 * The boundary edges of each face (used by one of its triangles), matched between faces by
 * their end points. Curves are keyed f·(F+1)+g for f < g, rims f·(F+1)+F.
 */
function buildCurves(ref: ReferenceSurface): Map<number, Curve> {
  const P = ref.positions, T = ref.triangles, F = ref.face;
  const nt = T.length / 3, nf = ref.faceCount;
  // The edges of each face used by one of its triangles (vertices are shared within a face;
  // an edge whose two triangles lie on different faces, if a producer shares vertices across
  // faces, counts once for each).
  const edges = meshEdges({ positions: P, triangles: T, conductor: F, names: [] });
  const boundary: Array<{ face: number; a: number; b: number }> = [];
  for (let e = 0; e < edges.count; e++) {
    const h0 = edges.half0[e], h1 = edges.half1[e];
    const f0 = F[(h0 - (h0 % 3)) / 3];
    if (edges.faces[e] === 1) boundary.push({ face: f0, a: edges.v0[e], b: edges.v1[e] });
    else if (edges.faces[e] === 2) {
      const f1 = F[(h1 - (h1 % 3)) / 3];
      if (f1 !== f0) { boundary.push({ face: f0, a: edges.v0[e], b: edges.v1[e] }); boundary.push({ face: f1, a: edges.v0[e], b: edges.v1[e] }); }
    }
  }
  // Median edge length sets the matching quantum.
  const lengths: number[] = [];
  for (let t = 0; t < nt && lengths.length < 4096; t++) {
    const a = 3 * T[3 * t], b = 3 * T[3 * t + 1];
    lengths.push(Math.hypot(P[b] - P[a], P[b + 1] - P[a + 1], P[b + 2] - P[a + 2]));
  }
  lengths.sort((u, v) => u - v);
  const q = Math.max(1e-6 * (lengths[lengths.length >> 1] ?? 0), 1e-300);
  const pointKey = (v: number): string => `${Math.round(P[3 * v] / q)},${Math.round(P[3 * v + 1] / q)},${Math.round(P[3 * v + 2] / q)}`;
  const byPoints = new Map<string, Array<{ face: number; a: number; b: number }>>();
  for (const e of boundary) {
    const ka = pointKey(e.a), kb = pointKey(e.b);
    const k = ka < kb ? `${ka}|${kb}` : `${kb}|${ka}`;
    const list = byPoints.get(k);
    if (list) list.push(e); else byPoints.set(k, [e]);
  }
  const segs = new Map<number, number[]>();
  const push = (key: number, ...v: number[]): void => { const s = segs.get(key); if (s) s.push(...v); else segs.set(key, v); };
  for (const list of byPoints.values()) {
    for (let i = 0; i < list.length; i++) {
      const e = list[i];
      let paired = false;
      for (let j = 0; j < list.length; j++) {
        const o = list[j];
        if (j === i || o.face === e.face) continue;
        paired = true;
        if (e.face > o.face) continue; // each pair once, from the lower face
        // o's vertices in the order of e's: o.a at e.a's point or at e.b's.
        const same = pointKey(o.a) === pointKey(e.a);
        push(e.face * (nf + 1) + o.face, e.a, e.b, same ? o.a : o.b, same ? o.b : o.a);
      }
      if (!paired) push(e.face * (nf + 1) + nf, e.a, e.b, e.a, e.b);
    }
  }
  const out = new Map<number, Curve>();
  for (const [k, v] of segs) {
    const seg = Uint32Array.from(v), ns = seg.length / 4;
    // Polyline tangents: at each vertex (of face f's side) the sum of its segments' unit
    // directions, each turned to agree with the first.
    const sum = new Map<number, [number, number, number]>();
    for (let i = 0; i < ns; i++) {
      const a = seg[4 * i], b = seg[4 * i + 1];
      let dx = P[3 * b] - P[3 * a], dy = P[3 * b + 1] - P[3 * a + 1], dz = P[3 * b + 2] - P[3 * a + 2];
      const l = Math.hypot(dx, dy, dz);
      if (l === 0) continue;
      dx /= l; dy /= l; dz /= l;
      for (const w of [a, b]) {
        const acc = sum.get(w);
        if (acc === undefined) { sum.set(w, [dx, dy, dz]); continue; }
        const sg = acc[0] * dx + acc[1] * dy + acc[2] * dz < 0 ? -1 : 1;
        acc[0] += sg * dx; acc[1] += sg * dy; acc[2] += sg * dz;
      }
    }
    const tan = new Float64Array(6 * ns);
    for (let i = 0; i < ns; i++) {
      for (let e = 0; e < 2; e++) {
        const acc = sum.get(seg[4 * i + e]);
        if (acc === undefined) continue;
        const l = Math.hypot(acc[0], acc[1], acc[2]);
        if (l > 0) { tan[6 * i + 3 * e] = acc[0] / l; tan[6 * i + 3 * e + 1] = acc[1] / l; tan[6 * i + 3 * e + 2] = acc[2] / l; }
      }
    }
    out.set(k, { seg, tan });
  }
  return out;
}

/**
 * The point at barycentric position of (x, y, z) in reference triangle (i, j, k), lifted onto
 * its PN patch (Vlachos et al. 2001, eq. for b(u,v,w) with the control points of section 3):
 * out[0..2] the point, out[3..5] the normal interpolated linearly and normalised.
 */
function pnLift(P: Float64Array, N: Float64Array, i: number, j: number, k: number, x: number, y: number, z: number, out: Float64Array): void {
  const a = 3 * i, b = 3 * j, c = 3 * k;
  // Barycentric coordinates of the (in-plane) closest point.
  const e0x = P[b] - P[a], e0y = P[b + 1] - P[a + 1], e0z = P[b + 2] - P[a + 2];
  const e1x = P[c] - P[a], e1y = P[c + 1] - P[a + 1], e1z = P[c + 2] - P[a + 2];
  const rx = x - P[a], ry = y - P[a + 1], rz = z - P[a + 2];
  const d00 = e0x * e0x + e0y * e0y + e0z * e0z, d01 = e0x * e1x + e0y * e1y + e0z * e1z, d11 = e1x * e1x + e1y * e1y + e1z * e1z;
  const d20 = rx * e0x + ry * e0y + rz * e0z, d21 = rx * e1x + ry * e1y + rz * e1z;
  const den = d00 * d11 - d01 * d01;
  let u = den > 0 ? (d11 * d20 - d01 * d21) / den : 0, v = den > 0 ? (d00 * d21 - d01 * d20) / den : 0;
  if (u < 0) u = 0; if (v < 0) v = 0;
  if (u + v > 1) { const s = u + v; u /= s; v /= s; }
  const w = 1 - u - v;
  if (N[a] === N[b] && N[a] === N[c] && N[a + 1] === N[b + 1] && N[a + 1] === N[c + 1] && N[a + 2] === N[b + 2] && N[a + 2] === N[c + 2]) {
    // A flat piece: its patch is the triangle itself, and the closest point is on it exactly.
    out[0] = x; out[1] = y; out[2] = z; out[3] = N[a]; out[4] = N[a + 1]; out[5] = N[a + 2];
    return;
  }
  // w weighs P1 = a, u weighs P2 = b, v weighs P3 = c; w_ij = (Pj - Pi)·Ni.
  const w12 = W(P, N, a, b), w21 = W(P, N, b, a), w23 = W(P, N, b, c), w32 = W(P, N, c, b), w31 = W(P, N, c, a), w13 = W(P, N, a, c);
  for (let d = 0; d < 3; d++) {
    const p1 = P[a + d], p2 = P[b + d], p3 = P[c + d];
    // Control points b210 = (2P1 + P2 - w12 N1)/3 and the like.
    const b210 = (2 * p1 + p2 - w12 * N[a + d]) / 3, b120 = (2 * p2 + p1 - w21 * N[b + d]) / 3;
    const b021 = (2 * p2 + p3 - w23 * N[b + d]) / 3, b012 = (2 * p3 + p2 - w32 * N[c + d]) / 3;
    const b102 = (2 * p3 + p1 - w31 * N[c + d]) / 3, b201 = (2 * p1 + p3 - w13 * N[a + d]) / 3;
    const E = (b210 + b120 + b021 + b012 + b102 + b201) / 6, V = (p1 + p2 + p3) / 3;
    const b111 = E + (E - V) / 2;
    out[d] = p1 * w * w * w + p2 * u * u * u + p3 * v * v * v
      + 3 * b210 * w * w * u + 3 * b120 * w * u * u + 3 * b201 * w * w * v
      + 3 * b021 * u * u * v + 3 * b102 * w * v * v + 3 * b012 * u * v * v + 6 * b111 * w * u * v;
  }
  let nx = w * N[a] + u * N[b] + v * N[c], ny = w * N[a + 1] + u * N[b + 1] + v * N[c + 1], nz = w * N[a + 2] + u * N[b + 2] + v * N[c + 2];
  const len = Math.sqrt(nx * nx + ny * ny + nz * nz);
  if (len > 0) { nx /= len; ny /= len; nz /= len; }
  out[3] = nx; out[4] = ny; out[5] = nz;
}

/** w_ij = (P_j - P_i)·N_i of Vlachos et al., for vertex offsets i, j. */
function W(P: Float64Array, N: Float64Array, i: number, j: number): number {
  return (P[j] - P[i]) * N[i] + (P[j + 1] - P[i + 1]) * N[i + 1] + (P[j + 2] - P[i + 2]) * N[i + 2];
}

/**
 * Point at parameter s on the cubic Bézier over segment a-b whose inner control points are the
 * chord's projections onto the tangent line at each end (tangent N_f × N_g from the normals of
 * a, b in face f and a2, b2 in face g), or onto the tangent plane (the PN edge curve) where the
 * normals are parallel or it is a rim (a2 = a, b2 = b).
 */
function curveLift(P: Float64Array, N: Float64Array, ia: number, ib: number, ia2: number, ib2: number, tan: Float64Array, to: number, s: number, out: Float64Array): void {
  const a = 3 * ia, b = 3 * ib, a2 = 3 * ia2, b2 = 3 * ib2;
  const dx = P[b] - P[a], dy = P[b + 1] - P[a + 1], dz = P[b + 2] - P[a + 2];
  // Control point next to a, written into other[0..2]; next to b into other[3..5].
  endControl(N, a, a2, tan, to, dx, dy, dz, P[a], P[a + 1], P[a + 2], 0);
  endControl(N, b, b2, tan, to + 3, -dx, -dy, -dz, P[b], P[b + 1], P[b + 2], 3);
  const t = 1 - s;
  for (let d = 0; d < 3; d++) {
    out[d] = t * t * t * P[a + d] + 3 * t * t * s * other[d] + 3 * t * s * s * other[3 + d] + s * s * s * P[b + d];
  }
}

/** Sine below which two faces' normals count as parallel (they meet tangentially) at a curve point. */
const TANGENTIAL = 1e-3;

function endControl(N: Float64Array, v: number, v2: number, tan: Float64Array, to: number, dx: number, dy: number, dz: number, px: number, py: number, pz: number, o: number): void {
  const nx = N[v], ny = N[v + 1], nz = N[v + 2];
  const mx = N[v2], my = N[v2 + 1], mz = N[v2 + 2];
  let tx = ny * mz - nz * my, ty = nz * mx - nx * mz, tz = nx * my - ny * mx;
  const tl = Math.sqrt(tx * tx + ty * ty + tz * tz);
  if (tl > TANGENTIAL) { tx /= tl; ty /= tl; tz /= tl; }
  else {
    // Tangential meeting or a rim: the polyline's tangent, made square to the face normal.
    tx = tan[to]; ty = tan[to + 1]; tz = tan[to + 2];
    const k = tx * nx + ty * ny + tz * nz;
    tx -= k * nx; ty -= k * ny; tz -= k * nz;
    const l = Math.sqrt(tx * tx + ty * ty + tz * tz);
    if (l > 0) { tx /= l; ty /= l; tz /= l; }
  }
  if (tx !== 0 || ty !== 0 || tz !== 0) {
    const k = (dx * tx + dy * ty + dz * tz) / 3;
    other[o] = px + k * tx; other[o + 1] = py + k * ty; other[o + 2] = pz + k * tz;
  } else {
    const k = dx * nx + dy * ny + dz * nz;
    other[o] = px + (dx - k * nx) / 3; other[o + 1] = py + (dy - k * ny) / 3; other[o + 2] = pz + (dz - k * nz) / 3;
  }
}
