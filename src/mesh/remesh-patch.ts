/**
 * One planar patch triangulated in its plane: a constrained Delaunay triangulation of fixed
 * points and segments, refined for size and shape by inserting interior points.
 *
 * The core is the libraries': Delaunator (Mapbox) triangulates the points and Constrainautor
 * (Kninnug) recovers the segments by edge flips. They have no quality refinement, so the loop
 * around them is ours, in the manner of Ruppert (J. Algorithms 18(3), 1995) and Chew
 * (Guaranteed-quality mesh generation for curved surfaces, 1993): the circumcentre of every
 * triangle that is too large for the size field or too badly shaped (circumradius over
 * shortest edge above √2) is inserted, worst first, unless it lies outside the patch or in
 * the diametral circle of a segment. Unlike Ruppert's algorithm the segments are never split
 * here: they were split beforehand to the size field, once for both patches that share them,
 * so the patch stays conforming with its neighbours. The triangulation is rebuilt from
 * scratch each round (a few milliseconds for thousands of points). A few rounds of Laplacian
 * smoothing of the inserted points, each followed by a fresh triangulation, finish the shape.
 *
 * Everything here is 2D, in the patch's own plane coordinates; the caller maps to and from 3D.
 */
import Delaunator from "delaunator";
import ConstrainautorModule from "@kninnug/constrainautor";

// The package ships TypeScript source without "type": "module", so the compiler takes its
// default export for a CommonJS namespace; at run time Node loads its .mjs and the default
// export is the class itself.
const Constrainautor = ((ConstrainautorModule as unknown as { default?: unknown }).default ?? ConstrainautorModule) as typeof ConstrainautorModule.default;

export interface PatchInput {
  /** Fixed points (boundary points and kept interior vertices), 2 per point. */
  points: Float64Array;
  /** Constrained segments, 2 point indices each: the patch boundary. */
  segments: Uint32Array;
  /** The patch as it was, as triangles over `points`: tells inside from outside (holes too). */
  domain: Uint32Array;
  /** Target panel size at a point of the plane (same unit as the coordinates). */
  size: (u: number, v: number) => number;
  /** Largest number of points the patch may end with. */
  maxPoints: number;
}

export interface PatchOutput {
  /** Every point, 2 per point; the first ones are the fixed points in their order. */
  points: Float64Array;
  /** Counter-clockwise triangles over `points`, covering the patch. */
  triangles: Uint32Array;
}

/** Circumradius over shortest edge above which a triangle is refined (min angle about 20.7°). */
const RADIUS_EDGE_BOUND = Math.SQRT2;
/** Circumradius above which a triangle is too large: 0.7 h (an equilateral triangle of side 1.2 h). */
const RADIUS_SIZE_FACTOR = 0.7;
const MAX_ROUNDS = 40;
const SMOOTHING_ROUNDS = 3;

/** Triangulate one patch (see the file comment). Throws when the libraries cannot (collinear or crossing input). */
export function triangulatePatch(input: PatchInput): PatchOutput {
  const fixed = input.points.length / 2;
  const domain = new DomainLocator(input.points, input.domain);
  const seg = input.segments;
  let pts = new Float64Array(Math.max(2 * fixed * 2, 64));
  pts.set(input.points);
  let n = fixed;

  const encroaches = (x: number, y: number): boolean => {
    for (let s = 0; s < seg.length; s += 2) {
      const a = 2 * seg[s], b = 2 * seg[s + 1];
      if ((x - pts[a]) * (x - pts[b]) + (y - pts[a + 1]) * (y - pts[b + 1]) < 0) return true;
    }
    return false;
  };

  let cdt = tryTriangulate(pts.subarray(0, 2 * n), seg, domain);
  if (!cdt) throw new Error("the constrained triangulation of the patch boundary failed");
  for (let round = 0; round < MAX_ROUNDS && n < input.maxPoints; round++) {
    const bad: Array<{ x: number; y: number; priority: number }> = [];
    const tri = cdt.triangles;
    for (let k = 0; k < tri.length; k += 3) {
      const a = 2 * tri[k], b = 2 * tri[k + 1], c = 2 * tri[k + 2];
      const q = circumcircle(pts[a], pts[a + 1], pts[b], pts[b + 1], pts[c], pts[c + 1]);
      if (!q) continue;
      const h = input.size((pts[a] + pts[b] + pts[c]) / 3, (pts[a + 1] + pts[b + 1] + pts[c + 1]) / 3);
      const shape = q.r / q.shortest / RADIUS_EDGE_BOUND, big = q.r / (RADIUS_SIZE_FACTOR * h);
      const priority = Math.max(shape, big);
      if (priority > 1) bad.push({ x: q.x, y: q.y, priority });
    }
    if (bad.length === 0) break;
    bad.sort((p, q) => q.priority - p.priority);
    const taken = new PointHash();
    let added = 0;
    for (const c of bad) {
      if (n >= input.maxPoints) break;
      if (!domain.contains(c.x, c.y) || encroaches(c.x, c.y)) continue;
      const h = input.size(c.x, c.y);
      if (taken.within(c.x, c.y, 0.5 * h)) continue;
      taken.add(c.x, c.y, h);
      if (2 * n + 2 > pts.length) { const grown = new Float64Array(2 * pts.length); grown.set(pts); pts = grown; }
      pts[2 * n] = c.x; pts[2 * n + 1] = c.y; n++; added++;
    }
    if (added === 0) break;
    // Constrainautor can fail on near-collinear points (it reports an endless loop): then the
    // round is tried again with the worst half of its points, and so on; with none left the
    // refinement stops at the last triangulation that worked.
    let next = tryTriangulate(pts.subarray(0, 2 * n), seg, domain);
    while (!next && added > 1) {
      n -= added - (added >> 1); added >>= 1;
      next = tryTriangulate(pts.subarray(0, 2 * n), seg, domain);
    }
    if (!next) { n -= added; break; }
    cdt = next;
  }

  for (let round = 0; round < SMOOTHING_ROUNDS && n > fixed; round++) {
    const before = pts.slice(0, 2 * n);
    if (!smooth(pts, n, fixed, cdt.triangles, domain, seg)) break;
    const next = tryTriangulate(pts.subarray(0, 2 * n), seg, domain);
    if (!next) { pts.set(before); break; }
    cdt = next;
  }
  return { points: pts.slice(0, 2 * n), triangles: cdt.triangles };
}

