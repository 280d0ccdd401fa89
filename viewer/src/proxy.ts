/**
 * A coarse stand-in for a conductor's surface, drawn only while the camera moves: under
 * software WebGL a frame costs about 0.2 µs per triangle on top of the pixel fill
 * (tests/bench/viewer.bench.mjs), so a 300k-panel model orbits at a tenth of its panels.
 * The full mesh is drawn whenever the view rests, and picking always uses the full mesh.
 *
 * Vertex clustering: J. Rossignac and P. Borrel, "Multi-resolution 3D approximations for
 * rendering complex scenes", in Modeling in Computer Graphics (Springer, 1993), pp. 455–465.
 * Vertices are pooled per cell of a uniform grid, each cell becomes one vertex at the mean
 * of its members, and a panel survives when its three vertices fall in three different
 * cells. Large panels pass unchanged, runs of small ones (refined edges) collapse, so the
 * proxy is roughly uniform on screen whatever the mesh grading. Surviving panels that map
 * to the same cell triple with the same winding are drawn once (they would z-fight).
 *
 * Plain functions over typed arrays; one pass over the panels, no allocation per panel.
 */

export interface SurfaceProxy {
  /** Proxy vertex positions, 3 per vertex, in the frame of the input positions. */
  positions: Float32Array;
  /** Proxy vertex indices, 3 per triangle, each wound to face the way its source panel faces. */
  triangles: Uint32Array;
  /** For each proxy triangle, its source: an index into the `panels` list it was built from. */
  source: Uint32Array;
}

const EMPTY = -1;

function tableSize(n: number): number {
  let s = 16;
  while (s < 2 * n) s *= 2;
  return s;
}

/**
 * The vertex-clustering proxy of the panels `panels` (indices into `triangles`, 3 vertex
 * indices per panel, into `positions`, 3 coordinates per vertex) on a grid of cubes of edge
 * `cell` anchored at `corner` (same length unit as the positions).
 */
