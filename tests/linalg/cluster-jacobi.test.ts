import { describe, it, expect, afterAll } from "vitest";
import { execFileSync } from "node:child_process";
import { blockJacobiFromBlocks, parallelBlockJacobi, BLOCK_INVERSE, BLOCK_CHOLESKY, BLOCK_LU } from "../../src/linalg/cluster-jacobi.js";
import { buildHMatrix } from "../../src/linalg/hmatrix.js";
import { pcg } from "../../src/linalg/cg.js";
import { WorkerPool, sharedFloat64 } from "../../src/linalg/pool.js";
import { clusterCover } from "../../src/extract/preconditioner.js";
import { randomSpd, randomGeneral, rng, relDiff } from "./random.js";
import { inverseMultiquadricTask } from "./kernel-matrix.js";

const pool = new WorkerPool(2);
afterAll(async () => { await pool.close(); });

// Unequal blocks over a scattered order, the last 25 unknowns in no block (they pass through).
const n = 900, sizes = [256, 40, 180, 1, 33, 300, 65];
const perm = Array.from({ length: n }, (_, i) => (i * 7) % n);
const sets: Uint32Array[] = [];
for (let b = 0, at = 0; b < sizes.length; at += sizes[b], b++) sets.push(Uint32Array.from(perm.slice(at, at + sizes[b])));

function randomR(k: number, seed: number): Float64Array {
  const r = rng(seed), R = sharedFloat64(n * k);
  for (let i = 0; i < R.length; i++) R[i] = r() - 0.5;
  return R;
}

describe("block-Jacobi with explicit block inverses", () => {
  for (const lu of [false, true]) {
    it(`applies as the forward and back substitution to 1e-12 relative, k = 1, 2, 8, 36, 64 (${lu ? "LU" : "Cholesky"} blocks)`, async () => {
      const blocks = () => sets.map((I, b) => (lu ? randomGeneral(I.length, 3 * b + 1) : randomSpd(I.length, 3 * b + 1)));
      const subst = await parallelBlockJacobi(blocks(), sets, n, pool, { lu, inverse: false });
      const inv = await parallelBlockJacobi(blocks(), sets, n, pool, { lu });
      const serial = blockJacobiFromBlocks(blocks(), sets, n, { lu });
      try {
        expect([...subst.kind]).toEqual(sets.map(() => (lu ? BLOCK_LU : BLOCK_CHOLESKY)));
        expect([...inv.kind]).toEqual(sets.map(() => BLOCK_INVERSE));
        for (const k of [1, 2, 8, 36, 64]) {
          const R = randomR(k, k), Z0 = sharedFloat64(n * k), Z1 = sharedFloat64(n * k), Z2 = new Float64Array(n * k);
          await subst.apply(R, Z0, k);
          await inv.apply(R, Z1, k);
          serial(R, Z2, k);
          expect(relDiff(Z0, Z2)).toBe(0);
          expect(relDiff(Z1, Z0)).toBeLessThan(1e-12);
          expect(relDiff(Z1, Z0)).toBeGreaterThan(0);
          // Free unknowns pass through.
          for (let c = 0; c < k; c++) expect(Z1[perm[n - 1] * k + c]).toBe(R[perm[n - 1] * k + c]);
        }
      } finally { await subst.release(); await inv.release(); }
    });
  }

  it("without WebAssembly SIMD the workers keep the factors and apply by substitution", () => {
    // A fresh process on the compiled modules (SIMD availability is decided once per thread).
    const dist = new URL("../../dist/src/linalg/", import.meta.url).href;
    const script = `(async () => {
      const { parallelBlockJacobi, blockJacobiFromBlocks } = await import("${dist}cluster-jacobi.js");
      const { WorkerPool, sharedFloat64 } = await import("${dist}pool.js");
      const m = 40, n = 2 * m, k = 3;
      const block = () => { const D = new Float64Array(m * m); for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) D[i * m + j] = 0.5 ** Math.abs(i - j) + (i === j ? 1 : 0); return D; };
      const sets = [Uint32Array.from({ length: m }, (_, i) => 2 * i), Uint32Array.from({ length: m }, (_, i) => 2 * i + 1)];
      const pool = new WorkerPool(2);
      const J = await parallelBlockJacobi([block(), block()], sets, n, pool);
      const R = sharedFloat64(n * k), Z = sharedFloat64(n * k), Zs = new Float64Array(n * k);
      for (let i = 0; i < R.length; i++) R[i] = Math.sin(i);
      await J.apply(R, Z, k);
      blockJacobiFromBlocks([block(), block()], sets, n)(R, Zs, k);
      let d = 0; for (let i = 0; i < Z.length; i++) d = Math.max(d, Math.abs(Z[i] - Zs[i]));
      await J.release(); await pool.close();
      console.log(JSON.stringify({ kind: [...J.kind], d }));
    })();`;
    const out = execFileSync(process.execPath, ["-e", script], { env: { ...process.env, SIGMESH_NO_WASM_SIMD: "1" }, encoding: "utf8" });
    const r = JSON.parse(out.trim().split("\n").pop()!);
    expect(r.kind).toEqual([BLOCK_CHOLESKY, BLOCK_CHOLESKY]);
    expect(r.d).toBe(0);
  });

  it("an indefinite block in the Cholesky path falls back to LU and is inverted too", async () => {
    const blocks = () => sets.map((I, b) => {
      const m = I.length, D = randomSpd(m, b + 50);
      if (b === 2) for (let a = 0; a < m; a++) D[a * m + a] -= 3;
      return D;
    });
    const inv = await parallelBlockJacobi(blocks(), sets, n, pool);
    const serial = blockJacobiFromBlocks(blocks(), sets, n);
    try {
      expect(inv.kind[2]).toBe(BLOCK_INVERSE);
      const k = 5, R = randomR(k, 9), Z1 = sharedFloat64(n * k), Z2 = new Float64Array(n * k);
      await inv.apply(R, Z1, k);
      serial(R, Z2, k);
      expect(relDiff(Z1, Z2)).toBeLessThan(1e-12);
    } finally { await inv.release(); }
  });
});

