/**
 * Dense assembly of the single-layer matrix (Galerkin or collocation), serially by row range
 * or on the worker pool, and entries for arbitrary index sets (the entry generator that
 * low-rank compression calls). Units 1/metre, without the 1/(4πε) factor.
 *
 * The row loops inline the far-field Taylor terms (galerkin.ts farTerm and quadrupoleTerm,
 * collocation.ts collocationFar) so the bulk of the entries costs one square root and a few
 * dozen flops; every other rung calls galerkinEntry / collocationEntry. Both paths give
 * identical numbers, so the dense matrix equals the entries.
 *
 * With an image kernel (images.ts) each entry gains Σ_e s_e P(T_i, g_e(T_j)): the image rows
 * run after the free-space rows with the same ladder (entries of the combined PanelSet), so the
 * free-space path is the same code whether images are present or not.
 */
import type { PanelSet } from "./panels.js";
import { galerkinEntry, RHO_FAR, RHO_QUADRUPOLE } from "./galerkin.js";
import { collocationEntry, COLLOCATION_FAR } from "./collocation.js";
import { sharedFloat64, sharedPool, type WorkerPool } from "../linalg/pool.js";
import { task } from "../linalg/task.js";
import { hasImages, imageSet, type ImageSet, type KernelSpec } from "./images.js";
import { interfaceRowEntry, interfaceRows, interfaceRowsTask, normalFieldAt, type InterfaceTesting } from "./interface.js";
import { unitField } from "./field.js";

export type Discretisation = "galerkin" | "collocation";

/**
 * Fill rows [rowStart, rowEnd) of the n×n row-major matrix `out`. Galerkin computes the
 * entries j ≥ i of those rows and mirrors them into column positions (rows below), so the
 * matrix is complete once every row range has been done; ranges never write the same entry.
 */
export function assembleRows(P: PanelSet, method: Discretisation, rowStart: number, rowEnd: number, out: Float64Array,
  images?: ImageSet): void {
  const n = P.n;
  if (out.length < n * n) throw new Error(`assembleRows: output holds ${out.length} entries, need ${n * n}`);
  if (images !== undefined && images.n !== n) throw new Error(`assembleRows: image set is for ${images.n} panels, the matrix has ${n}`);
  if (method === "collocation") {
    for (let i = rowStart; i < rowEnd; i++) {
      collocationRow(P, i, out);
      if (images !== undefined) for (let e = 0; e < images.count; e++) collocationImageRow(images, e, i, out);
    }
    return;
  }
  if (method !== "galerkin") throw new Error(`assembleRows: unknown discretisation ${String(method)}`);
  for (let i0 = rowStart; i0 < rowEnd; i0 += TILE) {
    const i1 = Math.min(rowEnd, i0 + TILE);
    for (let i = i0; i < i1; i++) {
      galerkinUpperRow(P, i, out);
      if (images !== undefined) for (let e = 0; e < images.count; e++) galerkinImageUpperRow(images, e, i, out);
    }
    // Mirror the tile into the lower triangle column-block by column-block, so both the reads
    // and the writes stay within a few cache lines per step.
    for (let j = i0 + 1; j < n; j++) {
      const iEnd = Math.min(i1, j), rowJ = j * n;
      for (let i = i0, src = i0 * n + j; i < iEnd; i++, src += n) out[rowJ + i] = out[src];
    }
  }
}

/** Rows per mirroring tile. */
const TILE = 32;

