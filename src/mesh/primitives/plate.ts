/**
 * Rectangular plate: an open sheet of zero thickness, graded toward its rim where the
 * surface charge of a thin sheet is singular (inverse square root of the distance).
 * Built in the local xy plane with normal +z, then turned to the requested normal axis.
 */
import type { SurfaceMesh } from "../model.js";
import { symmetricNodes, placeSymmetric } from "./grading.js";
import { type Axis, checkTriangleBudget, diagonalTowardCorner, placeShape } from "./placement.js";
import { sideDivisions } from "./box.js";

export interface PlateParams {
  /** Side lengths in the plate's plane (local x, y); metres. */
  size: readonly number[];
  /** Divisions per side: one count for both, or one per side. */
  divisions?: number | readonly number[];
  /** Target mean panel edge length; metres. */
  panelSize?: number;
  /** Largest / smallest spacing along each side; 1 = uniform. */
  grading?: number;
  /** Axis normal to the plate (default z; x and y permute coordinates cyclically). */
  axis?: Axis;
  /** Centre; metres. */
  center?: readonly number[];
  name?: string;
}

export function plateMesh(params: PlateParams): SurfaceMesh {
  const size = params.size;
  if (size.length !== 2 || !size.every((l) => l > 0 && Number.isFinite(l))) throw new RangeError("plateMesh: size must be two positive lengths");
  const [nx, ny] = sideDivisions(size, params.divisions, params.panelSize, 16);
  if (!(Number.isInteger(nx) && Number.isInteger(ny) && nx >= 1 && ny >= 1)) throw new RangeError("plateMesh: divisions must be positive integers");
  const nt = 2 * nx * ny;
  checkTriangleBudget(nt, `plate divisions ${nx}x${ny}`);
  const g = params.grading ?? 1;
  const xs = placeSymmetric(symmetricNodes(nx, g), 0, size[0] / 2);
  const ys = placeSymmetric(symmetricNodes(ny, g), 0, size[1] / 2);
  const positions = new Float64Array(3 * (nx + 1) * (ny + 1));
  for (let j = 0; j <= ny; j++) {
    for (let i = 0; i <= nx; i++) {
      const v = 3 * (i + (nx + 1) * j);
      positions[v] = xs[i]; positions[v + 1] = ys[j];
    }
  }
  const triangles = new Uint32Array(3 * nt);
  let k = 0;
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const p00 = i + (nx + 1) * j, p10 = p00 + 1, p01 = p00 + nx + 1, p11 = p01 + 1;
      if (diagonalTowardCorner(i, j, nx, ny)) {
        triangles[k++] = p00; triangles[k++] = p10; triangles[k++] = p11;
        triangles[k++] = p00; triangles[k++] = p11; triangles[k++] = p01;
      } else {
        triangles[k++] = p00; triangles[k++] = p10; triangles[k++] = p01;
        triangles[k++] = p10; triangles[k++] = p11; triangles[k++] = p01;
      }
    }
  }
  placeShape(positions, params.axis ?? "z", params.center);
  return { positions, triangles, conductor: new Uint32Array(nt), names: [params.name ?? "plate"] };
}
