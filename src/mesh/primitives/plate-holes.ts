/**
 * Rectangular plate with circular holes: an open sheet of zero thickness like ./plate.ts,
 * graded toward its outer rim and toward each hole's rim, where the charge of a thin sheet is
 * singular (inverse square root of the distance) at an inner rim as at the outer one.
 *
 * Points, then a constrained Delaunay triangulation:
 *  - the plate's own lattice (./plate.ts: graded toward the outer rim), less the points near a hole;
 *  - per hole, its rim polygon (m segments, at most the nominal spacing and at most the gap to
 *    the nearest other rim) and rings around it whose radial steps start at the rim spacing over
 *    `grading` and grow by 1.3 a ring until they reach the lattice's spacing, each ring with
 *    about 2 pi rho / (its step) segments (strips along the rim, as on the outer rim, then
 *    near-equilateral panels);
 *  - where two regions meet (two holes, a hole and the outer rim), a point is kept only on its
 *    own side (nearer its own rim), and a point closer than about half its spacing to one
 *    already kept is dropped.
 * The triangulation is delaunator's, with the outer rim and the hole rims made edges by
 * constrainautor (a maintained constrained-Delaunay layer; no quality mesher of our own), and
 * the triangles inside a hole removed.
 *
 * Hole rims are polygons inscribed in their circles, so the area is A B - sum of the polygon
 * areas, which tends to A B - sum pi R^2 at second order in 1/m.
 */
import Delaunator from "delaunator";
import * as constrainautorModule from "@kninnug/constrainautor";
import type { SurfaceMesh } from "../model.js";
import { symmetricNodes, placeSymmetric } from "./grading.js";
import { checkTriangleBudget } from "./placement.js";
import type { PlateParams } from "./plate.js";
import { sideDivisions } from "./box.js";
import { facedShape, referenceFactor, type FacedTriangulation } from "./reference.js";

// The package's ES module exports the class as its default; its typings (a .ts source in a
// package without "type": "module") read as CommonJS under NodeNext, hence the cast.
type ConstrainautorClass = new (del: { coords: ArrayLike<number>; triangles: Uint32Array; halfedges: Int32Array }) => { constrainAll(edges: readonly [number, number][]): void };
const Constrainautor = (constrainautorModule as unknown as { default: ConstrainautorClass }).default;

/** A hole: centre x, y in the plate's plane from the plate's centre, and radius; metres. */
export type Hole = readonly [number, number, number];

/** The plate's parameters (./plate.ts) and its holes. */
export interface PlateHolesParams extends PlateParams {
  holes: readonly Hole[];
}

/** Why a set of holes cannot be cut from a plate of this size, or undefined when it can. Holes are numbered from 1. */
export function holesFault(size: readonly number[], holes: readonly Hole[]): string | undefined {
  for (let i = 0; i < holes.length; i++) {
    const [x, y, r] = holes[i];
    if (!(r > 0)) return `hole ${i + 1} has a radius of ${r}; it must be positive`;
    if (!(Math.abs(x) + r < size[0] / 2 && Math.abs(y) + r < size[1] / 2)) return `hole ${i + 1} (${x}, ${y}, radius ${r}) reaches the plate's edge`;
    for (let j = 0; j < i; j++) {
      const [xj, yj, rj] = holes[j];
      if (!(Math.hypot(x - xj, y - yj) > r + rj)) return `hole ${i + 1} overlaps or touches hole ${j + 1}`;
    }
  }
  return undefined;
}

/** Distance from (x, y) to the rectangle's rim, inside; metres. */
const rimDistance = (x: number, y: number, hx: number, hy: number): number => Math.min(hx - Math.abs(x), hy - Math.abs(y));

interface Candidate { x: number; y: number; spacing: number }

/**
 * The points kept so far, with a query "is any kept point within `radius`?" answered from a
 * grid whose cell is at least the radius: one grid per power of two from the finest spacing to
 * the widest, so a dense rim's queries look at small cells and a coarse lattice point's at
 * large ones (one grid of the widest cell made a gap of 1/1000 of the plate quadratic).
 */
