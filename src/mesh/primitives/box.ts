/**
 * Closed rectangular box, structured on every face, graded toward the edges.
 *
 * All six faces share one lattice of node coordinates per axis, so neighbouring faces
 * meet on the same vertices (conforming, no T-junctions). Each quad is split along the
 * diagonal toward its nearer face corner, which makes the mesh mirror-symmetric about
 * the face centre lines (the charge distribution of a box has those symmetries).
 */
import type { SurfaceMesh } from "../model.js";
import { symmetricNodes, placeSymmetric } from "./grading.js";
import { checkTriangleBudget, diagonalTowardCorner } from "./placement.js";

export interface BoxParams {
  /** Edge lengths along x, y, z; metres. */
  size: readonly [number, number, number] | readonly number[];
  /** Divisions per side: one count for all three, or one per axis. */
  divisions?: number | readonly number[];
  /** Target mean panel edge length; metres. Used when `divisions` is not given. */
  panelSize?: number;
  /** Largest / smallest spacing along each side (geometric, toward both ends); 1 = uniform. */
  grading?: number;
  /** Centre of the box; metres. */
  center?: readonly number[];
  name?: string;
}

/** Divisions per axis from a count, a per-axis list or a target panel size (default 8 per side). */
export function sideDivisions(size: readonly number[], divisions: number | readonly number[] | undefined, panelSize: number | undefined, fallback: number): number[] {
  if (divisions !== undefined) return size.map((_, i) => (typeof divisions === "number" ? divisions : divisions[i]));
  if (panelSize !== undefined) return size.map((l) => Math.max(1, Math.ceil(l / panelSize - 1e-9)));
  return size.map(() => fallback);
}

export function boxMesh(params: BoxParams): SurfaceMesh {
  const size = params.size;
  if (size.length !== 3 || !size.every((l) => l > 0 && Number.isFinite(l))) throw new RangeError("boxMesh: size must be three positive lengths");
  const n = sideDivisions(size, params.divisions, params.panelSize, 8);
  if (!n.every((k) => Number.isInteger(k) && k >= 1)) throw new RangeError("boxMesh: divisions must be positive integers");
  const grading = params.grading ?? 1;
  const [nx, ny, nz] = n;
  const nt = 4 * (nx * ny + ny * nz + nz * nx);
  checkTriangleBudget(nt, `box divisions ${nx}x${ny}x${nz}`);
  const c = params.center ?? [0, 0, 0];
  const coord = [0, 1, 2].map((a) => placeSymmetric(symmetricNodes(n[a], grading), c[a], size[a] / 2));

  const { positions, triangles } = boxSurfaceLattice(coord);
  return { positions, triangles, conductor: new Uint32Array(nt), names: [params.name ?? "box"] };
}

/**
 * A face code for the quad of the box face normal to `axis` on `side` (0 low, 1 high) whose
 * lattice intervals are `next` along axis (axis + 1) % 3 and `last` along (axis + 2) % 3.
 */
export type QuadFace = (axis: number, side: number, next: number, last: number) => number;

/**
 * All six faces share one lattice of node coordinates per axis, so neighbouring faces meet on
 * the same vertices. Each quad is split along the diagonal toward its nearer face corner.
 */
export function boxSurfaceLattice(coord: readonly Float64Array[], quadFace?: QuadFace): { positions: Float64Array; triangles: Uint32Array; faces?: Uint32Array } {
  const n = coord.map((c) => c.length - 1);
  const [nx, ny, nz] = n;
  const nt = 4 * (nx * ny + ny * nz + nz * nx);
  const nvSurface = (nx + 1) * (ny + 1) * (nz + 1) - Math.max(0, nx - 1) * Math.max(0, ny - 1) * Math.max(0, nz - 1);
  const positions = new Float64Array(3 * nvSurface);
  const triangles = new Uint32Array(3 * nt);
  const index = new Map<number, number>();
  let nv = 0;
  const ijk = [0, 0, 0];
  const vertex = (): number => {
    const key = ijk[0] + (nx + 1) * (ijk[1] + (ny + 1) * ijk[2]);
    let v = index.get(key);
    if (v === undefined) {
      v = nv++;
      index.set(key, v);
      positions[3 * v] = coord[0][ijk[0]];
      positions[3 * v + 1] = coord[1][ijk[1]];
      positions[3 * v + 2] = coord[2][ijk[2]];
    }
    return v;
  };
  const faces = quadFace ? new Uint32Array(nt) : undefined;
  let k = 0;
  for (let f = 0; f < 3; f++) {
    for (const side of [0, 1]) {
      // e_a x e_b is the outward normal: +f face uses (f+1, f+2), -f face the swap.
      const a = side === 1 ? (f + 1) % 3 : (f + 2) % 3;
      const b = side === 1 ? (f + 2) % 3 : (f + 1) % 3;
      const na = n[a], nb = n[b];
      ijk[f] = side === 1 ? n[f] : 0;
      for (let i = 0; i < na; i++) {
        for (let j = 0; j < nb; j++) {
          ijk[a] = i; ijk[b] = j; const p00 = vertex();
          ijk[a] = i + 1; const p10 = vertex();
          ijk[b] = j + 1; const p11 = vertex();
          ijk[a] = i; const p01 = vertex();
          if (faces) faces[k / 3] = faces[k / 3 + 1] = (quadFace as QuadFace)(f, side, a === (f + 1) % 3 ? i : j, a === (f + 1) % 3 ? j : i);
          if (diagonalTowardCorner(i, j, na, nb)) {
            triangles[k++] = p00; triangles[k++] = p10; triangles[k++] = p11;
            triangles[k++] = p00; triangles[k++] = p11; triangles[k++] = p01;
          } else {
            triangles[k++] = p00; triangles[k++] = p10; triangles[k++] = p01;
            triangles[k++] = p10; triangles[k++] = p11; triangles[k++] = p01;
          }
        }
      }
    }
  }
  if (nv !== nvSurface || k !== 3 * nt) throw new Error(`boxSurfaceLattice: internal count mismatch (${nv} vs ${nvSurface} vertices)`);
  return { positions, triangles, faces };
}
