import { describe, it, expect } from "vitest";
import { aca, compressBlock, gramU, gramV } from "../../src/linalg/aca.js";
import { gramSchmidtQR } from "../../src/linalg/qr.js";
import { jacobiSVD } from "../../src/linalg/svd.js";
import { recompress, recompressFromGram } from "../../src/linalg/recompression.js";
import { clusterPoints } from "../../src/linalg/cluster.js";
import { blockTree } from "../../src/linalg/block-tree.js";
import { rng } from "./random.js";

/** Points on the unit sphere (Marsaglia's normal-deviate-free rejection is not needed: z, φ uniform
 *  gives an area-uniform sphere, Archimedes' hat-box theorem). A surface-like point set, as BEM gives. */
function spherePoints(n: number, seed: number): Float64Array {
  const r = rng(seed), p = new Float64Array(3 * n);
  for (let i = 0; i < n; i++) {
    const z = 2 * r() - 1, phi = 2 * Math.PI * r(), s = Math.sqrt(1 - z * z);
    p[3 * i] = s * Math.cos(phi); p[3 * i + 1] = s * Math.sin(phi); p[3 * i + 2] = z;
  }
  return p;
}

/** 1/r kernel regularised at coincidence (self entries only): the Laplace single-layer shape. */
function kernel(pts: Float64Array, i: number, j: number): number {
  const dx = pts[3 * i] - pts[3 * j], dy = pts[3 * i + 1] - pts[3 * j + 1], dz = pts[3 * i + 2] - pts[3 * j + 2];
  return 1 / Math.sqrt(dx * dx + dy * dy + dz * dz + 1e-4);
}

function relFrob(approx: (i: number, j: number) => number, exact: (i: number, j: number) => number, m: number, n: number): number {
  let e = 0, s = 0;
  for (let i = 0; i < m; i++) for (let j = 0; j < n; j++) { const x = exact(i, j); e += (approx(i, j) - x) ** 2; s += x * x; }
  return Math.sqrt(e / s);
}

describe("small dense factorisations behind recompression", () => {
  it("Gram–Schmidt QR reproduces the matrix with orthonormal Q", () => {
    const r = rng(3), m = 40, k = 7, a = new Float64Array(m * k);
    for (let i = 0; i < a.length; i++) a[i] = r() - 0.5;
    const orig = a.slice(), R = new Float64Array(k * k);
    gramSchmidtQR(a, m, k, R);
    for (let p = 0; p < k; p++) for (let q = 0; q < k; q++) {
      let d = 0;
      for (let i = 0; i < m; i++) d += a[p * m + i] * a[q * m + i];
      expect(Math.abs(d - (p === q ? 1 : 0))).toBeLessThan(1e-13);
    }
    for (let q = 0; q < k; q++) for (let i = 0; i < m; i++) {
      let x = 0;
      for (let p = 0; p <= q; p++) x += a[p * m + i] * R[p * k + q];
      expect(Math.abs(x - orig[q * m + i])).toBeLessThan(1e-13);
    }
  });

  it("one-sided Jacobi SVD: G = (σ w)·Zᵀ with Z orthogonal and the known singular values of a diagonal-times-rotation", () => {
    // G = Q1·diag(5, 3, 1, 0.1)·Q2ᵀ with Householder reflections Q1, Q2: singular values are exactly those.
    const r = 4, sv = [5, 3, 1, 0.1];
    const house = (w: number[]) => { const nn = w.reduce((s, x) => s + x * x, 0); return (i: number, j: number) => (i === j ? 1 : 0) - 2 * w[i] * w[j] / nn; };
    const Q1 = house([1, 2, -1, 0.5]), Q2 = house([-0.3, 1, 1, 2]);
    const G = new Float64Array(r * r);
    for (let i = 0; i < r; i++) for (let j = 0; j < r; j++) { let s = 0; for (let q = 0; q < r; q++) s += Q1(i, q) * sv[q] * Q2(j, q); G[i * r + j] = s; }
    const G0 = G.slice(), Z = new Float64Array(r * r), s = new Float64Array(r);
    jacobiSVD(G, r, Z, s);
    expect(Array.from(s).sort((a, b) => b - a).map((x) => +x.toFixed(12))).toEqual(sv);
    for (let i = 0; i < r; i++) for (let j = 0; j < r; j++) {
      let x = 0; for (let q = 0; q < r; q++) x += G[i * r + q] * Z[j * r + q];
      expect(Math.abs(x - G0[i * r + j])).toBeLessThan(1e-13);
    }
  });
});