class PointSet {
  readonly xs: number[] = [];
  readonly ys: number[] = [];
  private readonly levels: Map<number, number[]>[] = [];
  private readonly cells: number[] = [];
  constructor(finest: number, widest: number, private readonly hx: number, private readonly hy: number) {
    for (let c = Math.max(finest, (widest + hx + hy) * 1e-12); ; c *= 2) {
      this.cells.push(c);
      this.levels.push(new Map());
      if (c >= widest) break;
    }
  }
  // Two cells may share a key when a grid has more than 2^26 cells a side; that only merges their lists (distances are checked).
  private key(ix: number, iy: number): number { return ix * 67108864 + iy; }
  add(x: number, y: number): void {
    for (let l = 0; l < this.cells.length; l++) {
      const k = this.key(Math.floor((x + this.hx) / this.cells[l]), Math.floor((y + this.hy) / this.cells[l]));
      const list = this.levels[l].get(k);
      if (list) list.push(this.xs.length); else this.levels[l].set(k, [this.xs.length]);
    }
    this.xs.push(x); this.ys.push(y);
  }
  /** True when no kept point lies within `radius` of (x, y). */
  clear(x: number, y: number, radius: number): boolean {
    let l = 0;
    while (l < this.cells.length - 1 && this.cells[l] < radius) l++;
    const cell = this.cells[l], grid = this.levels[l];
    const ix = Math.floor((x + this.hx) / cell), iy = Math.floor((y + this.hy) / cell);
    const reach = Math.ceil(radius / cell);
    for (let a = ix - reach; a <= ix + reach; a++) {
      for (let b = iy - reach; b <= iy + reach; b++) {
        for (const p of grid.get(this.key(a, b)) ?? []) if (Math.hypot(this.xs[p] - x, this.ys[p] - y) < radius) return false;
      }
    }
    return true;
  }
}

/**
 * The plate with holes on an nx x ny lattice, every count (lattice divisions, segments around
 * each hole) multiplied by `factor`, so a reference is exactly that many times finer even where
 * a least count or a narrow gap sets the count.
 */
