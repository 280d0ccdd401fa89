/**
 * The panel-size field of a remeshed patch: how large a panel may be at a point, in metres.
 *
 * h(x) = min( cap,
 *             min over sources i of  s_i + growth · dist(x, segment_i),
 *             max(gapFactor · dist(x, other conductors), cap / GAP_FLOOR) )
 *
 * A source is a segment of the patch boundary with the size wanted on it: small on sharp
 * edges and rims, where the surface charge is singular (as the generators grade, see
 * primitives/grading.ts), about the neighbouring facets' width beside a tessellated fillet,
 * the spacing it was given on an edge where a neighbour's remeshing entered the patch. The
 * growth term keeps neighbouring panels within a constant ratio of each other (a Lipschitz
 * size field, as in Ruppert-style refinement). The gap term keeps panels no larger than the
 * distance to the next conductor, where the field between them is strong and varies on that
 * scale; its floor bounds the panel count of nearly touching parts.
 */
import { buildBoxTree, triangleBoxes, nearestItem, type BoxTree } from "./bvh.js";
import { closestPointTriangle } from "../geometry/closest-point.js";

/** Ratio of the cap to the smallest size the gap term may ask for. */
const GAP_FLOOR = 8;

export interface SizeField {
  /** Largest size anywhere; metres. */
  cap: number;
  /** Source segments, 6 numbers each (two corners); metres. */
  segments: Float64Array;
  /** Size on each source segment; metres. */
  sizes: Float64Array;
  /** Increase of size per metre away from a source (dimensionless). */
  growth: number;
  /** Other conductors, for the gap term (absent with one conductor). */
  others?: OtherConductors;
  /** Panel size no larger than gapFactor × the distance to another conductor. */
  gapFactor: number;
}

/** The triangles of every conductor but one, in a tree for nearest-point queries. */
export interface OtherConductors {
  tree: BoxTree;
  positions: Float64Array;
  triangles: Uint32Array;
}

const CP = new Float64Array(3);

/** The triangles of conductors other than `c`, or undefined when there are none. */
export function otherConductors(positions: Float64Array, triangles: Uint32Array, conductor: Uint32Array, c: number): OtherConductors | undefined {
  let n = 0;
  for (let t = 0; t < conductor.length; t++) if (conductor[t] !== c) n++;
  if (n === 0) return undefined;
  const sub = new Uint32Array(3 * n);
  for (let t = 0, k = 0; t < conductor.length; t++) {
    if (conductor[t] === c) continue;
    sub[k++] = triangles[3 * t]; sub[k++] = triangles[3 * t + 1]; sub[k++] = triangles[3 * t + 2];
  }
  return { tree: buildBoxTree(triangleBoxes(positions, sub)), positions, triangles: sub };
}

/** The size at (x, y, z); metres. */
export function sizeAt(f: SizeField, x: number, y: number, z: number): number {
  let h = f.cap;
  const s = f.segments;
  for (let i = 0, k = 0; k < s.length; i++, k += 6) {
    const lower = f.sizes[i];
    if (lower >= h) continue;
    const d = pointSegmentDistance(x, y, z, s[k], s[k + 1], s[k + 2], s[k + 3], s[k + 4], s[k + 5]);
    const v = lower + f.growth * d;
    if (v < h) h = v;
  }
  if (f.others) {
    const o = f.others;
    const reach = h / f.gapFactor;
    const r = nearestItem(o.tree, x, y, z, (t) => {
      const a = 3 * o.triangles[3 * t], b = 3 * o.triangles[3 * t + 1], c = 3 * o.triangles[3 * t + 2], P = o.positions;
      return closestPointTriangle(CP, x, y, z, P[a], P[a + 1], P[a + 2], P[b], P[b + 1], P[b + 2], P[c], P[c + 1], P[c + 2]);
    }, reach);
    if (r.item >= 0) h = Math.min(h, Math.max(f.gapFactor * r.distance, f.cap / GAP_FLOOR));
  }
  return h;
}

function pointSegmentDistance(x: number, y: number, z: number, ax: number, ay: number, az: number, bx: number, by: number, bz: number): number {
  const ux = bx - ax, uy = by - ay, uz = bz - az;
  const wx = x - ax, wy = y - ay, wz = z - az;
  const uu = ux * ux + uy * uy + uz * uz;
  let t = uu > 0 ? (wx * ux + wy * uy + wz * uz) / uu : 0;
  t = t < 0 ? 0 : t > 1 ? 1 : t;
  return Math.hypot(wx - t * ux, wy - t * uy, wz - t * uz);
}
