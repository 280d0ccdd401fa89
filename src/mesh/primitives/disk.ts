/**
 * Disk: an open sheet of zero thickness, meshed in rings graded toward the rim, where the
 * charge of a thin sheet is singular. A centre vertex is surrounded by rings of vertices;
 * ring k has about 6 r_k / s_k segments (s_k the local radial spacing; 6k for uniform rings, the
 * hexagonal pattern) so triangles stay near equilateral, and never fewer than the ring inside it. Neighbouring rings are joined
 * by the shortest-diagonal rule, which gives a conforming strip for any pair of segment counts.
 *
 * The area is exactly that of the rim polygon, (m/2) R^2 sin(2 pi / m) for m rim segments,
 * so it tends to pi R^2 at second order in 1/m.
 *
 * The disk carries its face and reference surface (reference.ts), so that refinement puts new
 * rim points on the circle and keeps new inner points in the plane, and converges to the true
 * disk instead of the rim polygon. A flat face needs no finer inside: the reference is the same
 * layout with only the rim ring finer (`referenceRimSegments`: 4,096 segments and more).
 */
import type { SurfaceMesh } from "../model.js";
import { rimNodes } from "./grading.js";
import { type Axis, checkTriangleBudget } from "./placement.js";
import { facedShape, type FacedTriangulation, type FaceNormal } from "./reference.js";

export interface DiskParams {
  /** metres */
  radius: number;
  /** Number of rings from the centre to the rim (default 12). */
  divisions?: number;
  /** Target radial spacing (mean); metres. Used when `divisions` is not given. */
  panelSize?: number;
  /** Largest (centre) / smallest (rim) radial spacing; 1 = uniform. */
  grading?: number;
  /** Axis normal to the disk, default z. */
  axis?: Axis;
  /** metres */
  center?: readonly number[];
  name?: string;
}

export interface DiskLayout {
  /** Ring radii r_1..r_n (r_0 = 0 is the centre vertex); metres. */
  radii: Float64Array;
  /** Segments per ring, non-decreasing outward. */
  segments: Uint32Array;
  /** Number of triangles the layout gives. */
  triangles: number;
}

/** Ring radii and segment counts; `rimSegments` forces the rim count (a cylinder cap must match its side). */
export function diskLayout(radius: number, rings: number, grading = 1, rimSegments?: number): DiskLayout {
  const t = rimNodes(rings, grading);
  const radii = new Float64Array(rings);
  const segments = new Uint32Array(rings);
  let prev = 3;
  let triangles = 0;
  for (let k = 1; k <= rings; k++) {
    radii[k - 1] = k === rings ? radius : radius * t[k];
    const s = k < rings ? 0.5 * (t[k + 1] - t[k - 1]) * radius : (t[k] - t[k - 1]) * radius;
    let m = Math.max(prev, Math.round((6 * radii[k - 1]) / s));
    if (rimSegments !== undefined) m = k === rings ? rimSegments : Math.min(m, rimSegments);
    segments[k - 1] = m;
    triangles += k === 1 ? m : m + prev;
    prev = m;
  }
  return { radii, segments, triangles };
}

