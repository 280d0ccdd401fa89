import { describe, it, expect } from "vitest";
import { compressedBytes, assertCompressedFits } from "../../src/extract/memory.js";
import { solveUnitPotentials } from "../../src/extract/solve.js";
import { sphereMesh } from "../../src/mesh/primitives/index.js";
import { WorkerPool } from "../../src/linalg/pool.js";
import { InputError } from "../../src/errors.js";

describe("compressed solver memory estimate", () => {
  it("counts the block-Jacobi factors (n·cluster numbers) and grows with the panels", () => {
    const n = 100000;
    expect(compressedBytes(n, 1, 32, 512) - compressedBytes(n, 1, 32, 256)).toBeCloseTo(8 * n * 256, -3);
    expect(compressedBytes(4 * n, 1)).toBeGreaterThan(4 * compressedBytes(n, 1));
    expect(() => assertCompressedFits(n, 1, 32, compressedBytes(n, 1) * 1.01)).not.toThrow();
    expect(() => assertCompressedFits(n, 1, 32, compressedBytes(n, 1) * 0.99)).toThrow(InputError);
  });

  it("refuses before building, with one line naming the need and the way out", async () => {
    const m = sphereMesh({ radius: 1, level: 2 });
    const pool = new WorkerPool(1);
    try {
      const run = solveUnitPotentials(m.positions, m.triangles, m.conductor, 1, { method: "galerkin", solver: "compressed", tolerance: 1e-4, pool, memoryLimit: 1e5 });
      await expect(run).rejects.toThrow(InputError);
      await expect(solveUnitPotentials(m.positions, m.triangles, m.conductor, 1, { method: "galerkin", solver: "compressed", tolerance: 1e-4, pool, memoryLimit: 1e5 }))
        .rejects.toThrow(/compressed operator for 320 panels needs about .* GiB but only .* GiB is free: use a coarser mesh/);
    } finally { await pool.close(); }
  });
});
