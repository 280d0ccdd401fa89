/**
 * Panels: the flat triangles that carry piecewise-constant surface charge, struct-of-arrays.
 *
 * Besides the geometry (vertices, centroid, unit normal, area, radius) each panel keeps its
 * second and third central moments, (1/A)∫(y−c)^{⊗k} dS for k = 2, 3, which the far-field
 * Taylor (multipole) expansion of the Galerkin entries needs (galerkin.ts). Moments are
 * computed exactly with a degree-4 Dunavant rule (exact for cubics).
 *
 * All arrays may live in SharedArrayBuffers (`panelSetShared`) so worker threads read them in
 * place: a PanelSet posted to a worker arrives as views on the same memory.
 */
import { dunavantRule } from "./dunavant.js";
import { triangleCentroid, triangleNormal } from "../geometry/triangle.js";

export interface PanelSet {
  /** Number of panels. */
  readonly n: number;
  /** 9 per panel: the three vertices, metres, counter-clockwise about the normal. */
  readonly vertices: Float64Array;
  /** 3 per panel: mesh vertex indices of the corners (for detecting panels that touch). */
  readonly corners: Uint32Array;
  /** 3 per panel; metres. */
  readonly centroids: Float64Array;
  /** 3 per panel, unit, from the winding. */
  readonly normals: Float64Array;
  /** Square metres. */
  readonly areas: Float64Array;
  /** Largest centroid-to-vertex distance; metres. */
  readonly radii: Float64Array;
  /** 6 per panel: second central moments xx, yy, zz, xy, xz, yz; square metres. */
  readonly moments2: Float64Array;
  /** 10 per panel: third central moments xxx, yyy, zzz, xxy, xxz, xyy, yyz, xzz, yzz, xyz; m³. */
  readonly moments3: Float64Array;
  /** 3 per panel: the traces Σ_a m_aab of the third moments (b = x, y, z); m³. */
  readonly traces3: Float64Array;
}

type Alloc = (n: number) => Float64Array;
const plain: Alloc = (n) => new Float64Array(n);
const shared: Alloc = (n) => new Float64Array(new SharedArrayBuffer(8 * n));

/** Panels of a triangle mesh. positions: metres, 3 per vertex; triangles: 3 vertex indices each. */
export function panelSet(positions: Float64Array, triangles: Uint32Array): PanelSet {
  return build(positions, triangles, plain, (n) => new Uint32Array(n));
}

/** As `panelSet`, with every array in shared memory for worker threads. */
export function panelSetShared(positions: Float64Array, triangles: Uint32Array): PanelSet {
  return build(positions, triangles, shared, (n) => new Uint32Array(new SharedArrayBuffer(4 * n)));
}

/**
 * The PanelSet inside a worker, from the object the worker received (typed arrays over shared
 * memory arrive as views on the same buffers). Checks the lengths so a wrong message fails loudly.
 */
export function panelSetView(p: PanelSet): PanelSet {
  const n = p.n;
  if (p.vertices.length !== 9 * n || p.centroids.length !== 3 * n || p.areas.length !== n
    || p.moments2.length !== 6 * n || p.moments3.length !== 10 * n || p.traces3.length !== 3 * n
    || p.corners.length !== 3 * n || p.radii.length !== n || p.normals.length !== 3 * n) {
    throw new Error("panelSetView: array lengths do not match the panel count");
  }
  return p;
}

function build(positions: Float64Array, triangles: Uint32Array, alloc: Alloc, allocU: (n: number) => Uint32Array): PanelSet {
  const n = triangles.length / 3;
  if (!Number.isInteger(n)) throw new Error("panelSet: triangle index count is not a multiple of 3");
  const nv = positions.length / 3;
  const vertices = alloc(9 * n), centroids = alloc(3 * n), normals = alloc(3 * n);
  const areas = alloc(n), radii = alloc(n), moments2 = alloc(6 * n), moments3 = alloc(10 * n), traces3 = alloc(3 * n);
  const corners = allocU(3 * n);
  const rule = dunavantRule(4);
  for (let t = 0; t < n; t++) {
    for (let k = 0; k < 3; k++) {
      const vi = triangles[3 * t + k];
      if (vi >= nv) throw new Error(`panelSet: triangle ${t} refers to vertex ${vi}, but there are ${nv}`);
      corners[3 * t + k] = vi;
      vertices[9 * t + 3 * k] = positions[3 * vi];
      vertices[9 * t + 3 * k + 1] = positions[3 * vi + 1];
      vertices[9 * t + 3 * k + 2] = positions[3 * vi + 2];
    }
    const o = 9 * t;
    const ax = vertices[o], ay = vertices[o + 1], az = vertices[o + 2];
    const bx = vertices[o + 3], by = vertices[o + 4], bz = vertices[o + 5];
    const cx = vertices[o + 6], cy = vertices[o + 7], cz = vertices[o + 8];
    triangleCentroid(centroids, 3 * t, vertices, o, o + 3, o + 6);
    const gx = centroids[3 * t], gy = centroids[3 * t + 1], gz = centroids[3 * t + 2];
    areas[t] = 0.5 * triangleNormal(normals, 3 * t, vertices, o, o + 3, o + 6);
    radii[t] = Math.sqrt(Math.max(
      (ax - gx) ** 2 + (ay - gy) ** 2 + (az - gz) ** 2,
      (bx - gx) ** 2 + (by - gy) ** 2 + (bz - gz) ** 2,
      (cx - gx) ** 2 + (cy - gy) ** 2 + (cz - gz) ** 2));
    let xx = 0, yy = 0, zz = 0, xy = 0, xz = 0, yz = 0;
    let xxx = 0, yyy = 0, zzz = 0, xxy = 0, xxz = 0, xyy = 0, yyz = 0, xzz = 0, yzz = 0, xyz = 0;
    for (let k = 0; k < rule.n; k++) {
      const w = rule.w[k], l1 = rule.l1[k], l2 = rule.l2[k], l3 = rule.l3[k];
      const x = l1 * ax + l2 * bx + l3 * cx - gx, y = l1 * ay + l2 * by + l3 * cy - gy, z = l1 * az + l2 * bz + l3 * cz - gz;
      xx += w * x * x; yy += w * y * y; zz += w * z * z; xy += w * x * y; xz += w * x * z; yz += w * y * z;
      xxx += w * x * x * x; yyy += w * y * y * y; zzz += w * z * z * z; xxy += w * x * x * y; xxz += w * x * x * z;
      xyy += w * x * y * y; yyz += w * y * y * z; xzz += w * x * z * z; yzz += w * y * z * z; xyz += w * x * y * z;
    }
    const m = 6 * t, u = 10 * t;
    moments2[m] = xx; moments2[m + 1] = yy; moments2[m + 2] = zz; moments2[m + 3] = xy; moments2[m + 4] = xz; moments2[m + 5] = yz;
    moments3[u] = xxx; moments3[u + 1] = yyy; moments3[u + 2] = zzz; moments3[u + 3] = xxy; moments3[u + 4] = xxz;
    moments3[u + 5] = xyy; moments3[u + 6] = yyz; moments3[u + 7] = xzz; moments3[u + 8] = yzz; moments3[u + 9] = xyz;
    traces3[3 * t] = xxx + xyy + xzz;
    traces3[3 * t + 1] = xxy + yyy + yzz;
    traces3[3 * t + 2] = xxz + yyz + zzz;
  }
  return { n, vertices, corners, centroids, normals, areas, radii, moments2, moments3, traces3 };
}
