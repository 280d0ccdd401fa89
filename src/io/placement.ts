/**
 * Placement of a scene entry: scale, then rotate about an axis through the origin, then
 * translate, written
 *
 *   "place": { "scale": 2 | [sx, sy, sz], "rotate": { "axis": [0, 0, 1], "degrees": 30 }, "translate": [x, y, z] }
 *
 * so a point p goes to R·(S·p) + t whatever order the keys are written in. Scales are
 * about the origin of the entry's own coordinates (a generated shape's centre, a mesh
 * file's origin); the translation is in the scene's unit.
 *
 * The rotation matrix is Rodrigues' formula R = I + sin θ K + (1 − cos θ) K², with K the
 * cross-product matrix of the unit axis (O. Rodrigues, "Des lois géométriques qui régissent
 * les déplacements d'un système solide dans l'espace", J. Math. Pures Appl. 5 (1840) 380-440;
 * in this matrix form e.g. H. Goldstein, Classical Mechanics, 3rd ed., eq. 4.62); positive
 * angles turn counter-clockwise seen from the tip of the axis (right-hand rule).
 *
 * A scale with an odd number of negative factors is a mirror: it turns every triangle's
 * outward normal inward, so the winding of each triangle is reversed to keep it outward.
 * A reference surface (CAD faces) moves with the mesh: its points as the mesh's, its normals
 * by the inverse transpose of the linear part, R·S⁻¹ (which maps an outward normal to the
 * outward normal of the placed body, mirrors included), renormalised.
 */
import type { ReferenceSurface, SurfaceMesh } from "../mesh/model.js";

export interface Placement {
  /** Scale factors along x, y, z (dimensionless). */
  scale: [number, number, number];
  /** Rotation about `axis` (any length but zero) by `degrees`, counter-clockwise seen from its tip. */
  rotate?: { axis: [number, number, number]; degrees: number };
  /** Translation in the scene's unit. */
  translate: [number, number, number];
}

/**
 * The 3×4 affine map of a placement, row-major [m00 m01 m02 t0, m10 ...], with the
 * translation multiplied by `metresPerUnit`. Output first (gl-matrix style).
 */
export function placementMatrix(out: Float64Array, p: Placement, metresPerUnit = 1): Float64Array {
  const [sx, sy, sz] = p.scale;
  let r00 = 1, r01 = 0, r02 = 0, r10 = 0, r11 = 1, r12 = 0, r20 = 0, r21 = 0, r22 = 1;
  if (p.rotate) {
    const [ax, ay, az] = p.rotate.axis;
    const len = Math.hypot(ax, ay, az);
    const x = ax / len, y = ay / len, z = az / len;
    const th = (p.rotate.degrees * Math.PI) / 180;
    // Exact values at multiples of 90° so that quarter turns map grids onto grids without round-off.
    const quarter = p.rotate.degrees / 90;
    const q = Number.isInteger(quarter) ? ((quarter % 4) + 4) % 4 : -1;
    const s = q === 0 ? 0 : q === 1 ? 1 : q === 2 ? 0 : q === 3 ? -1 : Math.sin(th);
    const c = q === 0 ? 1 : q === 1 ? 0 : q === 2 ? -1 : q === 3 ? 0 : Math.cos(th);
    const v = 1 - c;
    // Rodrigues: I + s K + v K², expanded (K² = a aᵀ − I for a unit axis a).
    r00 = c + x * x * v; r01 = x * y * v - z * s; r02 = x * z * v + y * s;
    r10 = y * x * v + z * s; r11 = c + y * y * v; r12 = y * z * v - x * s;
    r20 = z * x * v - y * s; r21 = z * y * v + x * s; r22 = c + z * z * v;
  }
  out[0] = r00 * sx; out[1] = r01 * sy; out[2] = r02 * sz; out[3] = p.translate[0] * metresPerUnit;
  out[4] = r10 * sx; out[5] = r11 * sy; out[6] = r12 * sz; out[7] = p.translate[1] * metresPerUnit;
  out[8] = r20 * sx; out[9] = r21 * sy; out[10] = r22 * sz; out[11] = p.translate[2] * metresPerUnit;
  return out;
}

const scratch = new Float64Array(12);

/**
 * The mesh placed: positions (metres) mapped by the placement, translation given in the
 * scene's unit (`metresPerUnit`). A mirroring scale reverses every triangle's winding.
 */
export function placeMesh(mesh: SurfaceMesh, p: Placement, metresPerUnit = 1): SurfaceMesh {
  const m = placementMatrix(scratch, p, metresPerUnit);
  const src = mesh.positions;
  const positions = new Float64Array(src.length);
  for (let i = 0; i < src.length; i += 3) {
    const x = src[i], y = src[i + 1], z = src[i + 2];
    positions[i] = m[0] * x + m[1] * y + m[2] * z + m[3];
    positions[i + 1] = m[4] * x + m[5] * y + m[6] * z + m[7];
    positions[i + 2] = m[8] * x + m[9] * y + m[10] * z + m[11];
  }
  const mirror = p.scale[0] * p.scale[1] * p.scale[2] < 0;
  const triangles = mirror ? reversed(mesh.triangles) : mesh.triangles;
  const placed: SurfaceMesh = { positions, triangles, conductor: mesh.conductor, names: mesh.names };
  if (!mesh.reference || !mesh.faces) return placed;
  return { ...placed, faces: mesh.faces, reference: placeReference(mesh.reference, m, p.scale, mirror) };
}