/** The disk in the local xy plane, normal +z, centred at the origin; the rim ring's vertices come last, rim vertex j at angle 2 pi j / m. */
export function diskFromLayout(layout: DiskLayout, name = "disk"): SurfaceMesh {
  const { radii, segments } = layout;
  const rings = radii.length;
  let nv = 1;
  for (let k = 0; k < rings; k++) nv += segments[k];
  checkTriangleBudget(layout.triangles, `disk with ${rings} rings`);
  const positions = new Float64Array(3 * nv);
  const first = new Uint32Array(rings);
  let v = 1;
  for (let k = 0; k < rings; k++) {
    first[k] = v;
    const m = segments[k];
    for (let j = 0; j < m; j++, v++) {
      const a = (2 * Math.PI * j) / m;
      positions[3 * v] = radii[k] * Math.cos(a);
      positions[3 * v + 1] = radii[k] * Math.sin(a);
    }
  }
  const triangles = new Uint32Array(3 * layout.triangles);
  let o = 0;
  const m0 = segments[0];
  for (let j = 0; j < m0; j++) {
    triangles[o++] = 0; triangles[o++] = first[0] + j; triangles[o++] = first[0] + ((j + 1) % m0);
  }
  for (let k = 1; k < rings; k++) {
    const mi = segments[k - 1], mo = segments[k];
    const fi = first[k - 1], fo = first[k];
    let i = 0, j = 0;
    while (i < mi || j < mo) {
      // Shortest-diagonal rule of contour tiling (H. N. Christiansen, T. W. Sederberg, "Conversion of
      // complex contour line definitions into polygonal element mosaics", SIGGRAPH 1978): of the two
      // possible new edges take the one closer to radial. Angles are compared exactly, in units of 2 pi/(mi mo).
      const advanceInner = j === mo || (i < mi && Math.abs((i + 1) * mo - j * mi) <= Math.abs((j + 1) * mi - i * mo));
      if (advanceInner) {
        triangles[o++] = fi + i; triangles[o++] = fo + (j % mo); triangles[o++] = fi + ((i + 1) % mi);
        i++;
      } else {
        triangles[o++] = fi + (i % mi); triangles[o++] = fo + j; triangles[o++] = fo + ((j + 1) % mo);
        j++;
      }
    }
  }
  if (o !== triangles.length) throw new Error("diskFromLayout: internal triangle count mismatch");
  return { positions, triangles, conductor: new Uint32Array(layout.triangles), names: [name] };
}

/** Number of rings from the parameters (divisions, else radius / panel size, else 12). */
export function diskRings(params: DiskParams): number {
  if (params.divisions !== undefined) return params.divisions;
  if (params.panelSize !== undefined) return Math.max(1, Math.ceil(params.radius / params.panelSize - 1e-9));
  return 12;
}

/** Fewest rim segments of a reference (see `referenceRimSegments`). */
const REFERENCE_RIM = 1024;
/** Largest sagitta of a reference rim segment, relative to the shape's size (see `referenceRimSegments`). */
const REFERENCE_SAGITTA = 1.5e-7;

/**
 * Segments of the reference's rim for a rim of m segments on a circle of radius r, on a shape of
 * size `size` (its bounding-box diagonal; metres): m times a power of two, at least 4, at least
 * 1024 and enough that a segment's sagitta π²r/(2n²) is below 1.5e-7 of the size (4096 and more
 * for a disk). The rim lift (reference-surface.ts: a cubic over each reference segment, tangents
 * by central differences, exact on a regular polygon) is then off the circle by about
 * (3/128)(2π/n)^4 r, 3.3e-11 r at 1024; and rim points that refinement puts on the circle between
 * reference vertices stay well inside the 1e-6 of the mesh's size by which refine.ts's
 * `onReference` accepts a mesh as lying on its reference. Power-of-two multiples keep every
 * coarse rim vertex, and those of the first refinements, on reference vertices.
 */
export function referenceRimSegments(m: number, r: number, size: number): number {
  const sagitta = (n: number): number => (Math.PI * Math.PI * r) / (2 * n * n);
  let k = 4;
  while (m * k < REFERENCE_RIM || sagitta(m * k) > REFERENCE_SAGITTA * size) k *= 2;
  return m * k;
}

/** A disk layout's triangulation with every triangle on face `face`. */
export function facedDisk(layout: DiskLayout, face = 0): FacedTriangulation {
  const d = diskFromLayout(layout);
  return { positions: d.positions, triangles: d.triangles, faces: new Uint32Array(layout.triangles).fill(face) };
}

export function diskMesh(params: DiskParams): SurfaceMesh {
  const r = params.radius;
  if (!(r > 0 && Number.isFinite(r))) throw new RangeError("diskMesh: radius must be positive");
  const rings = diskRings(params);
  if (!(Number.isInteger(rings) && rings >= 1)) throw new RangeError("diskMesh: the ring count must be a positive integer");
  const g = params.grading ?? 1;
  const layout = diskLayout(r, rings, g);
  const rim = layout.segments[rings - 1];
  const coarse = facedDisk(layout);
  const fine = facedDisk(diskLayout(r, rings, g, referenceRimSegments(rim, r, 2 * r)));
  const up: FaceNormal = (out, oo) => { out[oo] = 0; out[oo + 1] = 0; out[oo + 2] = 1; };
  return facedShape(coarse, fine, up, params.name ?? "disk", params.axis ?? "z", params.center);
}