// An SPD hierarchical matrix whose diagonal blocks are the preconditioner's: the inverse
// multiquadric kernel 1/√(r² + δ²) on a point cloud (positive definite: Wendland, Scattered
// Data Approximation, 2005, Thm 8.15). Linalg tests may not import bem, so the generator is a
// data: URL module the workers import.

describe("block-Jacobi inverses on H-matrix diagonal blocks", () => {
  it("same application to 1e-12 and the same PCG iterations as the substitution, 2 cluster sizes", async () => {
    const N = 2000, r = rng(21), pts = new Float64Array(new SharedArrayBuffer(24 * N));
    // Points in a thin slab (a pad-like layout): cluster blocks are dense and well separated.
    for (let i = 0; i < N; i++) { pts[3 * i] = 4 * r(); pts[3 * i + 1] = 4 * r(); pts[3 * i + 2] = 0.05 * r(); }
    const H = await buildHMatrix(pts, { source: { task: inverseMultiquadricTask, before: [pts, 0.01] } },
      { tolerance: 1e-8, symmetric: true, pool, leafSize: 32 });
    try {
      for (const cluster of [128, 256]) {
        const nodes = clusterCover(H.tree, cluster);
        const cs = nodes.map((v) => H.tree.order.slice(H.tree.start[v], H.tree.end[v]));
        const subst = await parallelBlockJacobi((into) => { H.diagonalBlocks(nodes, into); }, cs, N, pool, { inverse: false });
        const inv = await parallelBlockJacobi((into) => { H.diagonalBlocks(nodes, into); }, cs, N, pool);
        try {
          expect([...inv.kind].every((t) => t === BLOCK_INVERSE)).toBe(true);
          for (const k of [1, 6]) {
            const R = sharedFloat64(N * k);
            for (let i = 0; i < R.length; i++) R[i] = r() - 0.5;
            const Z0 = sharedFloat64(N * k), Z1 = sharedFloat64(N * k);
            await subst.apply(R, Z0, k);
            await inv.apply(R, Z1, k);
            expect(relDiff(Z1, Z0)).toBeLessThan(1e-12);
            const apply = (X: Float64Array, Y: Float64Array, kk: number) => H.apply(X, Y, kk);
            const a = await pcg(apply, subst.apply, R, k, { tol: 1e-8, maxIter: 500 });
            const b = await pcg(apply, inv.apply, R, k, { tol: 1e-8, maxIter: 500 });
            expect(a.converged && b.converged).toBe(true);
            expect(b.iterations).toBe(a.iterations);
            expect(relDiff(b.X, a.X)).toBeLessThan(1e-7);
          }
        } finally { await subst.release(); await inv.release(); }
      }
    } finally { await H.release(); }
  });
});