function plateHolesTriangulation(size: readonly number[], holes: readonly Hole[], coarseNx: number, coarseNy: number, grading: number, factor = 1): FacedTriangulation {
  const hx = size[0] / 2, hy = size[1] / 2;
  const coarseH = Math.min(size[0] / coarseNx, size[1] / coarseNy);
  const nx = factor * coarseNx, ny = factor * coarseNy, h = coarseH / factor;
  const xs = placeSymmetric(symmetricNodes(nx, grading), 0, hx);
  const ys = placeSymmetric(symmetricNodes(ny, grading), 0, hy);
  // Hole rims and rings.
  const rimFirst: number[] = [], rimCount: number[] = [];
  const ringPoints: Candidate[][] = [];
  const zone: number[] = [];
  const rims: Candidate[] = [];
  let smallest = h;
  for (let i = 0; i < holes.length; i++) {
    const [cx, cy, r] = holes[i];
    let gap = rimDistance(cx, cy, hx, hy) - r;
    for (let j = 0; j < holes.length; j++) if (j !== i) gap = Math.min(gap, Math.hypot(cx - holes[j][0], cy - holes[j][1]) - r - holes[j][2]);
    const m = factor * Math.max(8, Math.ceil((2 * Math.PI * r) / Math.min(coarseH, gap) - 1e-9));
    checkTriangleBudget(4 * m, `hole ${i + 1} with ${m} segments`);
    const s = (2 * Math.PI * r) / m;
    rimFirst.push(rims.length); rimCount.push(m);
    for (let j = 0; j < m; j++) rims.push({ x: cx + r * Math.cos((2 * Math.PI * j) / m), y: cy + r * Math.sin((2 * Math.PI * j) / m), spacing: s });
    const rings: Candidate[] = [];
    let rho = r, step = s / grading;
    smallest = Math.min(smallest, step);
    for (let ring = 1; step < h; ring++) {
      rho += step;
      const around = Math.max(step, s);
      const mk = Math.max(8, Math.round((2 * Math.PI * rho) / around));
      // Every other ring turned by half a segment, so neighbouring rings' points interleave.
      const offset = (ring % 2) * 0.5;
      for (let j = 0; j < mk; j++) {
        const a = (2 * Math.PI * (j + offset)) / mk;
        rings.push({ x: cx + rho * Math.cos(a), y: cy + rho * Math.sin(a), spacing: Math.min(step * 1.3, around) });
      }
      step *= 1.3;
    }
    ringPoints.push(rings);
    zone.push(rho - r + 0.5 * h);
  }
  // Which source (-1 the outer rim, else a hole) is nearest (x, y), and how far.
  const nearestOther = (x: number, y: number, own: number): number => {
    let d = own >= 0 ? rimDistance(x, y, hx, hy) : Infinity;
    for (let k = 0; k < holes.length; k++) if (k !== own) d = Math.min(d, Math.hypot(x - holes[k][0], y - holes[k][1]) - holes[k][2]);
    return d;
  };
  let widest = h;
  for (let i = 0; i < nx; i++) widest = Math.max(widest, xs[i + 1] - xs[i]);
  for (let j = 0; j < ny; j++) widest = Math.max(widest, ys[j + 1] - ys[j]);
  const kept = new PointSet(smallest, 1.3 * widest, hx, hy);
  const constraints: [number, number][] = [];
  // The outer rim: the lattice's boundary nodes, counter-clockwise, each lattice step that
  // passes closer to a hole than its own length cut into steps no longer than the distance to
  // the nearest hole rim, so a hole near the edge meets edge nodes as close as its own.
  const holeDistance = (x: number, y: number): number => {
    let d = Infinity;
    for (const [cx, cy, r] of holes) d = Math.min(d, Math.hypot(x - cx, y - cy) - r);
    return d;
  };
  const boundary: [number, number][] = [];
  const side = (x0: number, y0: number, x1: number, y1: number): void => {
    boundary.push([x0, y0]);
    const len = Math.hypot(x1 - x0, y1 - y0);
    // The closest approach of a hole to this step (a point on a segment against a circle).
    let near = Infinity;
    for (const [cx, cy, r] of holes) {
      const t = Math.max(0, Math.min(1, ((cx - x0) * (x1 - x0) + (cy - y0) * (y1 - y0)) / (len * len)));
      near = Math.min(near, Math.hypot(x0 + t * (x1 - x0) - cx, y0 + t * (y1 - y0) - cy) - r);
    }
    if (!(near < len)) return;
    let t = 0;
    for (;;) {
      const step = Math.max(holeDistance(x0 + (t / len) * (x1 - x0), y0 + (t / len) * (y1 - y0)), near);
      if (t + 1.5 * step >= len) break;
      t += step;
      boundary.push([x0 + (t / len) * (x1 - x0), y0 + (t / len) * (y1 - y0)]);
    }
  };
  for (let i = 0; i < nx; i++) side(xs[i], -hy, xs[i + 1], -hy);
  for (let j = 0; j < ny; j++) side(hx, ys[j], hx, ys[j + 1]);
  for (let i = nx; i > 0; i--) side(xs[i], hy, xs[i - 1], hy);
  for (let j = ny; j > 0; j--) side(-hx, ys[j], -hx, ys[j - 1]);
  for (let b = 0; b < boundary.length; b++) {
    kept.add(boundary[b][0], boundary[b][1]);
    constraints.push([b, (b + 1) % boundary.length]);
  }
  const rimBase = kept.xs.length;
  for (let i = 0; i < holes.length; i++) {
    for (let j = 0; j < rimCount[i]; j++) {
      const p = rims[rimFirst[i] + j];
      kept.add(p.x, p.y);
      constraints.push([rimBase + rimFirst[i] + j, rimBase + rimFirst[i] + ((j + 1) % rimCount[i])]);
    }
  }
  // Lattice interior points outside every hole's zone, or nearer the outer rim than the hole.
  for (let j = 1; j < ny; j++) {
    for (let i = 1; i < nx; i++) {
      const x = xs[i], y = ys[j];
      let inZone = false;
      for (let k = 0; k < holes.length && !inZone; k++) {
        const d = Math.hypot(x - holes[k][0], y - holes[k][1]) - holes[k][2];
        inZone = d < zone[k] && d <= rimDistance(x, y, hx, hy);
      }
      const spacing = Math.min(xs[i + 1] - xs[i], xs[i] - xs[i - 1], ys[j + 1] - ys[j], ys[j] - ys[j - 1]);
      if (!inZone && kept.clear(x, y, 0.45 * spacing)) kept.add(x, y);
    }
  }
  // Ring points on their own hole's side.
  for (let k = 0; k < holes.length; k++) {
    for (const p of ringPoints[k]) {
      const own = Math.hypot(p.x - holes[k][0], p.y - holes[k][1]) - holes[k][2];
      if (nearestOther(p.x, p.y, k) <= own) continue;
      if (rimDistance(p.x, p.y, hx, hy) < 0.45 * p.spacing) continue;
      if (kept.clear(p.x, p.y, 0.45 * p.spacing)) kept.add(p.x, p.y);
    }
  }
  const np = kept.xs.length;
  const coords = new Float64Array(2 * np);
  for (let p = 0; p < np; p++) { coords[2 * p] = kept.xs[p]; coords[2 * p + 1] = kept.ys[p]; }
  const del = new Delaunator(coords);
  new Constrainautor(del).constrainAll(constraints);
  const t = del.triangles;
  const inHole = (x: number, y: number): boolean => holes.some(([cx, cy, r]) => Math.hypot(x - cx, y - cy) < r);
  const out: number[] = [];
  for (let k = 0; k < t.length; k += 3) {
    const a = t[k], b = t[k + 1], c = t[k + 2];
    const gx = (coords[2 * a] + coords[2 * b] + coords[2 * c]) / 3, gy = (coords[2 * a + 1] + coords[2 * b + 1] + coords[2 * c + 1]) / 3;
    if (inHole(gx, gy)) continue;
    const area2 = (coords[2 * b] - coords[2 * a]) * (coords[2 * c + 1] - coords[2 * a + 1]) - (coords[2 * b + 1] - coords[2 * a + 1]) * (coords[2 * c] - coords[2 * a]);
    // Normal +z: counter-clockwise in the plate's xy plane.
    if (area2 > 0) out.push(a, b, c); else out.push(a, c, b);
  }
  checkTriangleBudget(out.length / 3, "plate with holes");
  const positions = new Float64Array(3 * np);
  for (let p = 0; p < np; p++) { positions[3 * p] = coords[2 * p]; positions[3 * p + 1] = coords[2 * p + 1]; }
  return { positions, triangles: new Uint32Array(out), faces: new Uint32Array(out.length / 3) };
}

