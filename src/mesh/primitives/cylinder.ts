/**
 * Closed circular cylinder: a side of rings graded toward both ends and two disk caps
 * graded toward the rim, the caps sharing the side's end rings (same vertices), so the
 * rim edges are conforming. Panels are near-square at the nominal spacing 2 pi R / m.
 *
 * Faces: the side (0), the top cap (1) and the bottom cap (2), with a reference surface
 * (reference.ts) so that refinement puts new points on the true cylinder, its caps' planes and
 * the rim circles where they meet. The reference's rims have `referenceRimSegments` segments
 * (disk.ts), and so has every ring of its side. The side is straight along the axis: on a
 * triangle whose corners lie on two generating lines the PN patch of the exact normals is the
 * rim's cubic around and linear along the axis, so its rows may be long; they are kept to an
 * aspect of SIDE_ASPECT, since the projection's barycentric coordinates lose about
 * 1e-16 · aspect² to rounding (a single row on a rod 2000 radii long lost 2e-4).
 */
import type { SurfaceMesh } from "../model.js";
import { symmetricNodes, placeSymmetric } from "./grading.js";
import { diskLayout, diskFromLayout, facedDisk, referenceRimSegments } from "./disk.js";
import { type Axis, checkTriangleBudget } from "./placement.js";
import { facedShape, type FacedTriangulation, type FaceNormal } from "./reference.js";

export interface CylinderParams {
  /** metres */
  radius: number;
  /** Length along the axis, cap to cap; metres. */
  height: number;
  /** Segments around the circumference (default 32). */
  divisions?: number;
  /** Target panel edge length; metres. Used when `divisions` is not given. */
  panelSize?: number;
  /** Largest / smallest spacing, axially toward both ends and radially toward the rim; 1 = uniform. */
  grading?: number;
  /** Cylinder axis, default z. */
  axis?: Axis;
  /** metres */
  center?: readonly number[];
  name?: string;
}

export function cylinderSegments(params: CylinderParams): number {
  if (params.divisions !== undefined) return params.divisions;
  if (params.panelSize !== undefined) return Math.max(3, Math.ceil((2 * Math.PI * params.radius) / params.panelSize - 1e-9));
  return 32;
}

export function cylinderMesh(params: CylinderParams): SurfaceMesh {
  const { radius: r, height: hgt } = params;
  if (!(r > 0 && Number.isFinite(r) && hgt > 0 && Number.isFinite(hgt))) throw new RangeError("cylinderMesh: radius and height must be positive");
  const m = cylinderSegments(params);
  if (!(Number.isInteger(m) && m >= 3)) throw new RangeError("cylinderMesh: at least 3 segments around are needed");
  const g = params.grading ?? 1;
  const spacing = params.panelSize ?? (2 * Math.PI * r) / m;
  const nz = Math.max(1, Math.ceil(hgt / spacing - 1e-9));
  const rings = Math.max(1, Math.round(r / spacing));
  checkTriangleBudget(2 * m * nz, `cylinder with ${m} segments and ${nz} rows`);
  const layout = diskLayout(r, rings, g, m);
  const cap = diskFromLayout(layout);
  const capNv = cap.positions.length / 3;
  const capInner = capNv - m; // cap vertices 0..capInner-1 are inside; the last m are the rim
  const sideNv = m * (nz + 1);
  const nv = sideNv + 2 * capInner;
  const nt = 2 * m * nz + 2 * layout.triangles;
  checkTriangleBudget(nt, `cylinder with ${m} segments`);
  const positions = new Float64Array(3 * nv);
  const zs = placeSymmetric(symmetricNodes(nz, g), 0, hgt / 2);
  for (let k = 0; k <= nz; k++) {
    for (let j = 0; j < m; j++) {
      const a = (2 * Math.PI * j) / m, v = 3 * (k * m + j);
      positions[v] = r * Math.cos(a); positions[v + 1] = r * Math.sin(a); positions[v + 2] = zs[k];
    }
  }
  const triangles = new Uint32Array(3 * nt);
  let o = 0;
  for (let k = 0; k < nz; k++) {
    // Diagonals mirror about mid-height so the side is symmetric under z -> -z.
    const lower = 2 * k + 1 < nz;
    for (let j = 0; j < m; j++) {
      const p00 = k * m + j, p10 = k * m + ((j + 1) % m), p01 = p00 + m, p11 = p10 + m;
      if (lower) {
        triangles[o++] = p00; triangles[o++] = p10; triangles[o++] = p11;
        triangles[o++] = p00; triangles[o++] = p11; triangles[o++] = p01;
      } else {
        triangles[o++] = p00; triangles[o++] = p10; triangles[o++] = p01;
        triangles[o++] = p10; triangles[o++] = p11; triangles[o++] = p01;
      }
    }
  }
  for (const top of [true, false]) {
    const base = top ? sideNv : sideNv + capInner;
    const rimRow = top ? nz * m : 0;
    const z = top ? hgt / 2 : -hgt / 2;
    for (let v = 0; v < capInner; v++) {
      positions[3 * (base + v)] = cap.positions[3 * v];
      positions[3 * (base + v) + 1] = cap.positions[3 * v + 1];
      positions[3 * (base + v) + 2] = z;
    }
    const map = (v: number): number => (v < capInner ? base + v : rimRow + (v - capInner));
    for (let t = 0; t < layout.triangles; t++) {
      const a = map(cap.triangles[3 * t]), b = map(cap.triangles[3 * t + 1]), c = map(cap.triangles[3 * t + 2]);
      // The cap is built with normal +z: the bottom one is turned over.
      triangles[o++] = a;
      triangles[o++] = top ? b : c;
      triangles[o++] = top ? c : b;
    }
  }
  const faces = new Uint32Array(nt);
  faces.fill(1, 2 * m * nz, 2 * m * nz + layout.triangles);
  faces.fill(2, 2 * m * nz + layout.triangles);
  const fine = cylinderReference(r, hgt, referenceRimSegments(m, r, Math.hypot(2 * r, hgt)), rings, g);
  return facedShape({ positions, triangles, faces }, fine, cylinderNormal, params.name ?? "cylinder", params.axis ?? "z", params.center);
}

