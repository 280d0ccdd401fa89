import { describe, it, expect } from "vitest";
import { conductorCharges, variationalCorrection } from "../../src/extract/capacitance.js";
import { pcg } from "../../src/linalg/cg.js";
import { blockJacobi } from "../../src/linalg/block-jacobi.js";
import { denseMultiplySerial } from "../../src/linalg/dense.js";
import { choleskyFactorSerial, choleskySolve } from "../../src/linalg/cholesky.js";
import { clusterPoints, leafIndexSets } from "../../src/linalg/cluster.js";
import { clusteredPoints, inverseMultiquadricMatrix } from "../linalg/kernel-matrix.js";
import { rng } from "../linalg/random.js";

// A symmetric positive definite kernel matrix stands in for the Galerkin operator; "conductors"
// are groups of unknowns, b_j = 1 on group j. Exact C_ij = b_iᵀA⁻¹b_j from Cholesky.
describe("variational correction of the conductor charges", () => {
  const n = 300, k = 4, pts = clusteredPoints(n, k, 0.05, 11), A = inverseMultiquadricMatrix(pts, 0.01);
  const conductorOf = Uint32Array.from({ length: n }, (_, p) => p % k);
  const B = new Float64Array(n * k);
  for (let p = 0; p < n; p++) B[p * k + conductorOf[p]] = 1;
  const L = A.slice();
  choleskyFactorSerial(L, n);
  const exact = B.slice();
  choleskySolve(L, n, exact, k);
  const C = conductorCharges(exact, conductorOf, k);
  const residual = (X: Float64Array): Float64Array => {
    const R = new Float64Array(n * k);
    denseMultiplySerial(A, n, X, k, R);
    for (let i = 0; i < n * k; i++) R[i] = B[i] - R[i];
    return R;
  };

  it("errs by exactly −(eᵀA·e) symmetrised, for any approximate solution", () => {
    const r = rng(5), X = exact.slice(), E = new Float64Array(n * k);
    for (let i = 0; i < n * k; i++) { E[i] = 1e-3 * (r() - 0.5) * Math.abs(exact[i]); X[i] -= E[i]; }
    const corrected = conductorCharges(X, conductorOf, k, variationalCorrection(X, residual(X), n, k));
    const AE = new Float64Array(n * k);
    denseMultiplySerial(A, n, E, k, AE);
    let scale = 0;
    for (let a = 0; a < k * k; a++) scale = Math.max(scale, Math.abs(C[a]));
    // corrected_ij = b_iᵀx_j + ½(x_iᵀr_j + x_jᵀr_i) = C_ij − e_iᵀA·e_j + ½(b_jᵀe_i − b_iᵀe_j):
    // its symmetric part is C − EᵀA·E exactly (capacitanceMatrices symmetrises).
    for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) {
      let eAe = 0;
      for (let p = 0; p < n; p++) eAe += E[p * k + i] * AE[p * k + j];
      const sym = 0.5 * (corrected[i * k + j] + corrected[j * k + i]);
      expect(Math.abs(sym - (C[i * k + j] - eAe))).toBeLessThan(1e-12 * scale);
    }
    // The correction itself is symmetric.
    const D = variationalCorrection(X, residual(X), n, k);
    for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) expect(D[i * k + j]).toBe(D[j * k + i]);
  });

  it("turns the linear error of a loose PCG solve into a quadratic one", async () => {
    const apply = (X: Float64Array, Y: Float64Array, kk: number) => denseMultiplySerial(A, n, X, kk, Y);
    const M = blockJacobi(A, n, leafIndexSets(clusterPoints(pts, 32)));
    let scale = 0;
    for (let a = 0; a < k * k; a++) scale = Math.max(scale, Math.abs(C[a]));
    const err = (Q: Float64Array) => {
      let d = 0;
      for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) d = Math.max(d, Math.abs(0.5 * (Q[i * k + j] + Q[j * k + i]) - C[i * k + j]));
      return d / scale;
    };
    for (const tol of [1e-4, 1e-5, 1e-6]) {
      const res = await pcg(apply, M, B, k, { tol, maxIter: 1000 });
      expect(res.converged).toBe(true);
      // pcg's returned residual block is B − A·X of the returned X.
      const R = residual(res.X);
      let dr = 0, rmax = 0;
      for (let i = 0; i < n * k; i++) { dr = Math.max(dr, Math.abs(R[i] - res.residual![i])); rmax = Math.max(rmax, Math.abs(R[i])); }
      expect(dr).toBeLessThanOrEqual(1e-9 * Math.max(rmax, 1e-300) + 1e-15);
      const raw = err(conductorCharges(res.X, conductorOf, k));
      const cor = err(conductorCharges(res.X, conductorOf, k, variationalCorrection(res.X, res.residual!, n, k)));
      // Quadratic: far below the linear error and below tol² times a modest constant (κ of this matrix < 1e4).
      expect(cor).toBeLessThan(raw / 5);
      expect(cor).toBeLessThan(1e4 * tol * tol);
    }
  });
});
