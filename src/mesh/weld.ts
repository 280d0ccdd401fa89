/**
 * Welding coincident vertices and dropping degenerate triangles.
 *
 * STL stores every triangle with its own three vertices, so a closed body arrives as a
 * soup; the solver and the topology checks need shared vertices. Welding is a uniform-grid
 * spatial hash (common practice; see C. Ericson, "Real-Time Collision Detection", 2005,
 * ch. 7.1) with cells a few tolerances wide: two points within the tolerance lie in the same or
 * adjacent cells, and only the adjacent cells whose face is within the tolerance are checked,
 * so every partner is found and the whole pass is O(N) expected. Clustering is greedy: a vertex joins the first earlier kept
 * vertex within tolerance and keeps that vertex's position.
 */
import { triangleArea } from "../geometry/triangle.js";

/** Default weld tolerance, relative to the bounding-box diagonal. */
export const DEFAULT_WELD_TOLERANCE = 1e-6;
/** Default degeneracy threshold: twice the area over the longest edge squared (≈ height / length). */
export const DEFAULT_AREA_TOLERANCE = 1e-10;

const CELL_PER_TOL = 4;
const P1 = 0x9e3779b1 | 0, P2 = 0x85ebca77 | 0, P3 = 0xc2b2ae3d | 0;

/**
 * Merge referenced vertices closer than `relTol` × bounding-box diagonal (of the referenced
 * vertices) and drop unreferenced ones. `merged` counts the referenced vertices removed.
 */
export function weldVertices(positions: Float64Array, triangles: Uint32Array, relTol = DEFAULT_WELD_TOLERANCE): { positions: Float64Array; triangles: Uint32Array; merged: number } {
  const nv = positions.length / 3;
  const used = new Uint8Array(nv);
  let nUsed = 0;
  for (let k = 0; k < triangles.length; k++) { const v = triangles[k]; if (used[v] === 0) { used[v] = 1; nUsed++; } }
  let minx = Infinity, miny = Infinity, minz = Infinity, maxx = -Infinity, maxy = -Infinity, maxz = -Infinity;
  for (let v = 0; v < nv; v++) {
    if (used[v] === 0) continue;
    const x = positions[3 * v], y = positions[3 * v + 1], z = positions[3 * v + 2];
    if (x < minx) minx = x; if (x > maxx) maxx = x;
    if (y < miny) miny = y; if (y > maxy) maxy = y;
    if (z < minz) minz = z; if (z > maxz) maxz = z;
  }
  const diag = nUsed > 0 ? Math.hypot(maxx - minx, maxy - miny, maxz - minz) : 0;
  const tol = relTol > 0 && Number.isFinite(relTol) ? relTol * diag : 0;
  // Cells of CELL_PER_TOL tolerances: a point probes its own cell and, per axis, the neighbour
  // only when it lies within the tolerance of that face, so at most 8 cells and about
  // (1 + 2/CELL_PER_TOL)^3 ≈ 3.4 on average, instead of 27 for cells one tolerance wide.
  // With zero tolerance only exact repeats weld; any positive cell size keeps them in one cell.
  const cell = tol > 0 ? CELL_PER_TOL * tol : diag > 0 ? diag * 1e-9 : 1;
  const reach = tol / cell;
  const tol2 = tol * tol;
  const inv = 1 / cell;

  let size = 16;
  while (size < 2 * nUsed) size *= 2;
  const mask = size - 1;
  const head = new Int32Array(size).fill(-1);
  const chain = new Int32Array(nUsed); // next kept vertex in the same hash slot
  const keptPos = new Float64Array(3 * nUsed);
  const remap = new Int32Array(nv).fill(-1);
  let kept = 0;

  for (let v = 0; v < nv; v++) {
    if (used[v] === 0) continue;
    const x = positions[3 * v], y = positions[3 * v + 1], z = positions[3 * v + 2];
    const fx = (x - minx) * inv, fy = (y - miny) * inv, fz = (z - minz) * inv;
    const ix = Math.floor(fx), iy = Math.floor(fy), iz = Math.floor(fz);
    // Only a neighbour across a face nearer than the tolerance can hold a partner.
    const sx = fx - ix < reach ? -1 : fx - ix > 1 - reach ? 1 : 0;
    const sy = fy - iy < reach ? -1 : fy - iy > 1 - reach ? 1 : 0;
    const sz = fz - iz < reach ? -1 : fz - iz > 1 - reach ? 1 : 0;
    const h = slot(ix, iy, iz) & mask;
    let found = -1;
    for (let a = 0; a <= 1 && found < 0; a++) {
      if (a === 1 && sx === 0) break;
      for (let b = 0; b <= 1 && found < 0; b++) {
        if (b === 1 && sy === 0) break;
        for (let c = 0; c <= 1 && found < 0; c++) {
          if (c === 1 && sz === 0) break;
          const cellSlot = a + b + c === 0 ? h : slot(ix + a * sx, iy + b * sy, iz + c * sz) & mask;
          for (let k = head[cellSlot]; k >= 0; k = chain[k]) {
            const ex = keptPos[3 * k] - x, ey = keptPos[3 * k + 1] - y, ez = keptPos[3 * k + 2] - z;
            if (ex * ex + ey * ey + ez * ez <= tol2) { found = k; break; }
          }
        }
      }
    }
    if (found >= 0) { remap[v] = found; continue; }
    keptPos[3 * kept] = x; keptPos[3 * kept + 1] = y; keptPos[3 * kept + 2] = z;
    chain[kept] = head[h];
    head[h] = kept;
    remap[v] = kept++;
  }
  const out = new Uint32Array(triangles.length);
  for (let k = 0; k < triangles.length; k++) out[k] = remap[triangles[k]];
  return { positions: keptPos.slice(0, 3 * kept), triangles: out, merged: nUsed - kept };
}