/** out[i·n + j] for j ≥ i, the far rung inlined. */
function galerkinUpperRow(P: PanelSet, i: number, out: Float64Array): void {
  const n = P.n;
  const c = P.centroids, M = P.moments2, T = P.moments3, V = P.traces3, rad = P.radii;
  const far2 = RHO_FAR * RHO_FAR, quad2 = RHO_QUADRUPOLE * RHO_QUADRUPOLE;
  const row = i * n;
  out[row + i] = galerkinEntry(P, i, i);
  const cx = c[3 * i], cy = c[3 * i + 1], cz = c[3 * i + 2], ri = rad[i];
  const mxx = M[6 * i], myy = M[6 * i + 1], mzz = M[6 * i + 2], mxy = M[6 * i + 3], mxz = M[6 * i + 4], myz = M[6 * i + 5];
  const ti = 10 * i;
  const t0 = T[ti], t1 = T[ti + 1], t2 = T[ti + 2], t3 = T[ti + 3], t4 = T[ti + 4], t5 = T[ti + 5], t6 = T[ti + 6];
  const t7 = T[ti + 7], t8 = T[ti + 8], t9 = T[ti + 9];
  const vx = V[3 * i], vy = V[3 * i + 1], vz = V[3 * i + 2];
  for (let j = i + 1; j < n; j++) {
    const dx = cx - c[3 * j], dy = cy - c[3 * j + 1], dz = cz - c[3 * j + 2];
    const r2 = dx * dx + dy * dy + dz * dz;
    const rs = ri + rad[j];
    const rs2 = rs * rs;
    if (r2 < far2 * rs2) { out[row + j] = galerkinEntry(P, i, j); continue; }
    // Same expressions, same operation order as galerkin.ts quadrupoleTerm and farTerm.
    const oj = 6 * j;
    const sxx = mxx + M[oj], syy = myy + M[oj + 1], szz = mzz + M[oj + 2];
    const sxy = mxy + M[oj + 3], sxz = mxz + M[oj + 4], syz = myz + M[oj + 5];
    const q = sxx * dx * dx + syy * dy * dy + szz * dz * dz + 2 * (sxy * dx * dy + sxz * dx * dz + syz * dy * dz);
    const inv = 1 / Math.sqrt(r2), inv2 = inv * inv;
    if (r2 >= quad2 * rs2) { out[row + j] = inv * (1 + 0.5 * inv2 * (3 * q * inv2 - (sxx + syy + szz))); continue; }
    const tj = 10 * j;
    const uddd = (t0 - T[tj]) * dx * dx * dx + (t1 - T[tj + 1]) * dy * dy * dy + (t2 - T[tj + 2]) * dz * dz * dz
      + 3 * ((t3 - T[tj + 3]) * dx * dx * dy + (t4 - T[tj + 4]) * dx * dx * dz + (t5 - T[tj + 5]) * dx * dy * dy
        + (t6 - T[tj + 6]) * dy * dy * dz + (t7 - T[tj + 7]) * dx * dz * dz + (t8 - T[tj + 8]) * dy * dz * dz)
      + 6 * (t9 - T[tj + 9]) * dx * dy * dz;
    const vd = (vx - V[3 * j]) * dx + (vy - V[3 * j + 1]) * dy + (vz - V[3 * j + 2]) * dz;
    out[row + j] = inv * (1 + inv2 * (0.5 * (3 * q * inv2 - (sxx + syy + szz)) + inv2 * (-2.5 * uddd * inv2 + 1.5 * vd)));
  }
}

/**
 * out[i·n + j] += s_e P(T_i, g_e(T_j)) for j ≥ i: galerkinUpperRow with the source panels taken
 * from image block e of the combined set Q (the same ladder and far-rung expressions). The
 * image entry is symmetric in i, j (g_e is an isometric involution), so the mirroring of the
 * upper triangle in assembleRows stays valid.
 */
