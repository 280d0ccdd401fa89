/**
 * Torus of revolution about the local z axis: major radius R (axis to tube centre),
 * minor radius r (tube). A structured grid in the two angles,
 *   x = (R + r cos v) cos u,  y = (R + r cos v) sin u,  z = r sin v,
 * for which d/du x d/dv points outward, so quads (u, v) in increasing order are
 * counter-clockwise seen from outside.
 */
import type { SurfaceMesh } from "../model.js";
import { type Axis, checkTriangleBudget } from "./placement.js";
import { facedShape, referenceFactor, type FacedTriangulation, type FaceNormal } from "./reference.js";

export interface TorusParams {
  /** Distance from the axis to the centre of the tube; metres. */
  majorRadius: number;
  /** Radius of the tube; metres, less than majorRadius. */
  minorRadius: number;
  /** Segments around the axis, or [around the axis, around the tube]. Default 32 around the axis. */
  divisions?: number | readonly number[];
  /** Target panel edge length; metres. */
  panelSize?: number;
  /** Axis of revolution, default z. */
  axis?: Axis;
  /** metres */
  center?: readonly number[];
  name?: string;
}

/** Segments [around the axis, around the tube]; a single count sets the tube count in proportion to r/R (at least 3). */
export function torusSegments(params: TorusParams): [number, number] {
  const { majorRadius: R, minorRadius: r, divisions: d, panelSize: h } = params;
  if (Array.isArray(d)) return [d[0], d[1]];
  if (typeof d === "number") return [d, Math.max(3, Math.round((d * r) / R))];
  if (h !== undefined) return [Math.max(3, Math.ceil((2 * Math.PI * R) / h - 1e-9)), Math.max(3, Math.ceil((2 * Math.PI * r) / h - 1e-9))];
  return [32, Math.max(3, Math.round((32 * r) / R))];
}

export function torusMesh(params: TorusParams): SurfaceMesh {
  const { majorRadius: R, minorRadius: r } = params;
  if (!(R > 0 && r > 0 && Number.isFinite(R) && Number.isFinite(r))) throw new RangeError("torusMesh: radii must be positive");
  if (!(r < R)) throw new RangeError("torusMesh: the minor radius must be less than the major radius");
  const [nu, nv] = torusSegments(params);
  if (!(Number.isInteger(nu) && Number.isInteger(nv) && nu >= 3 && nv >= 3)) throw new RangeError("torusMesh: at least 3 segments each way are needed");
  checkTriangleBudget(2 * nu * nv, `torus with ${nu}x${nv} segments`);
  // The mesh and its reference surface (reference.ts): the same grid up to 4x finer each way,
  // one face, its exact normal pointing away from the tube's centre circle.
  const factor = referenceFactor(2 * nu * nv);
  const tube: FaceNormal = (out, oo, _face, q, o) => {
    const x = q[o], y = q[o + 1], z = q[o + 2], rho = Math.hypot(x, y);
    const nx = x - (R * x) / rho, ny = y - (R * y) / rho, l = Math.hypot(nx, ny, z);
    out[oo] = nx / l; out[oo + 1] = ny / l; out[oo + 2] = z / l;
  };
  return facedShape(torusGrid(R, r, nu, nv), torusGrid(R, r, factor * nu, factor * nv), tube, params.name ?? "torus", params.axis ?? "z", params.center);
}

/** The torus grid of nu × nv segments about the local z axis, every triangle on face 0. */
function torusGrid(R: number, r: number, nu: number, nv: number): FacedTriangulation {
  const nt = 2 * nu * nv;
  const positions = new Float64Array(3 * nu * nv);
  for (let i = 0; i < nu; i++) {
    const u = (2 * Math.PI * i) / nu, cu = Math.cos(u), su = Math.sin(u);
    for (let j = 0; j < nv; j++) {
      const w = (2 * Math.PI * j) / nv, rho = R + r * Math.cos(w), k = 3 * (i * nv + j);
      positions[k] = rho * cu; positions[k + 1] = rho * su; positions[k + 2] = r * Math.sin(w);
    }
  }
  const triangles = new Uint32Array(3 * nt);
  let o = 0;
  for (let i = 0; i < nu; i++) {
    const i1 = (i + 1) % nu;
    for (let j = 0; j < nv; j++) {
      const j1 = (j + 1) % nv;
      const p00 = i * nv + j, p10 = i1 * nv + j, p11 = i1 * nv + j1, p01 = i * nv + j1;
      triangles[o++] = p00; triangles[o++] = p10; triangles[o++] = p11;
      triangles[o++] = p00; triangles[o++] = p11; triangles[o++] = p01;
    }
  }
  return { positions, triangles, faces: new Uint32Array(nt) };
}