/** Exact outward normals: radial on the side (face 0), +z on the top cap (1), −z on the bottom (2). */
const cylinderNormal: FaceNormal = (out, oo, face, p, o) => {
  if (face === 0) {
    const x = p[o], y = p[o + 1], l = Math.hypot(x, y);
    out[oo] = x / l; out[oo + 1] = y / l; out[oo + 2] = 0;
  } else {
    out[oo] = 0; out[oo + 1] = 0; out[oo + 2] = face === 1 ? 1 : -1;
  }
};

/** Longest / shortest side of the reference's side quads: rounding in the projection then moves a point by about 1e-8 of a row along the axis. */
const SIDE_ASPECT = 1e4;

/**
 * The reference: a side of rows of n quads and two caps with n rim segments (the caps' own
 * vertices; `facedShape` splits vertices per face anyway, and the rim points are computed by the
 * same expression on both, so the curves between side and caps match exactly).
 */
function cylinderReference(r: number, hgt: number, n: number, rings: number, g: number): FacedTriangulation {
  const cap = facedDisk(diskLayout(r, rings, g, n));
  const capNv = cap.positions.length / 3, capNt = cap.faces.length;
  const rows = Math.max(1, Math.ceil(hgt / (SIDE_ASPECT * ((2 * Math.PI * r) / n))));
  checkTriangleBudget(2 * n * rows, `cylinder reference with ${n} segments and ${rows} rows`);
  const sideNv = n * (rows + 1);
  const nv = sideNv + 2 * capNv, nt = 2 * n * rows + 2 * capNt;
  const positions = new Float64Array(3 * nv);
  const triangles = new Uint32Array(3 * nt);
  const faces = new Uint32Array(nt);
  for (let k = 0; k <= rows; k++) {
    const z = k === 0 ? -hgt / 2 : k === rows ? hgt / 2 : -hgt / 2 + (k * hgt) / rows;
    for (let j = 0; j < n; j++) {
      const a = (2 * Math.PI * j) / n, v = 3 * (k * n + j);
      positions[v] = r * Math.cos(a); positions[v + 1] = r * Math.sin(a); positions[v + 2] = z;
    }
  }
  // Caps first: the projector's curve matching (reference-surface.ts) takes its quantum from the
  // median edge of the first triangles, and the side's edges are as long as the cylinder.
  let o = 0;
  for (const top of [true, false]) {
    const base = top ? sideNv : sideNv + capNv, z = top ? hgt / 2 : -hgt / 2;
    for (let v = 0; v < capNv; v++) {
      positions[3 * (base + v)] = cap.positions[3 * v];
      positions[3 * (base + v) + 1] = cap.positions[3 * v + 1];
      positions[3 * (base + v) + 2] = z;
    }
    const t0 = o / 3;
    for (let t = 0; t < capNt; t++) {
      const a = base + cap.triangles[3 * t], b = base + cap.triangles[3 * t + 1], c = base + cap.triangles[3 * t + 2];
      triangles[o++] = a; triangles[o++] = top ? b : c; triangles[o++] = top ? c : b;
    }
    faces.fill(top ? 1 : 2, t0, t0 + capNt);
  }
  for (let k = 0; k < rows; k++) {
    for (let j = 0; j < n; j++) {
      const p00 = k * n + j, p10 = k * n + ((j + 1) % n), p01 = p00 + n, p11 = p10 + n;
      triangles[o++] = p00; triangles[o++] = p10; triangles[o++] = p11;
      triangles[o++] = p00; triangles[o++] = p11; triangles[o++] = p01;
    }
  }
  return { positions, triangles, faces };
}
