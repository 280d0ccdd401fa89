/**
 * Washer: a flat ring of finite thickness about the local z axis, between an inner and an
 * outer radius, centred on z = 0. Its edges are square (`edgeRadius` 0, the default) or
 * rounded with a radius up to half the thickness (half the thickness rounds each rim into a
 * half-torus). A surface of revolution of the rectangular, or rounded-rectangular, cross-section
 * (./revolve.ts). The square edges are where the charge crowds (d^(-1/3) at a right-angled
 * edge), so each straight side is graded toward both its ends like the box's; rounded edges
 * carry no singularity and their sides stay uniform, the arcs in equal steps of angle.
 *
 * Faces, in order around the section: bottom, (outer lower arc), outer wall, (outer upper arc),
 * top, (inner upper arc), inner wall, (inner lower arc); a wall that rounding leaves with no
 * height is absent.
 */
import type { SurfaceMesh } from "../model.js";
import { type Axis } from "./placement.js";
import { type Profile, type ProfileNormal, addArc, addLine, emptyProfile, revolve, revolvedNormal, ringSegments } from "./revolve.js";
import { facedShape, referenceFactor, type FacedTriangulation } from "./reference.js";

export interface WasherParams {
  /** Radius of the hole; metres. */
  innerRadius: number;
  /** metres, more than innerRadius */
  outerRadius: number;
  /** Along the axis; metres. */
  thickness: number;
  /** Radius of the rounded edges; metres, 0 (square, the default) up to half the thickness and half the ring's width. */
  edgeRadius?: number;
  /** Segments around the outer rim (default 48, more for small rounded edges: `washerSpacing`). */
  divisions?: number;
  /** Target panel edge length; metres. Used when `divisions` is not given. */
  panelSize?: number;
  /** Largest / smallest spacing along each side, toward square edges; 1 = uniform. */
  grading?: number;
  /** Axis of the ring, default z. */
  axis?: Axis;
  /** metres */
  center?: readonly number[];
  name?: string;
}

/**
 * Nominal spacing: from the segments around the outer rim or the panel size; by default 48
 * around the rim, finer where rounded edges would otherwise give strips longer than about 4
 * times their width (a quarter arc of 2 steps), but never more than 160 around the rim.
 */
export function washerSpacing(params: WasherParams): number {
  if (params.divisions !== undefined) return (2 * Math.PI * params.outerRadius) / params.divisions;
  if (params.panelSize !== undefined) return params.panelSize;
  const rim = 2 * Math.PI * params.outerRadius, e = params.edgeRadius ?? 0;
  return e > 0 ? Math.min(rim / 48, Math.max(Math.PI * e, rim / 160)) : rim / 48;
}

/** Fewest segments around the hole: a smaller count would turn a small hole into a triangle or a square. */
const MIN_RING_SEGMENTS = 8;

/** Steps along a straight side of length l at spacing h. */
const steps = (l: number, h: number): number => Math.max(1, Math.ceil(l / h - 1e-9));
/** Steps along an arc of radius e through a quarter turn at spacing h: at least 2, so a fillet is never one chord. */
const arcSteps = (e: number, h: number): number => Math.max(2, Math.ceil((0.5 * Math.PI * e) / h - 1e-9));

/**
 * The washer at spacing h, every count (steps along the section, segments around) multiplied
 * by `factor`, so a reference is exactly that many times finer even where a least count applies.
 */
function washerTriangulation(a: number, b: number, t: number, e: number, h: number, g: number, factor = 1): { mesh: FacedTriangulation; normals: ProfileNormal[] } {
  const zb = -t / 2, zt = t / 2;
  const profile: Profile = emptyProfile(true);
  const normals: ProfileNormal[] = [];
  const grading = e > 0 ? 1 : g;
  const line = (p0: [number, number], p1: [number, number], n: [number, number]): void => {
    const l = Math.hypot(p1[0] - p0[0], p1[1] - p0[1]);
    if (!(l > 0)) return;
    addLine(profile, { rho: p0[0], z: p0[1] }, { rho: p1[0], z: p1[1] }, factor * steps(l, h), normals.length, grading);
    normals.push(() => n);
  };
  const arc = (rc: number, zc: number, a0: number): void => {
    if (!(e > 0)) return;
    addArc(profile, rc, zc, e, a0, a0 + Math.PI / 2, factor * arcSteps(e, h), normals.length);
    normals.push((rho, z) => [(rho - rc) / e, (z - zc) / e]);
  };
  // Counter-clockwise in the (rho, z) plane: the section on the left.
  line([a + e, zb], [b - e, zb], [0, -1]);
  arc(b - e, zb + e, -Math.PI / 2);
  line([b, zb + e], [b, zt - e], [1, 0]);
  arc(b - e, zt - e, 0);
  line([b - e, zt], [a + e, zt], [0, 1]);
  arc(a + e, zt - e, Math.PI / 2);
  line([a, zt - e], [a, zb + e], [-1, 0]);
  arc(a + e, zb + e, Math.PI);
  // The loop came back to its first node: drop the repeat.
  profile.nodes.pop();
  const segments = profile.nodes.map((p) => factor * ringSegments(p.rho, h, MIN_RING_SEGMENTS));
  return { mesh: revolve(profile, segments), normals };
}

export function washerMesh(params: WasherParams): SurfaceMesh {
  const { innerRadius: a, outerRadius: b, thickness: t } = params;
  const e = params.edgeRadius ?? 0;
  if (!(a > 0 && b > 0 && t > 0 && [a, b, t].every(Number.isFinite))) throw new RangeError("washerMesh: radii and thickness must be positive");
  if (!(a < b)) throw new RangeError("washerMesh: the inner radius must be less than the outer radius");
  if (!(e >= 0 && e <= t / 2 && e <= (b - a) / 2)) throw new RangeError("washerMesh: the edge radius must be from 0 to half the thickness and half the ring's width");
  const h = washerSpacing(params);
  if (!(h > 0 && Number.isFinite(h))) throw new RangeError("washerMesh: the panel spacing must be positive");
  const g = params.grading ?? 1;
  const coarse = washerTriangulation(a, b, t, e, h, g);
  const fine = washerTriangulation(a, b, t, e, h, g, referenceFactor(coarse.mesh.faces.length));
  return facedShape(coarse.mesh, fine.mesh, revolvedNormal(fine.normals), params.name ?? "washer", params.axis ?? "z", params.center);
}
