import { describe, it, expect, afterAll } from "vitest";
import { buildHMatrix } from "../../src/linalg/hmatrix.js";
import { WorkerPool, sharedFloat64 } from "../../src/linalg/pool.js";
import { clusterCover } from "../../src/extract/preconditioner.js";
import { rng } from "./random.js";
import { inverseMultiquadricTask } from "./kernel-matrix.js";

// A generic kernel: linalg tests may not import bem. The generator lives in a compiled
// module the workers can import, so the test builds it as a data: URL module.

function spherePoints(n: number, seed: number): Float64Array {
  // z and φ uniform give an area-uniform sphere (Archimedes' hat-box theorem).
  const r = rng(seed), p = new Float64Array(new SharedArrayBuffer(24 * n));
  for (let i = 0; i < n; i++) {
    const z = 2 * r() - 1, phi = 2 * Math.PI * r(), s = Math.sqrt(1 - z * z);
    p[3 * i] = s * Math.cos(phi) + (i % 2) * 2.5; p[3 * i + 1] = s * Math.sin(phi); p[3 * i + 2] = z;
  }
  return p;
}

const DELTA = 0.02;
function entry(pts: Float64Array, i: number, j: number): number {
  const dx = pts[3 * i] - pts[3 * j], dy = pts[3 * i + 1] - pts[3 * j + 1], dz = pts[3 * i + 2] - pts[3 * j + 2];
  return 1 / Math.sqrt(dx * dx + dy * dy + dz * dz + DELTA * DELTA);
}

const pool = new WorkerPool(2);
afterAll(async () => { await pool.close(); });