function galerkinImageUpperRow(S: ImageSet, e: number, i: number, out: Float64Array): void {
  const n = S.n, Q = S.panels, off = n * (e + 1), sign = S.signs[e];
  const c = Q.centroids, M = Q.moments2, T = Q.moments3, V = Q.traces3, rad = Q.radii;
  const far2 = RHO_FAR * RHO_FAR, quad2 = RHO_QUADRUPOLE * RHO_QUADRUPOLE;
  const row = i * n;
  const cx = c[3 * i], cy = c[3 * i + 1], cz = c[3 * i + 2], ri = rad[i];
  const mxx = M[6 * i], myy = M[6 * i + 1], mzz = M[6 * i + 2], mxy = M[6 * i + 3], mxz = M[6 * i + 4], myz = M[6 * i + 5];
  const ti = 10 * i;
  const t0 = T[ti], t1 = T[ti + 1], t2 = T[ti + 2], t3 = T[ti + 3], t4 = T[ti + 4], t5 = T[ti + 5], t6 = T[ti + 6];
  const t7 = T[ti + 7], t8 = T[ti + 8], t9 = T[ti + 9];
  const vx = V[3 * i], vy = V[3 * i + 1], vz = V[3 * i + 2];
  for (let jj = i; jj < n; jj++) {
    const j = off + jj;
    const dx = cx - c[3 * j], dy = cy - c[3 * j + 1], dz = cz - c[3 * j + 2];
    const r2 = dx * dx + dy * dy + dz * dz;
    const rs = ri + rad[j];
    const rs2 = rs * rs;
    if (r2 < far2 * rs2) { out[row + jj] += sign * galerkinEntry(Q, i, j); continue; }
    const oj = 6 * j;
    const sxx = mxx + M[oj], syy = myy + M[oj + 1], szz = mzz + M[oj + 2];
    const sxy = mxy + M[oj + 3], sxz = mxz + M[oj + 4], syz = myz + M[oj + 5];
    const q = sxx * dx * dx + syy * dy * dy + szz * dz * dz + 2 * (sxy * dx * dy + sxz * dx * dz + syz * dy * dz);
    const inv = 1 / Math.sqrt(r2), inv2 = inv * inv;
    if (r2 >= quad2 * rs2) { out[row + jj] += sign * (inv * (1 + 0.5 * inv2 * (3 * q * inv2 - (sxx + syy + szz)))); continue; }
    const tj = 10 * j;
    const uddd = (t0 - T[tj]) * dx * dx * dx + (t1 - T[tj + 1]) * dy * dy * dy + (t2 - T[tj + 2]) * dz * dz * dz
      + 3 * ((t3 - T[tj + 3]) * dx * dx * dy + (t4 - T[tj + 4]) * dx * dx * dz + (t5 - T[tj + 5]) * dx * dy * dy
        + (t6 - T[tj + 6]) * dy * dy * dz + (t7 - T[tj + 7]) * dx * dz * dz + (t8 - T[tj + 8]) * dy * dz * dz)
      + 6 * (t9 - T[tj + 9]) * dx * dy * dz;
    const vd = (vx - V[3 * j]) * dx + (vy - V[3 * j + 1]) * dy + (vz - V[3 * j + 2]) * dz;
    out[row + jj] += sign * (inv * (1 + inv2 * (0.5 * (3 * q * inv2 - (sxx + syy + szz)) + inv2 * (-2.5 * uddd * inv2 + 1.5 * vd))));
  }
}

/** out[i·n + j] += s_e C(x_i, g_e(T_j)) for all j (collocation has no symmetry to exploit). */
function collocationImageRow(S: ImageSet, e: number, i: number, out: Float64Array): void {
  const n = S.n, Q = S.panels, off = n * (e + 1), sign = S.signs[e], row = i * n;
  for (let j = 0; j < n; j++) out[row + j] += sign * collocationEntry(Q, i, off + j);
}

/** The image part of entry (i, j): Σ_e s_e times the entry between panel i and image e of panel j. */
export function imageEntry(S: ImageSet, i: number, j: number, method: Discretisation = "galerkin"): number {
  const entry = method === "galerkin" ? galerkinEntry : collocationEntry;
  let s = 0;
  for (let e = 0; e < S.count; e++) s += S.signs[e] * entry(S.panels, i, S.n * (e + 1) + j);
  return s;
}

/**
 * out[i·n + j] for all j, the far rung of collocation.ts (collocationFar) inlined with the
 * same expressions in the same order, so the row equals collocationEntry bit for bit.
 */
function collocationRow(P: PanelSet, i: number, out: Float64Array): void {
  const n = P.n;
  const c = P.centroids, M = P.moments2, T = P.moments3, V = P.traces3, rad = P.radii;
  const far2 = COLLOCATION_FAR * COLLOCATION_FAR;
  const row = i * n;
  const x = c[3 * i], y = c[3 * i + 1], z = c[3 * i + 2];
  for (let j = 0; j < n; j++) {
    const dx = x - c[3 * j], dy = y - c[3 * j + 1], dz = z - c[3 * j + 2];
    const rj = rad[j];
    const r2 = dx * dx + dy * dy + dz * dz;
    if (r2 < far2 * rj * rj) { out[row + j] = collocationEntry(P, i, j); continue; }
    const oj = 6 * j, tj = 10 * j;
    const sxx = M[oj], syy = M[oj + 1], szz = M[oj + 2], sxy = M[oj + 3], sxz = M[oj + 4], syz = M[oj + 5];
    const uddd = -(T[tj] * dx * dx * dx + T[tj + 1] * dy * dy * dy + T[tj + 2] * dz * dz * dz
      + 3 * (T[tj + 3] * dx * dx * dy + T[tj + 4] * dx * dx * dz + T[tj + 5] * dx * dy * dy
        + T[tj + 6] * dy * dy * dz + T[tj + 7] * dx * dz * dz + T[tj + 8] * dy * dz * dz)
      + 6 * T[tj + 9] * dx * dy * dz);
    const vd = -(V[3 * j] * dx + V[3 * j + 1] * dy + V[3 * j + 2] * dz);
    const q = sxx * dx * dx + syy * dy * dy + szz * dz * dz + 2 * (sxy * dx * dy + sxz * dx * dz + syz * dy * dz);
    const inv = 1 / Math.sqrt(r2), inv2 = inv * inv;
    out[row + j] = inv * (1 + inv2 * (0.5 * (3 * q * inv2 - (sxx + syy + szz)) + inv2 * (-2.5 * uddd * inv2 + 1.5 * vd)));
  }
}