describe("recompression from the Gram matrices ACA records", () => {
  it("ACA's Gram matrices equal UᵀU and VᵀV, and the Gram route truncates like the QR route", () => {
    const pts = spherePoints(600, 21);
    const rows = Uint32Array.from({ length: 80 }, (_, i) => i), cols = Uint32Array.from({ length: 90 }, (_, j) => 300 + j);
    // Two separated patches: shift the columns' points away.
    const P = pts.slice();
    for (const j of cols) P[3 * j] += 4;
    const m = rows.length, n = cols.length, max = 60;
    const u = new Float64Array(max * m), v = new Float64Array(max * n);
    const r = aca(m, n, (i, o) => { for (let j = 0; j < n; j++) o[j] = kernel(P, rows[i], cols[j]); },
      (j, o) => { for (let i = 0; i < m; i++) o[i] = kernel(P, rows[i], cols[j]); }, 1e-9, max, u, v);
    expect(r).toBeGreaterThan(4);
    for (let q = 0; q < r; q++) for (let p = 0; p <= q; p++) {
      let du = 0, dv = 0;
      for (let i = 0; i < m; i++) du += u[p * m + i] * u[q * m + i];
      for (let j = 0; j < n; j++) dv += v[p * n + j] * v[q * n + j];
      expect(gramU[(q * (q + 1)) / 2 + p]).toBeCloseTo(du, 12);
      expect(gramV[(q * (q + 1)) / 2 + p]).toBeCloseTo(dv, 12);
    }
    const GU = gramU.slice(), GV = gramV.slice();
    for (const tol of [1e-3, 1e-5, 1e-7]) {
      const a = new Float64Array(r * (m + n)), b = new Float64Array(r * (m + n));
      const kg = recompressFromGram(u, v, m, n, r, GU, GV, tol, a, 0);
      const kq = recompress(u.slice(0, r * m), v.slice(0, r * n), m, n, r, tol, b, 0, b, -1);
      expect(Math.abs(kg - kq)).toBeLessThanOrEqual(1);
      const err = relFrob((i, j) => { let x = 0; for (let q = 0; q < kg; q++) x += a[q * m + i] * a[m * kg + q * n + j]; return x; },
        (i, j) => kernel(P, rows[i], cols[j]), m, n);
      expect(err).toBeLessThan(1.2 * tol + 1e-9);
    }
  });
});

describe("ACA+ with recompression on admissible blocks", () => {
  for (const tol of [1e-3, 1e-5, 1e-7]) {
    it(`every admissible block of a 1/r matrix on 3000 sphere points is within ${tol} (Frobenius, relative)`, () => {
      const pts = spherePoints(3000, 11);
      const tree = clusterPoints(pts, 32);
      const bt = blockTree(tree, { eta: 2 });
      expect(bt.far.length).toBeGreaterThan(100);
      let worst = 0, ranks = 0, blocks = 0;
      for (let b = 0; b < bt.far.length; b += 2) {
        const s = bt.far[b], t = bt.far[b + 1];
        const rows = tree.order.subarray(tree.start[s], tree.end[s]), cols = tree.order.subarray(tree.start[t], tree.end[t]);
        const m = rows.length, n = cols.length;
        const maxRank = Math.min(m, n);
        const u = new Float64Array(maxRank * m), v = new Float64Array(maxRank * n);
        const store = new Float64Array(maxRank * (m + n));
        const kept = compressBlock(m, n,
          (i, out) => { for (let j = 0; j < n; j++) out[j] = kernel(pts, rows[i], cols[j]); },
          (j, out) => { for (let i = 0; i < m; i++) out[i] = kernel(pts, rows[i], cols[j]); },
          tol, maxRank, u, v, store, 0);
        expect(kept).toBeGreaterThan(0);
        const err = relFrob((i, j) => { let x = 0; for (let q = 0; q < kept; q++) x += store[q * m + i] * store[m * kept + q * n + j]; return x; },
          (i, j) => kernel(pts, rows[i], cols[j]), m, n);
        worst = Math.max(worst, err); ranks += kept; blocks++;
      }
      expect(worst).toBeLessThanOrEqual(tol);
      // Low rank indeed: far fewer terms than the leaf size on average.
      expect(ranks / blocks).toBeLessThan(tol >= 1e-5 ? 16 : 30);
    });
  }

  it("finds a block that plain partial pivoting would miss: entries only in rows the first pivot row does not see", () => {
    // M = a·bᵀ + c·dᵀ with a vanishing on rows 0..9 and c vanishing elsewhere (rank 2).
    const m = 30, n = 25, r = rng(5);
    const a = Array.from({ length: m }, (_, i) => (i < 10 ? 0 : r() + 0.5)), b = Array.from({ length: n }, () => r() + 0.5);
    const c = Array.from({ length: m }, (_, i) => (i < 10 ? r() + 0.5 : 0)), d = Array.from({ length: n }, () => r() - 0.5);
    const M = (i: number, j: number) => a[i] * b[j] + 1e-3 * c[i] * d[j];
    const u = new Float64Array(m * 12), v = new Float64Array(n * 12);
    const rank = aca(m, n, (i, out) => { for (let j = 0; j < n; j++) out[j] = M(i, j); },
      (j, out) => { for (let i = 0; i < m; i++) out[i] = M(i, j); }, 1e-8, 12, u, v);
    expect(rank).toBeGreaterThanOrEqual(2);
    const err = relFrob((i, j) => { let x = 0; for (let q = 0; q < rank; q++) x += u[q * m + i] * v[q * n + j]; return x; }, M, m, n);
    expect(err).toBeLessThan(1e-8);
  });

  it("returns rank 0 for a zero block and −1 when the rank budget is too small", () => {
    const u = new Float64Array(100), v = new Float64Array(100);
    expect(aca(10, 10, (_i, o) => o.fill(0, 0, 10), (_j, o) => o.fill(0, 0, 10), 1e-6, 5, u, v)).toBe(0);
    const r = rng(9), R = Float64Array.from({ length: 100 }, () => r() - 0.5);
    expect(aca(10, 10, (i, o) => { for (let j = 0; j < 10; j++) o[j] = R[i * 10 + j]; },
      (j, o) => { for (let i = 0; i < 10; i++) o[i] = R[i * 10 + j]; }, 1e-10, 5, u, v)).toBe(-1);
  });
});
