// A far block far larger than any test matrix: ACA's scratch is capped by the block's size
// (it used to ask for min(m, n) terms, 28.8 GB at 60k × 60k), and the result is right.
import { describe, it, expect } from "vitest";
import { buildChunk, JOB_FAR, JOB_FIELDS } from "../../src/linalg/hmatrix-build.js";

describe("H-matrix build of one very large admissible block", () => {
  it("compresses a 60,000 × 60,000 block of 1/r between separated point clouds to low rank", () => {
    const m = 60000, n = 60000;
    // Points on two parallel lines 10 apart, each of length 1: a smooth, numerically low-rank kernel.
    const x = new Float64Array(m + n);
    for (let i = 0; i < m; i++) x[i] = i / m;
    for (let j = 0; j < n; j++) x[m + j] = j / n;
    const gen = (rows: Uint32Array, cols: Uint32Array, out: Float64Array) => {
      let o = 0;
      for (let a = 0; a < rows.length; a++) for (let b = 0; b < cols.length; b++) {
        const d = x[rows[a]] - x[cols[b]];
        out[o++] = 1 / Math.sqrt(d * d + 100);
      }
    };
    const order = Uint32Array.from({ length: m + n }, (_, i) => i);
    const jobs = new Float64Array(JOB_FIELDS);
    jobs.set([0, m, m, m + n, JOB_FAR]);
    const built = buildChunk(gen, order, jobs, 1e-6);
    const r = built.rank[0];
    expect(r).toBeGreaterThan(0);
    expect(r).toBeLessThan(20);
    // Check sampled entries of U Vᵀ (U m×r, V n×r, term by term) against the kernel.
    const U = built.data.subarray(built.offset[0], built.offset[0] + r * m);
    const V = built.data.subarray(built.offset[0] + r * m, built.offset[0] + r * (m + n));
    let worst = 0;
    for (let s = 0; s < 200; s++) {
      const i = (s * 7919) % m, j = (s * 104729) % n;
      let v = 0;
      for (let t = 0; t < r; t++) v += U[t * m + i] * V[t * n + j];
      const d = x[i] - x[m + j];
      worst = Math.max(worst, Math.abs(v - 1 / Math.sqrt(d * d + 100)) * 10);
    }
    expect(worst).toBeLessThan(1e-5);
  });
});
