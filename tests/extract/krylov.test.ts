/**
 * The Krylov selection (src/extract/krylov.ts): which method for which symmetry and number of
 * right-hand sides, and that runKrylov runs that method unchanged (same iterates as calling it
 * directly) to the residual asked for.
 */
import { describe, it, expect } from "vitest";
import { krylovMethod, runKrylov, BLOCK_CG_MIN_RHS, KRYLOV_METHODS, type KrylovMethod } from "../../src/extract/krylov.js";
import { pcg, type BlockOperator, type BlockPreconditioner } from "../../src/linalg/cg.js";
import { blockPcg } from "../../src/linalg/block-cg.js";
import { gmres } from "../../src/linalg/gmres.js";
import { randomSpd, randomGeneral, randomBlock } from "../linalg/random.js";

function operator(A: Float64Array, n: number): BlockOperator {
  return (X, Y, k) => {
    for (let i = 0; i < n; i++) for (let c = 0; c < k; c++) {
      let s = 0;
      for (let q = 0; q < n; q++) s += A[i * n + q] * X[q * k + c];
      Y[i * k + c] = s;
    }
  };
}

/** Jacobi (diagonal) preconditioner. */
function diagonal(A: Float64Array, n: number): BlockPreconditioner {
  return (R, Z, k) => { for (let i = 0; i < n; i++) for (let c = 0; c < k; c++) Z[i * k + c] = R[i * k + c] / A[i * n + i]; };
}

/** Worst ‖B − A·X‖ / ‖B‖ over the columns. */
function worstResidual(A: Float64Array, n: number, X: Float64Array, B: Float64Array, k: number): number {
  const Y = new Float64Array(n * k);
  operator(A, n)(X, Y, k);
  let worst = 0;
  for (let c = 0; c < k; c++) {
    let r = 0, b = 0;
    for (let i = 0; i < n; i++) { r += (B[i * k + c] - Y[i * k + c]) ** 2; b += B[i * k + c] ** 2; }
    worst = Math.max(worst, Math.sqrt(r / b));
  }
  return worst;
}

describe("Krylov selection", () => {
  it("non-symmetric operators take GMRES whatever k or the block override says", () => {
    for (const k of [1, 2, 5, 64]) for (const block of [undefined, true, false]) expect(krylovMethod(false, k, block)).toBe("gmres");
  });

  it("SPD operators take PCG below BLOCK_CG_MIN_RHS right-hand sides and block PCG from it, unless overridden", () => {
    expect(BLOCK_CG_MIN_RHS).toBe(2);
    expect(krylovMethod(true, 1)).toBe("pcg");
    expect(krylovMethod(true, BLOCK_CG_MIN_RHS - 1)).toBe("pcg");
    expect(krylovMethod(true, BLOCK_CG_MIN_RHS)).toBe("block-pcg");
    expect(krylovMethod(true, 36)).toBe("block-pcg");
    expect(krylovMethod(true, 36, false)).toBe("pcg");
    expect(krylovMethod(true, 1, true)).toBe("block-pcg");
  });

  it("refuses an unknown method", () => {
    const A = randomSpd(4, 1);
    expect(() => runKrylov("minres" as KrylovMethod, operator(A, 4), diagonal(A, 4), new Float64Array(4), 1, { tol: 1e-8, maxIter: 10 }))
      .toThrow(/unknown Krylov method "minres" \(known: pcg, block-pcg, gmres\)/);
    expect([...KRYLOV_METHODS]).toEqual(["pcg", "block-pcg", "gmres"]);
  });

  const n = 120, k = 3, tol = 1e-9;
  const cases: Array<{ method: KrylovMethod; A: Float64Array; direct: () => ReturnType<typeof pcg> }> = [];
  const spd = randomSpd(n, 7), B = randomBlock(n, k, 9);
  // Non-symmetric and well conditioned: the SPD matrix plus a skew-symmetric part.
  const general = spd.slice(), G = randomGeneral(n, 8);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) general[i * n + j] += 0.5 * (G[i * n + j] - G[j * n + i]) / Math.sqrt(n);
  cases.push({ method: "pcg", A: spd, direct: () => pcg(operator(spd, n), diagonal(spd, n), B, k, { tol, maxIter: 400 }) });
  cases.push({ method: "block-pcg", A: spd, direct: () => blockPcg(operator(spd, n), diagonal(spd, n), B, k, { tol, maxIter: 400 }) });
  cases.push({ method: "gmres", A: general, direct: () => gmres(operator(general, n), diagonal(general, n), B, k, { tol, maxIter: 400 }) });
  for (const c of cases) {
    it(`runs ${c.method} as calling it directly, to the residual asked for`, async () => {
      const res = await runKrylov(c.method, operator(c.A, n), diagonal(c.A, n), B, k, { tol, maxIter: 400 });
      const ref = await c.direct();
      expect(res.converged).toBe(true);
      expect(res.iterations).toBe(ref.iterations);
      expect([...res.X]).toEqual([...ref.X]);
      expect(worstResidual(c.A, n, res.X, B, k)).toBeLessThan(10 * tol);
    });
  }

  it("block PCG takes fewer iterations than column-wise PCG on several right-hand sides (why it is chosen from 2)", async () => {
    // A 1D Laplacian (condition number ~ n²): the shared Krylov space pays off.
    const spd = new Float64Array(n * n);
    for (let i = 0; i < n; i++) { spd[i * n + i] = 2.001; if (i > 0) spd[i * n + i - 1] = -1; if (i < n - 1) spd[i * n + i + 1] = -1; }
    const kk = 8, BB = randomBlock(n, kk, 10);
    const one = await runKrylov("pcg", operator(spd, n), diagonal(spd, n), BB, kk, { tol, maxIter: 400 });
    const block = await runKrylov("block-pcg", operator(spd, n), diagonal(spd, n), BB, kk, { tol, maxIter: 400 });
    expect(block.converged && one.converged).toBe(true);
    expect(block.iterations).toBeLessThan(one.iterations);
  });
});