export function clusterProxy(positions: Float32Array, triangles: Uint32Array, panels: Uint32Array,
  cell: number, corner: ArrayLike<number>): SurfaceProxy {
  const m = panels.length;
  // Cells per axis are capped at 2^17, so a cell's key ix + 2^17 (iy + 2^17 iz) stays an exact double.
  const span = 131072;
  const inv = 1 / cell;
  const size = tableSize(3 * m);
  const mask = size - 1;
  const keys = new Float64Array(size).fill(EMPTY);
  const slotCluster = new Int32Array(size);
  // Vertex → cluster, only for the vertices these panels use (looked up by a second table
  // so that the cost does not depend on the size of the whole model).
  const vKeys = new Int32Array(size).fill(EMPTY);
  const vCluster = new Int32Array(size);
  const sums = new Float64Array(3 * 3 * m);
  const counts = new Uint32Array(3 * m);
  let clusters = 0;
  const corner0 = corner[0], corner1 = corner[1], corner2 = corner[2];

  const clusterOf = (vtx: number): number => {
    let h = Math.imul(vtx, 0x9e3779b1) & mask;
    while (vKeys[h] !== EMPTY) {
      if (vKeys[h] === vtx) return vCluster[h];
      h = (h + 1) & mask;
    }
    const x = positions[3 * vtx], y = positions[3 * vtx + 1], z = positions[3 * vtx + 2];
    const ix = Math.min(span - 1, Math.max(0, Math.floor((x - corner0) * inv)));
    const iy = Math.min(span - 1, Math.max(0, Math.floor((y - corner1) * inv)));
    const iz = Math.min(span - 1, Math.max(0, Math.floor((z - corner2) * inv)));
    const key = ix + span * (iy + span * iz);
    let g = (Math.imul(ix, 73856093) ^ Math.imul(iy, 19349663) ^ Math.imul(iz, 83492791)) & mask;
    while (keys[g] !== EMPTY && keys[g] !== key) g = (g + 1) & mask;
    if (keys[g] === EMPTY) { keys[g] = key; slotCluster[g] = clusters++; }
    const c = slotCluster[g];
    sums[3 * c] += x; sums[3 * c + 1] += y; sums[3 * c + 2] += z;
    counts[c]++;
    vKeys[h] = vtx;
    vCluster[h] = c;
    return c;
  };

  const pc = new Int32Array(3 * m);
  for (let j = 0; j < 3 * m; j++) pc[j] = clusterOf(triangles[3 * panels[(j / 3) | 0] + (j % 3)]);

  const facing = (a: number, b: number, c: number, p: number): number => {
    const wa = 1 / counts[a], wb = 1 / counts[b], wc = 1 / counts[c];
    const ax = sums[3 * a] * wa, ay = sums[3 * a + 1] * wa, az = sums[3 * a + 2] * wa;
    const ux = sums[3 * b] * wb - ax, uy = sums[3 * b + 1] * wb - ay, uz = sums[3 * b + 2] * wb - az;
    const vx = sums[3 * c] * wc - ax, vy = sums[3 * c + 1] * wc - ay, vz = sums[3 * c + 2] * wc - az;
    const i0 = 3 * triangles[3 * p], i1 = 3 * triangles[3 * p + 1], i2 = 3 * triangles[3 * p + 2];
    const sx = positions[i1] - positions[i0], sy = positions[i1 + 1] - positions[i0 + 1], sz = positions[i1 + 2] - positions[i0 + 2];
    const tx = positions[i2] - positions[i0], ty = positions[i2 + 1] - positions[i0 + 1], tz = positions[i2 + 2] - positions[i0 + 2];
    return (uy * vz - uz * vy) * (sy * tz - sz * ty) + (uz * vx - ux * vz) * (sz * tx - sx * tz) + (ux * vy - uy * vx) * (sx * ty - sy * tx);
  };

  // Survivors, deduplicated by their cell triple rotated to start at the smallest (winding kept).
  const tri = new Uint32Array(3 * m);
  const source = new Uint32Array(m);
  let kept = 0;
  const n = clusters;
  const tKeys = n ** 3 < 2 ** 53 ? new Float64Array(size).fill(EMPTY) : null;
  for (let i = 0; i < m; i++) {
    const a = pc[3 * i];
    let b = pc[3 * i + 1], c = pc[3 * i + 2];
    if (a === b || b === c || a === c) continue;
    // Clustering can fold a triangle over (Rossignac & Borrel, section 5); turned to face
    // the way its source panel faces, it fills the fold instead of leaving a culled hole.
    if (facing(a, b, c, panels[i]) < 0) { const t = b; b = c; c = t; }
    if (tKeys) {
      let r0 = a, r1 = b, r2 = c;
      if (b < a && b < c) { r0 = b; r1 = c; r2 = a; } else if (c < a && c < b) { r0 = c; r1 = a; r2 = b; }
      const key = r0 + n * (r1 + n * r2);
      let g = (Math.imul(r0, 73856093) ^ Math.imul(r1, 19349663) ^ Math.imul(r2, 83492791)) & mask;
      while (tKeys[g] !== EMPTY && tKeys[g] !== key) g = (g + 1) & mask;
      if (tKeys[g] === key) continue;
      tKeys[g] = key;
    }
    tri[3 * kept] = a; tri[3 * kept + 1] = b; tri[3 * kept + 2] = c;
    source[kept++] = i;
  }

  // Only the clusters some survivor uses become vertices.
  const remap = new Int32Array(clusters).fill(EMPTY);
  let used = 0;
  for (let j = 0; j < 3 * kept; j++) if (remap[tri[j]] === EMPTY) remap[tri[j]] = used++;
  const out = new Float32Array(3 * used);
  for (let c = 0; c < clusters; c++) {
    const r = remap[c];
    if (r === EMPTY) continue;
    const w = 1 / counts[c];
    out[3 * r] = sums[3 * c] * w; out[3 * r + 1] = sums[3 * c + 1] * w; out[3 * r + 2] = sums[3 * c + 2] * w;
  }
  const triangles2 = new Uint32Array(3 * kept);
  for (let j = 0; j < 3 * kept; j++) triangles2[j] = remap[tri[j]];
  return { positions: out, triangles: triangles2, source: source.slice(0, kept) };
}

export interface ProxyPlan {
  /** Cell edge per conductor (same unit as the positions); 0: no proxy, draw the full mesh. */
  cells: Float64Array;
}

/**
 * Cell sizes for proxies of about `target` triangles in all: one grid for the whole model (so
 * that the proxy's density is uniform on screen), finer for a conductor too small for it (a
 * conductor must not vanish while the view moves), none for a conductor of few panels.
 *
 * `areas` are panel areas and `extents` each conductor's bounding-box diagonal, in the unit
 * of the positions squared and the unit itself.
 */
export function proxyPlan(panelCounts: ArrayLike<number>, conductorAreas: ArrayLike<number>, extents: ArrayLike<number>,
  target: number): ProxyPlan {
  const k = panelCounts.length;
  let area = 0;
  for (let c = 0; c < k; c++) area += conductorAreas[c];
  // A surface of area A crosses about 1.5 A / h² cubes of edge h (Cauchy: a cube's mean
  // cross-section is 1.5 h²) and clustering leaves about two triangles per cube.
  const h = area > 0 ? Math.sqrt((3 * area) / Math.max(1, target)) : 0;
  const cells = new Float64Array(k);
  for (let c = 0; c < k; c++) {
    const share = (target * conductorAreas[c]) / Math.max(area, 1e-300);
    if (panelCounts[c] <= Math.max(2000, 2 * share)) continue;
    cells[c] = Math.min(h, extents[c] / 12);
  }
  return { cells };
}