/** Hash of an integer cell (cells far from the origin wrap modulo 2^32 consistently). */
function slot(ix: number, iy: number, iz: number): number {
  let h = Math.imul(ix | 0, P1) ^ Math.imul(iy | 0, P2) ^ Math.imul(iz | 0, P3);
  h ^= h >>> 15;
  h = Math.imul(h, 0x2c1b3c6d);
  return h ^ (h >>> 12);
}

/**
 * Drop triangles that repeat a vertex or have (near) zero area: twice the area at most
 * `relAreaTol` × (longest edge)², i.e. height below that fraction of the length.
 */
export function dropDegenerate(positions: Float64Array, triangles: Uint32Array, group: Uint32Array, relAreaTol = DEFAULT_AREA_TOLERANCE): { triangles: Uint32Array; group: Uint32Array; dropped: number } {
  const nt = triangles.length / 3;
  const keep = new Uint8Array(nt);
  let nk = 0;
  const p = positions;
  for (let t = 0; t < nt; t++) {
    const ia = triangles[3 * t], ib = triangles[3 * t + 1], ic = triangles[3 * t + 2];
    if (ia === ib || ib === ic || ia === ic) continue;
    const a = 3 * ia, b = 3 * ib, c = 3 * ic;
    const ux = p[b] - p[a], uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2];
    const vx = p[c] - p[a], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
    const wx = p[c] - p[b], wy = p[c + 1] - p[b + 1], wz = p[c + 2] - p[b + 2];
    const twiceArea = 2 * triangleArea(p, a, b, c);
    const l2 = Math.max(ux * ux + uy * uy + uz * uz, vx * vx + vy * vy + vz * vz, wx * wx + wy * wy + wz * wz);
    if (!(twiceArea > relAreaTol * l2)) continue;
    keep[t] = 1;
    nk++;
  }
  const outT = new Uint32Array(3 * nk), outG = new Uint32Array(nk);
  for (let t = 0, k = 0; t < nt; t++) {
    if (keep[t] === 0) continue;
    outT[3 * k] = triangles[3 * t]; outT[3 * k + 1] = triangles[3 * t + 1]; outT[3 * k + 2] = triangles[3 * t + 2];
    outG[k++] = group[t];
  }
  return { triangles: outT, group: outG, dropped: nt - nk };
}
