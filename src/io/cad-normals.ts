/**
 * Exact normals for the reference surface of CAD faces.
 *
 * The kernel build (occt-import-js) gives vertex normals averaged over the triangulation
 * (Poly_Triangulation::ComputeNormals), off the true normal by about 1e-3 on a fine sphere and
 * by 0.06 on a periodic surface's seam; it exposes no evaluation of the face's surface. Its
 * vertices, though, lie on the surface to round-off. So each face's surface is recovered
 * from its vertices: a plane, or a quadric (sphere, cylinder, cone — the surfaces of most
 * machined parts, fillets along straight edges included) found as the null vector of the
 * algebraic-fit matrix [x² y² z² xy xz yz x y z 1] (the classic algebraic fit, e.g. Pratt,
 * SIGGRAPH 1987; here the points are exact, so the null vector is the surface). A face is
 * accepted only when every vertex lies on the fitted surface to 1e-9 of the face's size;
 * the normal is then the gradient of the fit, exact to round-off. Other faces (tori,
 * B-splines) keep the averaged normals, and the caller says how many there were.
 */
import { jacobiSVD } from "../linalg/svd.js";

/** Relative distance (to the face's half-extent) within which every vertex must lie on the fit. */
const ON_SURFACE = 1e-9;

/**
 * The surface of a face as its vertices showed it: Q(u) = 0 with u = (x − centre)·scale and
 * Q(u) = q0 u² + q1 v² + q2 w² + q3 uv + q4 uw + q5 vw + q6 u + q7 v + q8 w + q9 (a plane has
 * q0..q5 = 0). Coordinates are those of the reference given to `exactFaceNormals`.
 */
export interface FaceSurface {
  centre: [number, number, number];
  scale: number;
  q: Float64Array;
  plane: boolean;
}

/**
 * Replace the normals of every plane or quadric face by the exact ones, in place; the
 * normals given (averaged, unit) decide the sense. Returns the number of faces left with
 * averaged normals, and each face's surface (undefined for those).
 */
export function exactFaceNormals(positions: Float64Array, normals: Float64Array, triangles: Uint32Array, face: Uint32Array, faceCount: number): { approximate: number; surfaces: Array<FaceSurface | undefined> } {
  const nv = positions.length / 3;
  const faceOf = new Int32Array(nv).fill(-1);
  for (let t = 0; t < face.length; t++) for (let j = 0; j < 3; j++) faceOf[triangles[3 * t + j]] = face[t];
  const start = new Uint32Array(faceCount + 1);
  for (let v = 0; v < nv; v++) if (faceOf[v] >= 0) start[faceOf[v] + 1]++;
  for (let f = 0; f < faceCount; f++) start[f + 1] += start[f];
  const members = new Uint32Array(start[faceCount]);
  const fill = start.slice(0, faceCount);
  for (let v = 0; v < nv; v++) if (faceOf[v] >= 0) members[fill[faceOf[v]]++] = v;
  let approximate = 0;
  const surfaces: Array<FaceSurface | undefined> = [];
  for (let f = 0; f < faceCount; f++) {
    const vs = members.subarray(start[f], start[f + 1]);
    const s = vs.length === 0 ? undefined : fitPlane(positions, normals, vs) ?? fitQuadric(positions, normals, vs);
    if (vs.length > 0 && s === undefined) approximate++;
    surfaces.push(s);
  }
  return { approximate, surfaces };
}

/** Centre and half-extent of a face's vertices (for conditioning and the tolerance). */
function frame(p: Float64Array, vs: Uint32Array): [number, number, number, number] {
  let lx = Infinity, ly = Infinity, lz = Infinity, hx = -Infinity, hy = -Infinity, hz = -Infinity;
  for (const v of vs) {
    const x = p[3 * v], y = p[3 * v + 1], z = p[3 * v + 2];
    if (x < lx) lx = x; if (x > hx) hx = x; if (y < ly) ly = y; if (y > hy) hy = y; if (z < lz) lz = z; if (z > hz) hz = z;
  }
  const half = Math.max(hx - lx, hy - ly, hz - lz) / 2 || 1;
  return [(lx + hx) / 2, (ly + hy) / 2, (lz + hz) / 2, half];
}