/**
 * Row boundaries splitting [0, n) into `parts` ranges of equal work: Galerkin row i costs
 * n − i entries (upper triangle), collocation rows cost the same.
 */
export function rowSplit(n: number, parts: number, method: Discretisation): Uint32Array {
  const b = new Uint32Array(parts + 1);
  b[parts] = n;
  for (let k = 1; k < parts; k++) {
    if (method === "collocation") { b[k] = Math.round((n * k) / parts); continue; }
    // Rows [0, i) hold n·i − i(i−1)/2 entries; solve for the k/parts share of n(n+1)/2.
    const target = (n * (n + 1) / 2) * (k / parts);
    const i = (2 * n + 1 - Math.sqrt((2 * n + 1) ** 2 - 8 * target)) / 2;
    b[k] = Math.min(n, Math.max(b[k - 1], Math.round(i)));
  }
  return b;
}

/** Rows [rowStart, rowEnd) into the shared matrix, in a worker. */
export const assembleRowsTask = task(import.meta.url, { assembleRows });

/** A PanelSet whose arrays are all in shared memory (returned as is when they already are). */
export function sharedPanels(P: PanelSet): PanelSet {
  if (P.vertices.buffer instanceof SharedArrayBuffer) return P;
  const f = (a: Float64Array) => { const s = sharedFloat64(a.length); s.set(a); return s; };
  const corners = new Uint32Array(new SharedArrayBuffer(4 * P.corners.length));
  corners.set(P.corners);
  return {
    n: P.n, vertices: f(P.vertices), corners, centroids: f(P.centroids), normals: f(P.normals), areas: f(P.areas),
    radii: f(P.radii), moments2: f(P.moments2), moments3: f(P.moments3), traces3: f(P.traces3),
  };
}

/**
 * The full n×n matrix (row-major, in shared memory), assembled on every worker of `pool`
 * (default: the process-wide pool) in equal-work row blocks. `out` may pass in a shared
 * n×n buffer to reuse (its first touch costs page faults: about 0.1 s at n = 5120).
 * `kernel` adds mirror images (ground plane, symmetry planes; images.ts); each image roughly
 * doubles the assembly work.
 */
export async function assembleDense(P: PanelSet, method: Discretisation, pool: WorkerPool = sharedPool(),
  out?: Float64Array, kernel?: KernelSpec | ImageSet): Promise<Float64Array> {
  const n = P.n;
  if (out === undefined) out = sharedFloat64(n * n);
  else if (!(out.buffer instanceof SharedArrayBuffer) || out.length < n * n) {
    throw new Error(`assembleDense: out must be a shared buffer of at least ${n * n} entries`);
  }
  const S = sharedPanels(P);
  const images = preparedImages(S, kernel, true);
  const parts = Math.max(1, Math.min(pool.size, n));
  const b = rowSplit(n, parts, method);
  const args: Parameters<typeof assembleRows>[] = [];
  for (let k = 0; k < parts; k++) args.push(images ? [S, method, b[k], b[k + 1], out, images] : [S, method, b[k], b[k + 1], out]);
  await pool.map(assembleRowsTask, args);
  return out;
}

/**
 * Entries for arbitrary index sets: out[a·cols.length + b] = M[rows[a], cols[b]] (row-major
 * block), identical to the dense matrix's entries.
 */
