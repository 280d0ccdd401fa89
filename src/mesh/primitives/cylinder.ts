/**
 * Closed circular cylinder: a side of rings graded toward both ends and two disk caps
 * graded toward the rim, the caps sharing the side's end rings (same vertices), so the
 * rim edges are conforming. Panels are near-square at the nominal spacing 2 pi R / m.
 */
import type { SurfaceMesh } from "../model.js";
import { symmetricNodes, placeSymmetric } from "./grading.js";
import { diskLayout, diskFromLayout } from "./disk.js";
import { type Axis, checkTriangleBudget, placeShape } from "./placement.js";

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
  placeShape(positions, params.axis ?? "z", params.center);
  return { positions, triangles, conductor: new Uint32Array(nt), names: [params.name ?? "cylinder"] };
}
