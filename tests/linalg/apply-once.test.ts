import { describe, it, expect, afterAll } from "vitest";
import { applyOnce } from "../../src/linalg/apply-once.js";
import { WorkerPool } from "../../src/linalg/pool.js";
import { clusteredPoints, inlineTask } from "./kernel-matrix.js";
import { rng } from "./random.js";

// Two matrices at once over the same points (a generic vector kernel; linalg tests may not
// import bem): the gradient components x and y of 1/√(r² + δ²). The workers import it from a
// data: URL module (inlineTask).
function grad2(pts: Float64Array, delta: number, rows: Uint32Array, cols: Uint32Array, out: Float64Array): void {
  const m = rows.length, nc = cols.length;
  for (let a = 0; a < m; a++) {
    const i = 3 * rows[a];
    for (let b = 0; b < nc; b++) {
      const j = 3 * cols[b];
      const dx = pts[i] - pts[j], dy = pts[i + 1] - pts[j + 1], dz = pts[i + 2] - pts[j + 2];
      const s = 1 / Math.sqrt(dx * dx + dy * dy + dz * dz + delta * delta), s3 = s * s * s;
      out[a * nc + b] = dx * s3;
      out[(m + a) * nc + b] = dy * s3;
    }
  }
}
const grad2Task = inlineTask({ grad2 });

function exact(pts: Float64Array, delta: number, x: Float64Array): Float64Array {
  const n = pts.length / 3, y = new Float64Array(2 * n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      const dx = pts[3 * i] - pts[3 * j], dy = pts[3 * i + 1] - pts[3 * j + 1], dz = pts[3 * i + 2] - pts[3 * j + 2];
      const s = 1 / Math.sqrt(dx * dx + dy * dy + dz * dz + delta * delta), s3 = s * s * s;
      y[2 * i] += dx * s3 * x[j]; y[2 * i + 1] += dy * s3 * x[j];
    }
  return y;
}

const pool = new WorkerPool(2);
afterAll(async () => { await pool.close(); });

describe("applyOnce: a matrix product block by block without storing the matrix", () => {
  const n = 3000, delta = 1e-3;
  const shared = clusteredPoints(n, 12, 0.15, 5);
  const pts = new Float64Array(new SharedArrayBuffer(8 * shared.length));
  pts.set(shared);
  const r = rng(9), x = Float64Array.from({ length: n }, () => r() - 0.5);
  const ref = exact(pts, delta, x);
  let scale = 0;
  for (const v of ref) scale = Math.max(scale, Math.abs(v));

  for (const tol of [1e-4, 1e-7]) {
    it(`two stacked components agree with the full sum to the block tolerance (${tol})`, async () => {
      const gen = grad2;
      const y = await applyOnce(pts, { generator: (rows, cols, out) => gen(pts, delta, rows, cols, out) }, x, { tolerance: tol, components: 2 });
      let d = 0;
      for (let i = 0; i < ref.length; i++) d = Math.max(d, Math.abs(y[i] - ref[i]));
      // ACA's stopping rule underestimates the block error by up to ~7× (aca.ts ACA_SHARE);
      // the sum over blocks adds a few more.
      expect(d / scale).toBeLessThan(50 * tol);
      expect(d / scale).toBeGreaterThan(0);
    });
  }

  it("on the workers equals the serial evaluation, and masked rows are left out", async () => {
    const mask = Uint8Array.from({ length: n }, (_, i) => (i % 5 === 2 ? 0 : 1));
    const gen = grad2;
    const serial = await applyOnce(pts, { generator: (rows, cols, out) => gen(pts, delta, rows, cols, out) }, x, { tolerance: 1e-6, components: 2, rows: mask });
    const parallel = await applyOnce(pts, { source: { task: grad2Task, before: [pts, delta] } }, x, { tolerance: 1e-6, components: 2, rows: mask, pool });
    let d = 0;
    for (let i = 0; i < n; i++) {
      for (let c = 0; c < 2; c++) {
        if (!mask[i]) { expect(serial[2 * i + c]).toBe(0); expect(parallel[2 * i + c]).toBe(0); continue; }
        d = Math.max(d, Math.abs(parallel[2 * i + c] - serial[2 * i + c]));
        expect(Math.abs(serial[2 * i + c] - ref[2 * i + c])).toBeLessThan(1e-4 * scale);
      }
    }
    // Same blocks, same arithmetic; only the order of the two workers' partial sums differs.
    expect(d / scale).toBeLessThan(1e-12);
  });
});
