/**
 * Box with filleted edges: every edge rounded with radius r, every corner a sphere octant
 * (the points at distance r from the inner box of sides a - 2r, b - 2r, c - 2r). Flat faces,
 * quarter-cylinder fillets and corner patches are 6 + 12 + 8 analytic faces.
 *
 * Built as the plain box's lattice (./box.ts, conforming by construction) whose nodes along
 * each axis run over the flat part (graded toward the fillets by `grading`) and, at each end,
 * over half of a fillet at equal steps of angle (node r tan(phi) past the flat part, phi up to
 * 45°). Each lattice vertex p then moves to q + r (p - q) / |p - q|, q the nearest point of the
 * inner box: flat-region vertices stay where they are, the two half-fillets of an edge meet on
 * its 45° line, and the corner patches become an equiangular gnomonic cube-sphere octant
 * (Ronchi, Iacono & Paolucci, J. Comput. Phys. 124, 1996), whose panels stay near-square. The
 * move is a projection along the outward normal, so the surface stays closed and outward.
 *
 * Area (common practice: Steiner's formula for the parallel body of a box):
 *   A = 2[(a-2r)(b-2r) + (b-2r)(c-2r) + (c-2r)(a-2r)] + 2 pi r [(a-2r) + (b-2r) + (c-2r)] + 4 pi r^2.
 */
import type { SurfaceMesh } from "../model.js";
import { symmetricNodes, placeSymmetric } from "./grading.js";
import { checkTriangleBudget } from "./placement.js";
import { boxSurfaceLattice } from "./box.js";
import { facedShape, referenceFactor, type FacedTriangulation, type FaceNormal } from "./reference.js";

export interface FilletedBoxParams {
  /** Outer edge lengths along x, y, z; metres. */
  size: readonly number[];
  /** Fillet radius; metres, more than 0 and at most half the smallest side. */
  fillet: number;
  /** Divisions of the flat part of each side: one count for all three, or one per axis. */
  divisions?: number | readonly number[];
  /** Target panel edge length; metres. Used when `divisions` is not given. */
  panelSize?: number;
  /** Largest / smallest spacing along the flat part of each side, toward the fillets; 1 = uniform. */
  grading?: number;
  /** metres */
  center?: readonly number[];
  name?: string;
}

/** Flat divisions per axis and steps per half fillet (a fillet's quarter turn has twice as many). */
export function filletedBoxDivisions(params: FilletedBoxParams): { flat: number[]; half: number } {
  const { size, fillet: r } = params;
  const flatLength = size.map((l) => Math.max(0, l - 2 * r));
  let flat: number[];
  let h: number;
  if (params.divisions !== undefined) {
    const d = params.divisions;
    flat = flatLength.map((l, i) => (l > 0 ? (typeof d === "number" ? d : d[i]) : 0));
    // The fillets take the mean spacing of the flat parts the divisions give.
    const spacings = flatLength.flatMap((l, i) => (l > 0 ? [l / flat[i]] : []));
    h = spacings.length > 0 ? spacings.reduce((s, x) => s + x, 0) / spacings.length : (0.5 * Math.PI * r) / (typeof d === "number" ? d : d[0]);
  } else {
    // Default: 8 panels along the longest side, finer where the fillet would otherwise give
    // strips longer than about 4 times their width (a quarter turn of 2 steps is pi r / 4 wide),
    // but never more than 40 along the longest side.
    const longest = Math.max(...size);
    h = params.panelSize ?? Math.min(longest / 8, Math.max(Math.PI * r, longest / 40));
    flat = flatLength.map((l) => (l > 0 ? Math.max(1, Math.ceil(l / h - 1e-9)) : 0));
  }
  // A flat part narrower than 1 % of a panel (a fillet of almost half a side) would be one
  // sliver strip: the fillets' panels span it instead. Every vertex still lies on the true
  // surface (the projection below uses the exact inner box); the strip's own face is left out.
  for (let i = 0; i < 3; i++) if (flatLength[i] < 0.01 * h) flat[i] = 0;
  return { flat, half: Math.max(1, Math.ceil((0.25 * Math.PI * r) / h - 1e-9)) };
}