/** Frames tried in turn: the same triangulation in exact arithmetic, other roundings of nearly collinear points. */
const RETRY_ANGLES = [0, 0.37, 1.13];

function tryTriangulate(coords: Float64Array, segments: Uint32Array, domain: DomainLocator): { triangles: Uint32Array } | undefined {
  for (const angle of RETRY_ANGLES) {
    try {
      return triangulate(coords, segments, domain, angle);
    } catch {
      // the next frame
    }
  }
  return undefined;
}

/** The constrained Delaunay triangulation of the points, keeping the triangles inside the domain, counter-clockwise. */
function triangulate(coords: Float64Array, segments: Uint32Array, domain: DomainLocator, angle = 0): { triangles: Uint32Array } {
  let frame = coords;
  if (angle !== 0) {
    const c = Math.cos(angle), s = Math.sin(angle);
    frame = new Float64Array(coords.length);
    for (let i = 0; i < coords.length; i += 2) { frame[i] = c * coords[i] - s * coords[i + 1]; frame[i + 1] = s * coords[i] + c * coords[i + 1]; }
  }
  const del = new Delaunator(frame);
  const edges: [number, number][] = [];
  for (let s = 0; s < segments.length; s += 2) edges.push([segments[s], segments[s + 1]]);
  const con = new Constrainautor(del, edges);
  const tri = del.triangles, half = del.halfedges;
  const nt = tri.length / 3;
  // Triangles joined across unconstrained edges are all inside or all outside: test one per group.
  const group = new Int32Array(nt).fill(-1);
  const inside: boolean[] = [];
  const stack: number[] = [];
  for (let t0 = 0; t0 < nt; t0++) {
    if (group[t0] >= 0) continue;
    const g = inside.length;
    let best = -1, bestArea = -1;
    group[t0] = g; stack.push(t0);
    while (stack.length > 0) {
      const t = stack.pop()!;
      const area = signedArea(coords, tri[3 * t], tri[3 * t + 1], tri[3 * t + 2]);
      if (Math.abs(area) > bestArea) { bestArea = Math.abs(area); best = t; }
      for (let j = 0; j < 3; j++) {
        const e = 3 * t + j, o = half[e];
        if (o < 0 || con.isConstrained(e)) continue;
        const u = (o - (o % 3)) / 3;
        if (group[u] < 0) { group[u] = g; stack.push(u); }
      }
    }
    // Its largest triangle is inside when a point of it is strictly inside the patch: the
    // centroid, or (should that fall on an edge between two of the patch's triangles) a point
    // between the centroid and a corner. A sliver outside, along the boundary, has none.
    const a = 2 * tri[3 * best], b = 2 * tri[3 * best + 1], c = 2 * tri[3 * best + 2];
    const gx = (coords[a] + coords[b] + coords[c]) / 3, gy = (coords[a + 1] + coords[b + 1] + coords[c + 1]) / 3;
    let found = domain.containsStrictly(gx, gy);
    for (const v of [a, b, c]) if (!found) found = domain.containsStrictly(0.75 * gx + 0.25 * coords[v], 0.75 * gy + 0.25 * coords[v + 1]);
    inside.push(found);
  }
  const out: number[] = [];
  for (let t = 0; t < nt; t++) {
    if (!inside[group[t]]) continue;
    const a = tri[3 * t], b = tri[3 * t + 1], c = tri[3 * t + 2];
    if (signedArea(coords, a, b, c) > 0) out.push(a, b, c); else out.push(a, c, b);
  }
  return { triangles: Uint32Array.from(out) };
}

