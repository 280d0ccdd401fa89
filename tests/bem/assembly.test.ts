import { describe, it, expect, afterAll } from "vitest";
import { Matrix, solve } from "ml-matrix";
import { panelSet } from "../../src/bem/panels.js";
import { assembleRows, assembleDense, assembleBlock, rowSplit } from "../../src/bem/assembly.js";
import { galerkinEntry } from "../../src/bem/galerkin.js";
import { collocationEntry } from "../../src/bem/collocation.js";
import { WorkerPool } from "../../src/linalg/pool.js";
import { icosphere } from "./icosphere.js";

// Workers load dist/: run `npx tsc -p tsconfig.json` (npm test builds first).
describe("dense assembly", () => {
  const pool = new WorkerPool(2);
  afterAll(() => pool.close());
  const s = icosphere(3); // 1280 panels
  const P = panelSet(s.positions, s.triangles);
  const n = P.n;

  it("splits Galerkin rows into equal upper-triangle work", () => {
    const b = rowSplit(n, 2, "galerkin");
    const work = (a: number, z: number) => { let w = 0; for (let i = a; i < z; i++) w += n - i; return w; };
    expect(Math.abs(work(b[0], b[1]) - work(b[1], b[2])) / work(0, n)).toBeLessThan(0.01);
    expect(b[0]).toBe(0); expect(b[2]).toBe(n);
  });

  it("on two workers equals the serial matrix bit for bit, Galerkin and collocation", async () => {
    for (const method of ["galerkin", "collocation"] as const) {
      const serial = new Float64Array(n * n);
      assembleRows(P, method, 0, n, serial);
      const par = await assembleDense(P, method, pool);
      let diff = 0;
      for (let k = 0; k < n * n; k++) if (par[k] !== serial[k]) diff++;
      expect(diff).toBe(0);
    }
  });

  it("assembleBlock returns the dense matrix's entries for arbitrary index sets; dense = entry functions", () => {
    const full = new Float64Array(n * n);
    assembleRows(P, "galerkin", 0, n, full);
    const rows = Uint32Array.from([5, 0, 1279, 640, 17]), cols = Uint32Array.from([3, 5, 999, 0, 1, 2, 640]);
    const out = new Float64Array(rows.length * cols.length);
    assembleBlock(P, rows, cols, out);
    for (let a = 0; a < rows.length; a++) for (let b = 0; b < cols.length; b++) {
      expect(out[a * cols.length + b]).toBe(full[rows[a] * n + cols[b]]);
      expect(full[rows[a] * n + cols[b]]).toBe(galerkinEntry(P, rows[a], cols[b]));
    }
    const oc = new Float64Array(rows.length * cols.length);
    assembleBlock(P, rows, cols, oc, "collocation");
    expect(oc[1]).toBe(collocationEntry(P, rows[0], cols[1]));
  });

  it("collocation rows (far rung inlined) equal collocationEntry bit for bit", () => {
    const full = new Float64Array(n * n);
    assembleRows(P, "collocation", 0, n, full);
    let diff = 0;
    for (let i = 0; i < n; i += 7) for (let j = 0; j < n; j++) if (full[i * n + j] !== collocationEntry(P, i, j)) diff++;
    expect(diff).toBe(0);
  });

  it("unit sphere capacitance: Galerkin C = 4πε0 Σq within 1 % of 4πε0 R, from below (closed form C = 4πε0R)", () => {
    const Pm = new Float64Array(n * n);
    assembleRows(P, "galerkin", 0, n, Pm);
    // P q = v with the 1/(4πε0) factor left out: Σq is then C/(4πε0) directly.
    const q = solve(new Matrix(Array.from({ length: n }, (_, i) => Array.from(Pm.subarray(i * n, (i + 1) * n)))), Matrix.ones(n, 1));
    let sum = 0;
    for (let i = 0; i < n; i++) sum += q.get(i, 0);
    expect(sum).toBeLessThan(1);
    expect(sum).toBeGreaterThan(0.99);
  });
});