/** Nodes along one axis (centred at 0) and the region of each interval: -1 low fillet, 0 flat, +1 high fillet. */
function axisNodes(length: number, r: number, flat: number, half: number, grading: number): { nodes: Float64Array; region: Int8Array } {
  const halfInner = Math.max(0, length / 2 - r);
  const n = 2 * half + flat;
  const nodes = new Float64Array(n + 1);
  const region = new Int8Array(n);
  const flatNodes = flat > 0 ? placeSymmetric(symmetricNodes(flat, grading), 0, halfInner) : new Float64Array([0]);
  const edge = flat > 0 ? halfInner : 0;
  for (let j = 0; j < half; j++) {
    const t = r * Math.tan((0.25 * Math.PI * (half - j)) / half);
    nodes[j] = -edge - t;
    nodes[n - j] = edge + t;
    region[j] = -1;
    region[n - 1 - j] = 1;
  }
  for (let i = 0; i <= flat; i++) nodes[half + i] = flatNodes[i];
  return { nodes, region };
}

/** Face code of a sign vector (each of x, y, z in -1, 0, +1): one nonzero sign a flat face, two a fillet, three a corner. */
const faceCode = (sx: number, sy: number, sz: number): number => (sx + 1) * 9 + (sy + 1) * 3 + (sz + 1);

function filletedTriangulation(size: readonly number[], r: number, flat: number[], half: number, grading: number): FacedTriangulation {
  const axes = [0, 1, 2].map((a) => axisNodes(size[a], r, flat[a], half, grading));
  const nt = 4 * [0, 1, 2].reduce((s, a) => s + axes[a].region.length * axes[(a + 1) % 3].region.length, 0);
  checkTriangleBudget(nt, `filleted box with ${axes.map((x) => x.region.length).join("x")} divisions`);
  const sign = [0, 0, 0];
  const lattice = boxSurfaceLattice(axes.map((x) => x.nodes), (axis, side, next, last) => {
    sign[axis] = side === 1 ? 1 : -1;
    sign[(axis + 1) % 3] = axes[(axis + 1) % 3].region[next];
    sign[(axis + 2) % 3] = axes[(axis + 2) % 3].region[last];
    return faceCode(sign[0], sign[1], sign[2]);
  });
  const p = lattice.positions;
  const halfInner = size.map((l) => Math.max(0, l / 2 - r));
  const q = [0, 0, 0], d = [0, 0, 0];
  for (let v = 0; v < p.length; v += 3) {
    for (let a = 0; a < 3; a++) {
      q[a] = Math.min(halfInner[a], Math.max(-halfInner[a], p[v + a]));
      d[a] = p[v + a] - q[a];
    }
    const s = r / Math.hypot(d[0], d[1], d[2]);
    for (let a = 0; a < 3; a++) p[v + a] = q[a] + s * d[a];
  }
  return { positions: p, triangles: lattice.triangles, faces: lattice.faces as Uint32Array };
}

/** The exact normal: the direction from the inner box, along the axes the face is curved or flat in. */
function filletNormal(size: readonly number[], r: number): FaceNormal {
  const halfInner = size.map((l) => Math.max(0, l / 2 - r));
  return (out, oo, face, p, o) => {
    const s = [Math.floor(face / 9) - 1, (Math.floor(face / 3) % 3) - 1, (face % 3) - 1];
    let len = 0;
    for (let a = 0; a < 3; a++) {
      // Off the face's curved directions the normal has no component: flat faces get an exact axis.
      out[oo + a] = s[a] === 0 ? 0 : Math.max(0, s[a] * p[o + a] - halfInner[a]) * s[a];
      len += out[oo + a] * out[oo + a];
    }
    len = Math.sqrt(len);
    for (let a = 0; a < 3; a++) out[oo + a] /= len;
  };
}

export function filletedBoxMesh(params: FilletedBoxParams): SurfaceMesh {
  const { size, fillet: r } = params;
  if (size.length !== 3 || !size.every((l) => l > 0 && Number.isFinite(l))) throw new RangeError("filletedBoxMesh: size must be three positive lengths");
  if (!(r > 0 && r <= Math.min(...size) / 2)) throw new RangeError("filletedBoxMesh: the fillet radius must be more than 0 and at most half the smallest side");
  const { flat, half } = filletedBoxDivisions(params);
  if (!flat.every((k) => Number.isInteger(k) && k >= 0) || !Number.isInteger(half)) throw new RangeError("filletedBoxMesh: divisions must be positive integers");
  const grading = params.grading ?? 1;
  const coarse = filletedTriangulation(size, r, flat, half, grading);
  const f = referenceFactor(coarse.faces.length);
  const fine = filletedTriangulation(size, r, flat.map((k) => f * k), f * half, grading);
  return facedShape(coarse, fine, filletNormal(size, r), params.name ?? "box", "z", params.center);
}