/** A flat face: the mean normal, if every vertex lies in its plane. */
function fitPlane(p: Float64Array, n: Float64Array, vs: Uint32Array): FaceSurface | undefined {
  let ax = 0, ay = 0, az = 0;
  for (const v of vs) { ax += n[3 * v]; ay += n[3 * v + 1]; az += n[3 * v + 2]; }
  const len = Math.hypot(ax, ay, az);
  if (!(len > 0)) return undefined;
  ax /= len; ay /= len; az /= len;
  const [cx, cy, cz, half] = frame(p, vs);
  let lo = Infinity, hi = -Infinity;
  for (const v of vs) {
    const d = (p[3 * v] - cx) * ax + (p[3 * v + 1] - cy) * ay + (p[3 * v + 2] - cz) * az;
    if (d < lo) lo = d; if (d > hi) hi = d;
  }
  if (hi - lo > ON_SURFACE * half) return undefined;
  for (const v of vs) { n[3 * v] = ax; n[3 * v + 1] = ay; n[3 * v + 2] = az; }
  const q = new Float64Array(10);
  q[6] = ax; q[7] = ay; q[8] = az; q[9] = -(lo + hi) / 2 / half;
  return { centre: [cx, cy, cz], scale: 1 / half, q, plane: true };
}

/** Singular values below this fraction of the largest span the null space. */
const NULL_SPACE = 1e-10;
/** Cosine of the largest angle allowed between a fitted normal and the kernel's averaged one. */
const AGREE = 0.96;

/**
 * The member of the null space spanned by the right singular vectors `basis` (columns of Z)
 * whose gradient is most nearly parallel to the averaged normals: the smallest right singular
 * vector of the stacked cross products ∇Q_α(p_i) × n_i, linear in α.
 */
function combination(basis: number[], p: Float64Array, n: Float64Array, vs: Uint32Array, cx: number, cy: number, cz: number, s: number): number[] {
  const k = basis.length;
  const vec = (j: number) => Array.from({ length: 10 }, (_, i) => Z[i * 10 + j]);
  if (k === 1) return vec(basis[0]);
  const qs = basis.map(vec);
  const G = new Float64Array(k * k);
  const c = new Float64Array(3 * k);
  for (const v of vs) {
    const x = (p[3 * v] - cx) * s, y = (p[3 * v + 1] - cy) * s, z = (p[3 * v + 2] - cz) * s;
    const nx = n[3 * v], ny = n[3 * v + 1], nz = n[3 * v + 2];
    for (let a = 0; a < k; a++) {
      const q = qs[a];
      const gx = 2 * q[0] * x + q[3] * y + q[4] * z + q[6], gy = 2 * q[1] * y + q[3] * x + q[5] * z + q[7], gz = 2 * q[2] * z + q[4] * x + q[5] * y + q[8];
      c[3 * a] = gy * nz - gz * ny; c[3 * a + 1] = gz * nx - gx * nz; c[3 * a + 2] = gx * ny - gy * nx;
    }
    for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) G[a * k + b] += c[3 * a] * c[3 * b] + c[3 * a + 1] * c[3 * b + 1] + c[3 * a + 2] * c[3 * b + 2];
  }
  const V = new Float64Array(k * k), sv = new Float64Array(k);
  jacobiSVD(G, k, V, sv);
  let m = 0;
  for (let j = 1; j < k; j++) if (sv[j] < sv[m]) m = j;
  const out = new Array<number>(10).fill(0);
  for (let a = 0; a < k; a++) for (let i = 0; i < 10; i++) out[i] += V[a * k + m] * qs[a][i];
  const len = Math.hypot(...out);
  return out.map((x) => x / len);
}

