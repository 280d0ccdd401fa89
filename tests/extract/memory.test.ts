import { describe, it, expect } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
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

describe("a run's own peak memory", () => {
  it("a small run after a large peak in the same process reports its own peak, not the process's", () => {
    // A child process with an exposed collector: touch 600 MB, free it, then extract a small sphere.
    const dist = new URL("../../dist/src/", import.meta.url).href;
    const script = `
      const { extractMesh } = await import(${JSON.stringify(dist + "extract/extract-mesh.js")});
      const { sphereMesh } = await import(${JSON.stringify(dist + "mesh/primitives/index.js")});
      let big = Buffer.alloc(600e6, 1);
      big = null; globalThis.gc(); globalThis.gc();
      const r = await extractMesh(sphereMesh({ radius: 1e-3, level: 2 }));
      process.stdout.write(JSON.stringify({ run: r.solver.peakMemory, process: process.resourceUsage().maxRSS * 1024, now: process.memoryUsage.rss() }));`;
    // A file, not -e: the worker pool resolves its entry from the main module's file.
    const dir = mkdtempSync(join(tmpdir(), "sigmesh-peak-"));
    const file = join(dir, "peak.mjs");
    writeFileSync(file, script);
    const r = spawnSync(process.execPath, ["--expose-gc", file], { encoding: "utf8" });
    rmSync(dir, { recursive: true, force: true });
    expect(r.status, r.stderr).toBe(0);
    const m = JSON.parse(r.stdout) as { run: number; process: number; now: number };
    expect(m.process).toBeGreaterThan(600e6);
    // The run's peak is at least what is resident now, and far below the earlier 600 MB spike.
    expect(m.run).toBeGreaterThanOrEqual(0.9 * m.now);
    expect(m.run).toBeLessThan(m.process - 300e6);
  });
});