export function assembleBlock(P: PanelSet, rows: Uint32Array, cols: Uint32Array, out: Float64Array,
  method: Discretisation = "galerkin", images?: ImageSet): void {
  const nc = cols.length;
  if (out.length < rows.length * nc) throw new Error(`assembleBlock: output holds ${out.length} entries, need ${rows.length * nc}`);
  const entry = method === "galerkin" ? galerkinEntry : collocationEntry;
  for (let a = 0; a < rows.length; a++) {
    const i = rows[a];
    for (let b = 0; b < nc; b++) out[a * nc + b] = entry(P, i, cols[b]);
  }
  if (images === undefined) return;
  if (images.n !== P.n) throw new Error(`assembleBlock: image set is for ${images.n} panels, the panel set has ${P.n}`);
  // Galerkin image entries are evaluated with the lower index outer, as the dense rows do.
  const Q = images.panels, n = images.n;
  for (let a = 0; a < rows.length; a++) {
    for (let b = 0; b < nc; b++) {
      let i = rows[a], j = cols[b];
      if (method === "galerkin" && i > j) { const t = i; i = j; j = t; }
      // Added image by image, in the order of the dense rows, so block and matrix agree.
      for (let e = 0; e < images.count; e++) out[a * nc + b] += images.signs[e] * entry(Q, i, n * (e + 1) + j);
    }
  }
}

/** An ImageSet for P from a spec (built; shared for workers if asked) or as given; undefined for none. */
export function preparedImages(P: PanelSet, kernel: KernelSpec | ImageSet | undefined, shared: boolean): ImageSet | undefined {
  if (kernel === undefined) return undefined;
  if ("panels" in kernel) {
    if (kernel.n !== P.n) throw new Error(`image set is for ${kernel.n} panels, the panel set has ${P.n}`);
    if (shared && !(kernel.panels.vertices.buffer instanceof SharedArrayBuffer)) {
      return { ...kernel, panels: sharedPanels(kernel.panels), signs: kernel.signs };
    }
    return kernel;
  }
  return hasImages(kernel) ? imageSet(P, kernel, { shared }) : undefined;
}

/**
 * The N×N matrix of the equivalent-charge formulation with dielectric interfaces (bem/interface.ts):
 * panels [0, nConductor) are conductors and keep the rows of `method` (over all N columns, so
 * they include the potential of the interface charges); panels [nConductor, N) are interface
 * panels whose rows are the normal-displacement rows with λ = lambda[i − nConductor], tested by
 * `testing`. The conductor rows come from assembleDense (whose interface rows are then
 * overwritten), the interface rows from interface.ts on every worker of `pool`.
 */
export async function assembleWithInterfaces(P: PanelSet, nConductor: number, lambda: Float64Array, method: Discretisation,
  testing: InterfaceTesting, pool: WorkerPool = sharedPool(), kernel?: KernelSpec | ImageSet): Promise<Float64Array> {
  const N = P.n, ni = N - nConductor;
  if (lambda.length !== ni) throw new Error(`assembleWithInterfaces: ${lambda.length} contrasts for ${ni} interface panels`);
  const S = sharedPanels(P);
  const images = preparedImages(S, kernel, true);
  const out = await assembleDense(S, method, pool, undefined, images);
  if (ni === 0) return out;
  const rows = new Uint32Array(new SharedArrayBuffer(4 * ni));
  for (let a = 0; a < ni; a++) rows[a] = nConductor + a;
  const lam = sharedFloat64(ni);
  lam.set(lambda);
  const parts = Math.max(1, Math.min(pool.size, ni));
  const args: Parameters<typeof interfaceRows>[] = [];
  for (let p = 0; p < parts; p++) {
    const a0 = Math.round((ni * p) / parts), a1 = Math.round((ni * (p + 1)) / parts);
    args.push(images ? [S, rows, lam, a0, a1, out, testing, images] : [S, rows, lam, a0, a1, out, testing]);
  }
  await pool.map(interfaceRowsTask, args);
  return out;
}

/**
 * Entries of the matrix of assembleWithInterfaces for arbitrary index sets (the entry generator
 * of the compressed solver with dielectric interfaces): out[a·cols.length + b] = M[rows[a], cols[b]].
 * Rows below nConductor are the conductor rows of `method` (assembleBlock, images included),
 * the others the interface rows of bem/interface.ts with λ = lambda[row − nConductor]; the
 * entries equal the dense matrix's.
 */