describe("hierarchical matrix of an inverse-multiquadric kernel (SPD: Wendland 2005, Thm 8.15)", () => {
  const n = 2400, k = 3;
  const pts = spherePoints(n, 4);
  const X = sharedFloat64(n * k), r = rng(8);
  for (let i = 0; i < X.length; i++) X[i] = r() - 0.5;
  const exact = new Float64Array(n * k);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
    const a = entry(pts, i, j);
    for (let c = 0; c < k; c++) exact[i * k + c] += a * X[j * k + c];
  }
  const relErr = (Y: Float64Array): number => {
    let e = 0, s = 0;
    for (let i = 0; i < Y.length; i++) { e += (Y[i] - exact[i]) ** 2; s += exact[i] ** 2; }
    return Math.sqrt(e / s);
  };

  for (const symmetric of [false, true]) {
    it(`product with ${k} right-hand sides on 2 workers matches the dense product to the tolerance (${symmetric ? "symmetric storage" : "full storage"})`, async () => {
      const H = await buildHMatrix(pts, { source: { task: inverseMultiquadricTask, before: [pts, DELTA] } },
        { tolerance: 1e-6, symmetric, pool, leafSize: 32 });
      const Y = sharedFloat64(n * k);
      await H.apply(X, Y, k);
      expect(relErr(Y)).toBeLessThan(1e-6);
      expect(H.stats.compressionRatio).toBeLessThan(0.6);
      expect(H.stats.farBlocks).toBeGreaterThan(0);
      // The same matrix on this thread gives the same product up to summation order.
      const S = await buildHMatrix(pts, { generator: (rows, cols, out) => {
        for (let a = 0; a < rows.length; a++) for (let b = 0; b < cols.length; b++) out[a * cols.length + b] = entry(pts, rows[a], cols[b]);
      } }, { tolerance: 1e-6, symmetric, leafSize: 32 });
      const Z = sharedFloat64(n * k);
      await S.apply(X, Z, k);
      let d = 0, s = 0;
      for (let i = 0; i < Z.length; i++) { d = Math.max(d, Math.abs(Z[i] - Y[i])); s = Math.max(s, Math.abs(Y[i])); }
      expect(d / s).toBeLessThan(1e-12);
      await H.release();
    });
  }

  for (const symmetric of [false, true]) {
    it(`with 64 right-hand sides the WebAssembly SIMD block products equal the JavaScript ones to 1e-14 (${symmetric ? "symmetric" : "full"} storage)`, async () => {
      const K = 64, Xk = sharedFloat64(n * K), q = rng(21);
      for (let i = 0; i < Xk.length; i++) Xk[i] = q() - 0.5;
      // Loose tolerance: ranks from 1 to well past SIMD_MIN_RANK, dense blocks of all leaf sizes.
      const H = await buildHMatrix(pts, { source: { task: inverseMultiquadricTask, before: [pts, DELTA] } },
        { tolerance: 1e-4, symmetric, pool, leafSize: 24 });
      expect(H.stats.maxRank).toBeGreaterThan(4);
      const A = sharedFloat64(n * K), B = sharedFloat64(n * K);
      await H.apply(Xk, A, K, "auto");
      await H.apply(Xk, B, K, "js");
      let d = 0, s = 0;
      for (let i = 0; i < A.length; i++) { d = Math.max(d, Math.abs(A[i] - B[i])); s = Math.max(s, Math.abs(B[i])); }
      expect(s).toBeGreaterThan(0);
      expect(d / s).toBeLessThan(1e-14);
      // And the SIMD product is still the matrix: column 0 against the 3-column exact product.
      const Y3 = sharedFloat64(n * k);
      await H.apply(X, Y3, k);
      for (let i = 0; i < n; i++) for (let c = 0; c < k; c++) Xk[i * K + c] = X[i * k + c];
      await H.apply(Xk, A, K, "auto");
      let e = 0, t = 0;
      for (let i = 0; i < n; i++) for (let c = 0; c < k; c++) { e += (A[i * K + c] - exact[i * k + c]) ** 2; t += exact[i * k + c] ** 2; }
      expect(Math.sqrt(e / t)).toBeLessThan(1e-4);
      await H.release();
    });
  }

  it("a looser tolerance stores fewer numbers and stays within it", async () => {
    const tight = await buildHMatrix(pts, { source: { task: inverseMultiquadricTask, before: [pts, DELTA] } }, { tolerance: 1e-8, symmetric: true, pool });
    const loose = await buildHMatrix(pts, { source: { task: inverseMultiquadricTask, before: [pts, DELTA] } }, { tolerance: 1e-3, symmetric: true, pool });
    expect(loose.stats.storedEntries).toBeLessThan(tight.stats.storedEntries);
    expect(loose.stats.meanRank).toBeLessThan(tight.stats.meanRank);
    const Y = sharedFloat64(n * k);
    await loose.apply(X, Y, k);
    expect(relErr(Y)).toBeLessThan(1e-3);
    await tight.apply(X, Y, k);
    expect(relErr(Y)).toBeLessThan(1e-8);
    await tight.release(); await loose.release();
  });

  it("diagonal blocks over a cluster cover equal the kernel's entries", async () => {
    const H = await buildHMatrix(pts, { source: { task: inverseMultiquadricTask, before: [pts, DELTA] } }, { tolerance: 1e-9, symmetric: true, pool });
    const nodes = clusterCover(H.tree, 200);
    let covered = 0;
    for (const v of nodes) covered += H.tree.end[v] - H.tree.start[v];
    expect(covered).toBe(n);
    const D = H.diagonalBlocks(nodes);
    let worst = 0;
    nodes.forEach((v, a) => {
      const s = H.tree.start[v], w = H.tree.end[v] - s;
      for (let i = 0; i < w; i++) for (let j = 0; j < w; j++) {
        const x = entry(pts, H.tree.order[s + i], H.tree.order[s + j]);
        worst = Math.max(worst, Math.abs(D[a][i * w + j] - x) / x);
      }
    });
    expect(worst).toBeLessThan(1e-6);
    await H.release();
  });

  for (const symmetric of [true, false]) {
    it(`coarse matrix PᵀHP over aggregates equals the dense sums of the kernel (${symmetric ? "symmetric" : "full"} storage)`, async () => {
      const H = await buildHMatrix(pts, { source: { task: inverseMultiquadricTask, before: [pts, DELTA] } }, { tolerance: 1e-8, symmetric, pool });
      // Aggregates larger than some admissible blocks and smaller than others.
      const nodes = clusterCover(H.tree, 150);
      const nc = nodes.length, agg = new Int32Array(n);
      nodes.forEach((v, a) => { for (let p = H.tree.start[v]; p < H.tree.end[v]; p++) agg[H.tree.order[p]] = a; });
      const want = new Float64Array(nc * nc);
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) want[agg[i] * nc + agg[j]] += entry(pts, i, j);
      const got = H.coarseMatrix(nodes);
      let worst = 0, top = 0;
      for (let i = 0; i < nc * nc; i++) { worst = Math.max(worst, Math.abs(got[i] - want[i])); top = Math.max(top, Math.abs(want[i])); }
      expect(nc).toBeGreaterThan(8);
      expect(worst / top).toBeLessThan(1e-7);
      await H.release();
    });
  }
});
