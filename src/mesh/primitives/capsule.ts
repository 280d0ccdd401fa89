/**
 * Capsule: a round rod with hemispherical ends (radius R, straight length L between the
 * centres of the two hemispheres; L = 0 is a sphere). A surface of revolution (./revolve.ts):
 * m segments around the straight part, and on each hemisphere rings at equal steps of polar
 * angle whose segment counts fall with sin(theta) toward the pole, so the panels stay
 * near-square from the equator to the pole instead of the slivers of a latitude-longitude grid.
 * The surface is smooth everywhere (no edge where charge crowds), so it is not graded.
 *
 * Faces: the lower hemisphere, the cylinder (absent when L = 0) and the upper hemisphere.
 */
import type { SurfaceMesh } from "../model.js";
import { type Axis } from "./placement.js";
import { type Profile, addArc, addLine, emptyProfile, revolve, revolvedNormal, ringSegments } from "./revolve.js";
import { facedShape, referenceFactor, type FacedTriangulation } from "./reference.js";

export interface CapsuleParams {
  /** metres */
  radius: number;
  /** Length of the straight part, between the hemispheres' centres; metres, 0 or more (overall length is length + 2 radius). */
  length: number;
  /** Segments around the circumference (default 32). */
  divisions?: number;
  /** Target panel edge length; metres. Used when `divisions` is not given. */
  panelSize?: number;
  /** Axis of the rod, default z. */
  axis?: Axis;
  /** Centre (midway between the hemispheres' centres); metres. */
  center?: readonly number[];
  name?: string;
}

const LOWER = 0, SIDE = 1, UPPER = 2;

export function capsuleSegments(params: CapsuleParams): number {
  if (params.divisions !== undefined) return params.divisions;
  if (params.panelSize !== undefined) return Math.max(4, Math.ceil((2 * Math.PI * params.radius) / params.panelSize - 1e-9));
  return 32;
}

/**
 * The capsule with m segments around its straight part, in its local frame (axis z, centred),
 * every count multiplied by `factor` (a reference exactly that many times finer).
 */
function capsuleTriangulation(r: number, length: number, coarseM: number, factor = 1): FacedTriangulation {
  const m = factor * coarseM;
  const h = (2 * Math.PI * r) / m;
  // Quarter meridian pi r / 2 in steps close to the spacing around: m / 4 rings per hemisphere.
  const n = factor * Math.max(1, Math.round(coarseM / 4));
  const zl = -length / 2, zu = length / 2;
  const profile: Profile = emptyProfile(false);
  addArc(profile, 0, zl, r, -Math.PI / 2, 0, n, LOWER);
  if (length > 0) addLine(profile, { rho: r, z: zl }, { rho: r, z: zu }, factor * Math.max(1, Math.ceil(length / (factor * h) - 1e-9)), SIDE);
  addArc(profile, 0, zu, r, 0, Math.PI / 2, n, UPPER);
  // The straight part and both equators keep exactly m; rings toward a pole never exceed it.
  const segments = profile.nodes.map((p) => (p.rho >= r ? m : Math.min(m, ringSegments(p.rho, h, 3))));
  return revolve(profile, segments);
}

export function capsuleMesh(params: CapsuleParams): SurfaceMesh {
  const { radius: r, length } = params;
  if (!(r > 0 && Number.isFinite(r))) throw new RangeError("capsuleMesh: radius must be positive");
  if (!(length >= 0 && Number.isFinite(length))) throw new RangeError("capsuleMesh: length must be 0 or more");
  const m = capsuleSegments(params);
  if (!(Number.isInteger(m) && m >= 3)) throw new RangeError("capsuleMesh: at least 3 segments around are needed");
  const coarse = capsuleTriangulation(r, length, m);
  const fine = capsuleTriangulation(r, length, m, referenceFactor(coarse.faces.length));
  const zl = -length / 2, zu = length / 2;
  const normal = revolvedNormal([
    (rho, z) => [rho / r, (z - zl) / r],
    () => [1, 0],
    (rho, z) => [rho / r, (z - zu) / r],
  ]);
  return facedShape(coarse, fine, normal, params.name ?? "capsule", params.axis ?? "z", params.center);
}
