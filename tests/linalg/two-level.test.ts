import { describe, it, expect } from "vitest";
import { twoLevelPreconditioner } from "../../src/linalg/two-level.js";
import { blockJacobiFromBlocks } from "../../src/linalg/cluster-jacobi.js";
import { pcg } from "../../src/linalg/cg.js";
import { sharedFloat64 } from "../../src/linalg/pool.js";
import { rng } from "./random.js";

// A 1D model of a single-layer matrix: A_ij = h/(|x_i − x_j| + h) on n points, a discrete 1/r
// kernel, symmetric positive definite (the Galerkin structure the preconditioner is built for).
function model(n: number): Float64Array {
  const A = new Float64Array(n * n), h = 1 / n;
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) A[i * n + j] = h / (Math.abs(i - j) * h + h);
  return A;
}

describe("two-level additive Schwarz", () => {
  it("M⁻¹r = B⁻¹r + P A_c⁻¹ Pᵀ r exactly, for B block-Jacobi", async () => {
    const n = 60, A = model(n), size = 10, nc = n / size;
    const sets = Array.from({ length: nc }, (_, a) => Uint32Array.from({ length: size }, (_, i) => a * size + i));
    const blocks = sets.map((I) => { const D = new Float64Array(size * size); I.forEach((p, a) => I.forEach((q, b) => { D[a * size + b] = A[p * n + q]; })); return D; });
    const agg = Int32Array.from({ length: n }, (_, i) => Math.floor(i / size));
    const C = new Float64Array(nc * nc);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) C[agg[i] * nc + agg[j]] += A[i * n + j];
    const fine = blockJacobiFromBlocks(blocks.map((b) => b.slice()), sets, n);
    const M = await twoLevelPreconditioner(blockJacobiFromBlocks(blocks.map((b) => b.slice()), sets, n), agg, nc, C.slice());
    const r = rng(4), R = Float64Array.from({ length: n }, () => r() - 0.5), Z = new Float64Array(n), Zf = new Float64Array(n);
    await M(R, Z, 1); fine(R, Zf, 1);
    // Z − Zf = P·y with A_c·y = Pᵀ R: check A_c·(aggregate values) = Pᵀ R.
    const y = new Float64Array(nc);
    for (let a = 0; a < nc; a++) y[a] = Z[a * size] - Zf[a * size];
    for (let i = 0; i < n; i++) expect(Z[i] - Zf[i]).toBeCloseTo(y[agg[i]], 12);
    for (let a = 0; a < nc; a++) {
      let lhs = 0, rhs = 0;
      for (let b = 0; b < nc; b++) lhs += C[a * nc + b] * y[b];
      for (let i = a * size; i < (a + 1) * size; i++) rhs += R[i];
      expect(lhs).toBeCloseTo(rhs, 10);
    }
  });

  it("is SPD in effect: PCG with it reaches the same solution as with block-Jacobi alone", async () => {
    for (const n of [256, 1024]) {
      const A = model(n), size = 16, nc = n / size;
      const sets = Array.from({ length: nc }, (_, a) => Uint32Array.from({ length: size }, (_, i) => a * size + i));
      const blocks = () => sets.map((I) => { const D = new Float64Array(size * size); I.forEach((p, a) => I.forEach((q, b) => { D[a * size + b] = A[p * n + q]; })); return D; });
      const agg = Int32Array.from({ length: n }, (_, i) => Math.floor(i / size));
      const C = new Float64Array(nc * nc);
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) C[agg[i] * nc + agg[j]] += A[i * n + j];
      const apply = (X: Float64Array, Y: Float64Array) => { for (let i = 0; i < n; i++) { let s = 0; for (let j = 0; j < n; j++) s += A[i * n + j] * X[j]; Y[i] = s; } };
      const B = sharedFloat64(n).fill(1);
      const one = await pcg(apply, blockJacobiFromBlocks(blocks(), sets, n), B, 1, { tol: 1e-10, maxIter: 500 });
      const two = await pcg(apply, await twoLevelPreconditioner(blockJacobiFromBlocks(blocks(), sets, n), agg, nc, C), B, 1, { tol: 1e-10, maxIter: 500 });
      expect(one.converged && two.converged).toBe(true);
      for (let i = 0; i < n; i++) expect(two.X[i]).toBeCloseTo(one.X[i], 7);
    }
  });
});

describe("block-Jacobi on the workers", () => {
  it("factors and applies on 2 workers as on this thread, to 12 digits (the workers apply explicit inverses; Cholesky blocks and an LU fallback)", async () => {
    const { parallelBlockJacobi } = await import("../../src/linalg/cluster-jacobi.js");
    const { WorkerPool } = await import("../../src/linalg/pool.js");
    const pool = new WorkerPool(2);
    try {
      const n = 300, A = model(n), k = 3;
      // Unequal blocks over a scattered order, 20 unknowns left out (they pass through).
      const perm = Array.from({ length: n }, (_, i) => (i * 7) % n);
      const sizes = [50, 30, 80, 40, 60, 20];
      const sets: Uint32Array[] = [];
      let at = 0;
      for (const m of sizes) { sets.push(Uint32Array.from(perm.slice(at, at + m))); at += m; }
      const blocks = () => sets.map((I, b) => {
        const m = I.length, D = new Float64Array(m * m);
        I.forEach((p, a) => I.forEach((q, c) => { D[a * m + c] = A[p * n + q]; }));
        // Block 3 indefinite: Cholesky fails, LU takes over.
        if (b === 3) for (let a = 0; a < m; a++) D[a * m + a] -= 3;
        return D;
      });
      const serial = blockJacobiFromBlocks(blocks(), sets, n);
      const par = await parallelBlockJacobi(blocks(), sets, n, pool);
      const r = rng(12), R = sharedFloat64(n * k);
      for (let i = 0; i < R.length; i++) R[i] = r() - 0.5;
      const Z1 = new Float64Array(n * k), Z2 = sharedFloat64(n * k);
      serial(R, Z1, k);
      await par.apply(R, Z2, k);
      for (let i = 0; i < n * k; i++) expect(Z2[i]).toBeCloseTo(Z1[i], 12);
      // Blocks written in place by a callback: the same preconditioner.
      const inPlace = await parallelBlockJacobi((into) => { blocks().forEach((D, b) => into[b].set(D)); }, sets, n, pool);
      const Z3 = sharedFloat64(n * k);
      await inPlace.apply(R, Z3, k);
      for (let i = 0; i < n * k; i++) expect(Z3[i]).toBe(Z2[i]);
      await inPlace.release();
      // Free unknowns pass through.
      expect(Z2[perm[n - 1] * k]).toBe(R[perm[n - 1] * k]);
      await par.release();
    } finally { await pool.close(); }
  });
});