/**
 * Move each inserted point to the mean of its neighbours when it stays inside the patch,
 * crosses no segment and enters no segment's diametral circle. True when any point moved.
 */
function smooth(pts: Float64Array, n: number, fixed: number, tri: Uint32Array, domain: DomainLocator, seg: Uint32Array): boolean {
  const sx = new Float64Array(n), sy = new Float64Array(n), cnt = new Uint32Array(n);
  for (let k = 0; k < tri.length; k += 3) {
    for (let j = 0; j < 3; j++) {
      const v = tri[k + j], w = tri[k + (j + 1) % 3];
      // Each interior edge is seen from both sides: every neighbour counts twice, evenly.
      sx[v] += pts[2 * w]; sy[v] += pts[2 * w + 1]; cnt[v]++;
      sx[w] += pts[2 * v]; sy[w] += pts[2 * v + 1]; cnt[w]++;
    }
  }
  let moved = false;
  for (let v = fixed; v < n; v++) {
    if (cnt[v] === 0) continue;
    const x0 = pts[2 * v], y0 = pts[2 * v + 1];
    const x = sx[v] / cnt[v], y = sy[v] / cnt[v];
    if (!domain.contains(x, y)) continue;
    let ok = true;
    for (let s = 0; s < seg.length && ok; s += 2) {
      const a = 2 * seg[s], b = 2 * seg[s + 1];
      if ((x - pts[a]) * (x - pts[b]) + (y - pts[a + 1]) * (y - pts[b + 1]) < 0) ok = false;
      else if (segmentsCross(x0, y0, x, y, pts[a], pts[a + 1], pts[b], pts[b + 1])) ok = false;
    }
    if (!ok) continue;
    pts[2 * v] = x; pts[2 * v + 1] = y;
    moved = true;
  }
  return moved;
}

function signedArea(p: ArrayLike<number>, a: number, b: number, c: number): number {
  return 0.5 * ((p[2 * b] - p[2 * a]) * (p[2 * c + 1] - p[2 * a + 1]) - (p[2 * b + 1] - p[2 * a + 1]) * (p[2 * c] - p[2 * a]));
}

function circumcircle(ax: number, ay: number, bx: number, by: number, cx: number, cy: number): { x: number; y: number; r: number; shortest: number } | null {
  const bxr = bx - ax, byr = by - ay, cxr = cx - ax, cyr = cy - ay;
  const d = 2 * (bxr * cyr - byr * cxr);
  if (d === 0) return null;
  const b2 = bxr * bxr + byr * byr, c2 = cxr * cxr + cyr * cyr;
  const ux = (cyr * b2 - byr * c2) / d, uy = (bxr * c2 - cxr * b2) / d;
  const a2 = (cx - bx) ** 2 + (cy - by) ** 2;
  const shortest = Math.sqrt(Math.min(a2, b2, c2));
  return { x: ax + ux, y: ay + uy, r: Math.hypot(ux, uy), shortest };
}

/** Whether open segments pq and ab cross properly. */
function segmentsCross(px: number, py: number, qx: number, qy: number, ax: number, ay: number, bx: number, by: number): boolean {
  const o1 = (qx - px) * (ay - py) - (qy - py) * (ax - px);
  const o2 = (qx - px) * (by - py) - (qy - py) * (bx - px);
  const o3 = (bx - ax) * (py - ay) - (by - ay) * (px - ax);
  const o4 = (bx - ax) * (qy - ay) - (by - ay) * (qx - ax);
  return o1 * o2 < 0 && o3 * o4 < 0;
}