export function plateHolesMesh(params: PlateHolesParams): SurfaceMesh {
  const size = params.size;
  if (size.length !== 2 || !size.every((l) => l > 0 && Number.isFinite(l))) throw new RangeError("plateHolesMesh: size must be two positive lengths");
  const fault = holesFault(size, params.holes);
  if (fault) throw new RangeError(`plateHolesMesh: ${fault}`);
  const [nx, ny] = sideDivisions(size, params.divisions, params.panelSize, 16);
  if (!(Number.isInteger(nx) && Number.isInteger(ny) && nx >= 1 && ny >= 1)) throw new RangeError("plateHolesMesh: divisions must be positive integers");
  checkTriangleBudget(2 * nx * ny, `plate divisions ${nx}x${ny}`);
  const g = params.grading ?? 1;
  const coarse = plateHolesTriangulation(size, params.holes, nx, ny, g);
  const f = referenceFactor(coarse.faces.length);
  const fine = f === 1 ? coarse : plateHolesTriangulation(size, params.holes, nx, ny, g, f);
  const normal = (out: Float64Array, oo: number): void => { out[oo] = 0; out[oo + 1] = 0; out[oo + 2] = 1; };
  return facedShape(coarse, fine, normal, params.name ?? "plate", params.axis ?? "z", params.center);
}