export function assembleInterfaceBlock(P: PanelSet, nConductor: number, lambda: Float64Array, rows: Uint32Array, cols: Uint32Array,
  out: Float64Array, method: Discretisation, testing: InterfaceTesting, images?: ImageSet): void {
  const nc = cols.length;
  if (out.length < rows.length * nc) throw new Error(`assembleInterfaceBlock: output holds ${out.length} entries, need ${rows.length * nc}`);
  let a = 0;
  while (a < rows.length) {
    // Runs of conductor rows go through assembleBlock in one call.
    if (rows[a] < nConductor) {
      let e = a + 1;
      while (e < rows.length && rows[e] < nConductor) e++;
      assembleBlock(P, rows.subarray(a, e), cols, out.subarray(a * nc, e * nc), method, images);
      a = e;
      continue;
    }
    const i = rows[a], lam = lambda[i - nConductor], o = a * nc;
    for (let b = 0; b < nc; b++) out[o + b] = interfaceRowEntry(P, i, cols[b], lam, testing, images);
    a++;
  }
}

/**
 * The principal-value normal field at flagged panels (rows i with flag[i] = 1; other rows 0):
 * out[a·cols.length + b] = K(rows[a], cols[b]) = −∇I_j(c_i)·n̂_i / A_j by collocation at the
 * centroid (bem/interface.ts normalFieldAt; 0 for j = i), plus the images' Σ_e s_e K(i, image e
 * of j). Times the scaled charges x it gives E_pv·n̂ in the units of x: the entry generator of
 * the open-sheet fields (extract/dielectric-charges.ts freeCharges) for the compressed solver.
 */
export function normalFieldBlock(P: PanelSet, flag: Uint8Array, rows: Uint32Array, cols: Uint32Array, out: Float64Array,
  images?: ImageSet): void {
  const nc = cols.length, c = P.centroids, nm = P.normals;
  if (out.length < rows.length * nc) throw new Error(`normalFieldBlock: output holds ${out.length} entries, need ${rows.length * nc}`);
  for (let a = 0; a < rows.length; a++) {
    const i = rows[a], o = a * nc;
    if (!flag[i]) { out.fill(0, o, o + nc); continue; }
    const px = c[3 * i], py = c[3 * i + 1], pz = c[3 * i + 2], nx = nm[3 * i], ny = nm[3 * i + 1], nz = nm[3 * i + 2];
    for (let b = 0; b < nc; b++) {
      const j = cols[b];
      let x = j === i ? 0 : normalFieldAt(P, j, px, py, pz, nx, ny, nz);
      if (images !== undefined) {
        const Q = images.panels, n = images.n;
        for (let e = 0; e < images.count; e++) x += images.signs[e] * normalFieldAt(Q, n * (e + 1) + j, px, py, pz, nx, ny, nz);
      }
      out[o + b] = x;
    }
  }
}

/**
 * The field of unit panel charges at panel centroids, three matrices at once (the entry
 * generator of a vector kernel, linalg/apply-once.ts): out[(comp·m + a)·nc + b] = component
 * comp of −∇I_j(c_i)/A_j (1/m², before 1/(4πε)), i = rows[a], j = cols[b], m = rows.length
 * (field.ts unitField; the own panel's normal part is its principal value). With `images`,
 * the mirror panels' fields are added with their signs.
 */
export function fieldBlock(P: PanelSet, rows: Uint32Array, cols: Uint32Array, out: Float64Array, images?: ImageSet): void {
  const m = rows.length, nc = cols.length, c = P.centroids, e = fieldScratch;
  if (out.length < 3 * m * nc) throw new Error(`fieldBlock: output holds ${out.length} entries, need ${3 * m * nc}`);
  for (let a = 0; a < m; a++) {
    const i = rows[a], px = c[3 * i], py = c[3 * i + 1], pz = c[3 * i + 2];
    for (let b = 0; b < nc; b++) {
      const j = cols[b];
      unitField(P, j, px, py, pz, e, 0);
      if (images !== undefined) {
        const Q = images.panels, n = images.n;
        for (let k = 0; k < images.count; k++) {
          unitField(Q, n * (k + 1) + j, px, py, pz, e, 3);
          const s = images.signs[k];
          e[0] += s * e[3]; e[1] += s * e[4]; e[2] += s * e[5];
        }
      }
      out[a * nc + b] = e[0];
      out[(m + a) * nc + b] = e[1];
      out[(2 * m + a) * nc + b] = e[2];
    }
  }
}
const fieldScratch = new Float64Array(6);

/** Entry generators of this file for the H-matrix code in the workers (linalg/entry-generator.ts). */
export const assembleBlockTask = task(import.meta.url, { assembleBlock });
export const assembleInterfaceBlockTask = task(import.meta.url, { assembleInterfaceBlock });
export const normalFieldBlockTask = task(import.meta.url, { normalFieldBlock });
export const fieldBlockTask = task(import.meta.url, { fieldBlock });