/** Point location in the union of the patch's original triangles, through a uniform grid of their boxes. */
class DomainLocator {
  private readonly cells: Int32Array[];
  private readonly x0: number; private readonly y0: number;
  private readonly cw: number; private readonly ch: number;
  private readonly nx: number; private readonly ny: number;
  private readonly eps: number;
  constructor(private readonly p: Float64Array, private readonly tri: Uint32Array) {
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    for (let k = 0; k < tri.length; k++) {
      const x = p[2 * tri[k]], y = p[2 * tri[k] + 1];
      if (x < x0) x0 = x; if (x > x1) x1 = x; if (y < y0) y0 = y; if (y > y1) y1 = y;
    }
    const nt = tri.length / 3;
    const side = Math.max(1, Math.ceil(Math.sqrt(nt)));
    this.nx = side; this.ny = side;
    this.x0 = x0; this.y0 = y0;
    this.cw = (x1 - x0) / side || 1; this.ch = (y1 - y0) / side || 1;
    this.eps = 1e-12 * Math.max(x1 - x0, y1 - y0);
    const lists: number[][] = Array.from({ length: side * side }, () => []);
    for (let t = 0; t < nt; t++) {
      let a0 = Infinity, b0 = Infinity, a1 = -Infinity, b1 = -Infinity;
      for (let j = 0; j < 3; j++) {
        const x = p[2 * tri[3 * t + j]], y = p[2 * tri[3 * t + j] + 1];
        if (x < a0) a0 = x; if (x > a1) a1 = x; if (y < b0) b0 = y; if (y > b1) b1 = y;
      }
      for (let i = this.ix(a0); i <= this.ix(a1); i++) for (let j = this.iy(b0); j <= this.iy(b1); j++) lists[j * side + i].push(t);
    }
    this.cells = lists.map((l) => Int32Array.from(l));
  }
  private ix(x: number): number { return Math.min(this.nx - 1, Math.max(0, Math.floor((x - this.x0) / this.cw))); }
  private iy(y: number): number { return Math.min(this.ny - 1, Math.max(0, Math.floor((y - this.y0) / this.ch))); }
  /** Inside or on the boundary of one of the triangles, to a relative 1e-12. */
  contains(x: number, y: number): boolean { return this.test(x, y, -1); }

  /**
   * Inside one of the triangles by a relative margin of 1e-12: a point on the patch boundary,
   * or a sliver's centroid a rounding error outside it (points split from a boundary edge are
   * off its line by rounding), is not.
   */
  containsStrictly(x: number, y: number): boolean { return this.test(x, y, 1); }

  private test(x: number, y: number, sign: number): boolean {
    if (x < this.x0 - this.eps || y < this.y0 - this.eps || x > this.x0 + this.nx * this.cw + this.eps || y > this.y0 + this.ny * this.ch + this.eps) return false;
    const p = this.p, tri = this.tri;
    for (const t of this.cells[this.iy(y) * this.nx + this.ix(x)]) {
      const a = tri[3 * t], b = tri[3 * t + 1], c = tri[3 * t + 2];
      const area = signedArea(p, a, b, c);
      const s = Math.sign(area) || 1;
      const eps = sign * this.eps * Math.sqrt(Math.abs(area)) * 4;
      const w0 = s * ((p[2 * b] - x) * (p[2 * c + 1] - y) - (p[2 * b + 1] - y) * (p[2 * c] - x));
      const w1 = s * ((p[2 * c] - x) * (p[2 * a + 1] - y) - (p[2 * c + 1] - y) * (p[2 * a] - x));
      const w2 = s * ((p[2 * a] - x) * (p[2 * b + 1] - y) - (p[2 * a + 1] - y) * (p[2 * b] - x));
      if (w0 >= eps && w1 >= eps && w2 >= eps) return true;
    }
    return false;
  }
}

/** Points accepted in one round, hashed by cell, to keep candidates of neighbouring triangles apart. */
class PointHash {
  private readonly map = new Map<string, number[]>();
  private cell = 0;
  private readonly all: number[] = [];
  add(x: number, y: number, h: number): void {
    if (this.cell === 0) this.cell = h;
    this.all.push(x, y);
    const key = `${Math.floor(x / this.cell)},${Math.floor(y / this.cell)}`;
    const l = this.map.get(key);
    if (l) l.push(x, y); else this.map.set(key, [x, y]);
  }
  within(x: number, y: number, r: number): boolean {
    if (this.cell === 0) return false;
    const reach = Math.ceil(r / this.cell);
    if (reach > 8) {
      for (let k = 0; k < this.all.length; k += 2) if ((this.all[k] - x) ** 2 + (this.all[k + 1] - y) ** 2 < r * r) return true;
      return false;
    }
    const cx = Math.floor(x / this.cell), cy = Math.floor(y / this.cell);
    for (let i = cx - reach; i <= cx + reach; i++) {
      for (let j = cy - reach; j <= cy + reach; j++) {
        const l = this.map.get(`${i},${j}`);
        if (!l) continue;
        for (let k = 0; k < l.length; k += 2) if ((l[k] - x) ** 2 + (l[k + 1] - y) ** 2 < r * r) return true;
      }
    }
    return false;
  }
}