function reversed(tri: Uint32Array): Uint32Array {
  const out = new Uint32Array(tri);
  for (let t = 0; t < out.length; t += 3) { const b = out[t + 1]; out[t + 1] = out[t + 2]; out[t + 2] = b; }
  return out;
}

/** The reference surface under the affine map `m` (3×4, scale folded in) with scale factors `scale`. */
function placeReference(r: ReferenceSurface, m: Float64Array, scale: [number, number, number], mirror: boolean): ReferenceSurface {
  const src = r.positions, nrm = r.normals;
  const positions = new Float64Array(src.length), normals = new Float64Array(nrm.length);
  // Inverse transpose of R·S is R·S⁻¹: column j of m divided by scale[j] twice.
  const q0 = 1 / (scale[0] * scale[0]), q1 = 1 / (scale[1] * scale[1]), q2 = 1 / (scale[2] * scale[2]);
  for (let i = 0; i < src.length; i += 3) {
    const x = src[i], y = src[i + 1], z = src[i + 2];
    positions[i] = m[0] * x + m[1] * y + m[2] * z + m[3];
    positions[i + 1] = m[4] * x + m[5] * y + m[6] * z + m[7];
    positions[i + 2] = m[8] * x + m[9] * y + m[10] * z + m[11];
    const a = nrm[i] * q0, b = nrm[i + 1] * q1, c = nrm[i + 2] * q2;
    const nx = m[0] * a + m[1] * b + m[2] * c, ny = m[4] * a + m[5] * b + m[6] * c, nz = m[8] * a + m[9] * b + m[10] * c;
    const len = Math.hypot(nx, ny, nz) || 1;
    normals[i] = nx / len; normals[i + 1] = ny / len; normals[i + 2] = nz / len;
  }
  return { positions, normals, triangles: mirror ? reversed(r.triangles) : r.triangles, face: r.face, faceCount: r.faceCount };
}

/**
 * Read a `place` object of a scene (numbers already substituted); `fail(path, fault)`
 * raises the caller's error with the key path.
 */
export function parsePlacement(v: unknown, path: string, fail: (path: string, fault: string) => never): Placement {
  if (typeof v !== "object" || v === null || Array.isArray(v)) return fail(path, "expected an object with scale, rotate and/or translate");
  const o = v as Record<string, unknown>;
  for (const k of Object.keys(o)) if (k !== "scale" && k !== "rotate" && k !== "translate") fail(`${path}.${k}`, "unknown key (expected scale, rotate, translate; applied in that order)");
  const finite = (x: unknown): x is number => typeof x === "number" && Number.isFinite(x);
  const triple = (x: unknown, at: string, what: string): [number, number, number] => {
    if (!Array.isArray(x) || x.length !== 3) return fail(at, `expected [x, y, z] (${what})`);
    x.forEach((c, i) => { if (!finite(c)) fail(`${at}[${i}]`, "expected a number"); });
    return x as [number, number, number];
  };
  let scale: [number, number, number] = [1, 1, 1];
  if (o.scale !== undefined) {
    if (finite(o.scale)) scale = [o.scale, o.scale, o.scale];
    else scale = triple(o.scale, `${path}.scale`, "a factor per axis, or one number for all");
    scale.forEach((s, i) => { if (s === 0) fail(Array.isArray(o.scale) ? `${path}.scale[${i}]` : `${path}.scale`, "a scale factor of 0 flattens the conductor; use a non-zero factor (negative mirrors)"); });
  }
  let rotate: Placement["rotate"];
  if (o.rotate !== undefined) {
    const r = o.rotate;
    const at = `${path}.rotate`;
    if (typeof r !== "object" || r === null || Array.isArray(r)) fail(at, "expected { \"axis\": [x, y, z], \"degrees\": angle }");
    const ro = r as Record<string, unknown>;
    for (const k of Object.keys(ro)) if (k !== "axis" && k !== "degrees") fail(`${at}.${k}`, "unknown key (expected axis, degrees)");
    if (ro.axis === undefined) fail(`${at}.axis`, "missing (direction of the rotation axis, e.g. [0, 0, 1])");
    const axis = triple(ro.axis, `${at}.axis`, "direction of the rotation axis");
    if (axis[0] === 0 && axis[1] === 0 && axis[2] === 0) fail(`${at}.axis`, "the axis has zero length");
    if (!finite(ro.degrees)) fail(`${at}.degrees`, ro.degrees === undefined ? "missing (angle in degrees)" : "expected a number (degrees)");
    rotate = { axis, degrees: ro.degrees as number };
  }
  const translate = o.translate === undefined ? [0, 0, 0] as [number, number, number] : triple(o.translate, `${path}.translate`, "offset in the scene's unit");
  return { scale, rotate, translate };
}
