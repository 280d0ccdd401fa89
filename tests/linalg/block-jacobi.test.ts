import { describe, it, expect } from "vitest";
import { blockJacobi } from "../../src/linalg/block-jacobi.js";
import { randomBlock, randomGeneral, randomSpd, relDiff } from "./random.js";
import { denseMultiplySerial } from "../../src/linalg/dense.js";

/** A block-diagonal matrix (after a permutation): block-Jacobi is then its exact inverse. */
function scatteredBlocks(n: number, sizes: number[], spd: boolean, seed: number): { A: Float64Array; blocks: Uint32Array[] } {
  // A fixed shuffle so blocks are index sets, not ranges.
  const perm = Array.from({ length: n }, (_, i) => i).sort((a, b) => ((a * 7919) % n) - ((b * 7919) % n));
  const A = new Float64Array(n * n), blocks: Uint32Array[] = [];
  let at = 0;
  sizes.forEach((m, b) => {
    const I = Uint32Array.from(perm.slice(at, at + m));
    at += m;
    const D = spd ? randomSpd(m, seed + b) : randomGeneral(m, seed + b);
    for (let a = 0; a < m; a++) for (let c = 0; c < m; c++) A[I[a] * n + I[c]] = D[a * m + c];
    blocks.push(I);
  });
  return { A, blocks };
}

describe("block-Jacobi preconditioner", () => {
  for (const spd of [true, false]) {
    it(`inverts a block-diagonal matrix exactly (${spd ? "Cholesky" : "LU"} blocks), k = 1 and 3`, () => {
      const n = 60, { A, blocks } = scatteredBlocks(n, [1, 7, 20, 32], spd, 11);
      const M = blockJacobi(A, n, blocks);
      for (const k of [1, 3, 1]) {
        const X = randomBlock(n, k, k), B = new Float64Array(n * k), Z = new Float64Array(n * k);
        denseMultiplySerial(A, n, X, k, B);
        M(B, Z, k);
        expect(relDiff(Z, X)).toBeLessThan(1e-10);
      }
    });
  }

  it("forced LU gives the same result as Cholesky on SPD blocks", () => {
    const n = 40, { A, blocks } = scatteredBlocks(n, [15, 25], true, 3);
    const R = randomBlock(n, 2, 1), Z1 = new Float64Array(n * 2), Z2 = new Float64Array(n * 2);
    blockJacobi(A, n, blocks)(R, Z1, 2);
    blockJacobi(A, n, blocks, { lu: true })(R, Z2, 2);
    expect(relDiff(Z1, Z2)).toBeLessThan(1e-12);
  });

  it("leaves unknowns outside every block as they are, and rejects overlapping blocks", () => {
    const n = 10, A = randomSpd(n, 2), R = randomBlock(n, 1, 3), Z = new Float64Array(n);
    blockJacobi(A, n, [Uint32Array.of(0, 1, 2)])(R, Z, 1);
    for (let i = 3; i < n; i++) expect(Z[i]).toBe(R[i]);
    // Rows 0..2 solve the 3×3 leading block.
    for (let i = 0; i < 3; i++) {
      let s = 0;
      for (let j = 0; j < 3; j++) s += A[i * n + j] * Z[j];
      expect(s).toBeCloseTo(R[i], 12);
    }
    expect(() => blockJacobi(A, n, [Uint32Array.of(0, 1), Uint32Array.of(1, 2)])).toThrow(/disjoint/);
    expect(() => blockJacobi(A, n, [Uint32Array.of(0, 10)])).toThrow(/outside/);
    // A block that is singular (rows 4 and 6 equal within it) is named with its unknown.
    const S = randomSpd(n, 4);
    for (const j of [4, 6]) { S[4 * n + j] = 1; S[6 * n + j] = 1; }
    expect(() => blockJacobi(S, n, [Uint32Array.of(0, 1), Uint32Array.of(4, 6)])).toThrow(/block 1 .*unknown 6/);
  });
});