const R = new Float64Array(100), Z = new Float64Array(100), S = new Float64Array(10), row = new Float64Array(10);

/** A quadric face: the algebraic fit's null vector, accepted when every vertex lies on it. */
function fitQuadric(p: Float64Array, n: Float64Array, vs: Uint32Array): FaceSurface | undefined {
  if (vs.length < 10) return undefined;
  const [cx, cy, cz, half] = frame(p, vs);
  const s = 1 / half;
  // R: the triangular factor of the design matrix, built a row at a time by Givens rotations
  // (never forming its normal matrix, whose squared condition would blur the null vector).
  R.fill(0);
  for (const v of vs) {
    const x = (p[3 * v] - cx) * s, y = (p[3 * v + 1] - cy) * s, z = (p[3 * v + 2] - cz) * s;
    row[0] = x * x; row[1] = y * y; row[2] = z * z; row[3] = x * y; row[4] = x * z; row[5] = y * z; row[6] = x; row[7] = y; row[8] = z; row[9] = 1;
    for (let k = 0; k < 10; k++) {
      const a = R[k * 10 + k], b = row[k];
      if (b === 0) continue;
      const r = Math.hypot(a, b), c = a / r, sn = b / r;
      for (let j = k; j < 10; j++) {
        const rj = R[k * 10 + j], wj = row[j];
        R[k * 10 + j] = c * rj + sn * wj;
        row[j] = -sn * rj + c * wj;
      }
    }
  }
  jacobiSVD(R, 10, Z, S);
  // The null space: one vector for points spread over the surface; more when they are not
  // (a cylinder or cone meshed with vertices on its two rims only, which a pair of planes
  // also holds). Within it, the member whose gradients best follow the kernel's averaged
  // normals; on ruled faces those are exact across the rulings, as every facet contains one.
  const order = Array.from({ length: 10 }, (_, j) => j).sort((a, b) => S[a] - S[b]);
  const top = S[order[9]];
  const basis = order.filter((j) => S[j] <= NULL_SPACE * top).slice(0, 3);
  if (basis.length === 0) basis.push(order[0]);
  const q = combination(basis, p, n, vs, cx, cy, cz, s);
  // Every vertex on the surface (distance ≈ |Q| / |∇Q|), with a gradient to take the normal from.
  const out = new Float64Array(3 * vs.length);
  for (let i = 0; i < vs.length; i++) {
    const v = vs[i];
    const x = (p[3 * v] - cx) * s, y = (p[3 * v + 1] - cy) * s, z = (p[3 * v + 2] - cz) * s;
    const value = q[0] * x * x + q[1] * y * y + q[2] * z * z + q[3] * x * y + q[4] * x * z + q[5] * y * z + q[6] * x + q[7] * y + q[8] * z + q[9];
    const gx = 2 * q[0] * x + q[3] * y + q[4] * z + q[6];
    const gy = 2 * q[1] * y + q[3] * x + q[5] * z + q[7];
    const gz = 2 * q[2] * z + q[4] * x + q[5] * y + q[8];
    const g = Math.hypot(gx, gy, gz);
    // A vanishing gradient (a cone's apex) or a point off the fit: not this surface.
    if (!(g > 1e-6) || Math.abs(value) > ON_SURFACE * g) return undefined;
    const along = gx * n[3 * v] + gy * n[3 * v + 1] + gz * n[3 * v + 2];
    // The fit must agree with the averaged normals (within about 15°): else it is not this face's surface.
    if (Math.abs(along) < AGREE * g) return undefined;
    const sense = along < 0 ? -1 : 1;
    out[3 * i] = (sense * gx) / g; out[3 * i + 1] = (sense * gy) / g; out[3 * i + 2] = (sense * gz) / g;
  }
  for (let i = 0; i < vs.length; i++) for (let j = 0; j < 3; j++) n[3 * vs[i] + j] = out[3 * i + j];
  return { centre: [cx, cy, cz], scale: s, q: Float64Array.from(q), plane: false };
}
