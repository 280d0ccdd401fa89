import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { weldVertices, dropDegenerate } from "../../src/mesh/weld.js";

describe("weldVertices", () => {
  it("welds pairs within tolerance that straddle hash-cell boundaries, keeps distinct ones", () => {
    // Bounding diagonal is sqrt(3)*1 (the corner at (1,1,1)); tolerance 1e-3 of it ≈ 1.73e-3.
    // Cell size equals the tolerance, so points near k·tol fall in different cells.
    const pts: number[] = [1, 1, 1, 0, 0, 0];
    const tol = 1e-3 * Math.sqrt(3);
    const pairs: number[][] = [];
    for (let k = 1; k <= 50; k++) { // 10·50·tol ≈ 0.87 stays inside the unit box
      const x = 10 * k * tol; // on a cell boundary, pairs 10 tol apart from each other
      pairs.push([x - 0.4 * tol, 0.5, 0.5, x + 0.4 * tol, 0.5, 0.5]); // 0.8 tol apart: weld
      pairs.push([x - 0.6 * tol, 0.2, 0.2, x + 0.6 * tol, 0.2, 0.2]); // 1.2 tol apart: keep
    }
    for (const p of pairs) pts.push(...p);
    const positions = new Float64Array(pts);
    const nv = pts.length / 3;
    const tri: number[] = [];
    for (let v = 0; v < nv; v++) tri.push(v, v, v); // reference every vertex
    const r = weldVertices(positions, new Uint32Array(tri), 1e-3);
    expect(r.merged).toBe(50);
    for (let k = 0; k < 50; k++) {
      const a = 2 + 4 * k, b = a + 1, c = a + 2, d = a + 3;
      expect(r.triangles[3 * a]).toBe(r.triangles[3 * b]);
      expect(r.triangles[3 * c]).not.toBe(r.triangles[3 * d]);
    }
  });
  it("welds across all three axes and diagonal neighbours (random jitter below tolerance)", () => {
    fc.assert(fc.property(fc.array(fc.tuple(fc.double({ min: 0, max: 1, noNaN: true }), fc.double({ min: 0, max: 1, noNaN: true }), fc.double({ min: 0, max: 1, noNaN: true })), { minLength: 1, maxLength: 40 }),
      fc.array(fc.double({ min: -0.28, max: 0.28, noNaN: true }), { minLength: 3, maxLength: 3 }), (centres, j) => {
        // Centres on a coarse lattice stay far apart; each gets a twin shifted by < tol/√3 per axis.
        const pos: number[] = [0, 0, 0, 10, 10, 10];
        const seen = new Set<string>();
        const cs = centres.map(([x, y, z]) => [1 + Math.round(x * 8), 1 + Math.round(y * 8), 1 + Math.round(z * 8)]).filter((c) => { const k = c.join(); if (seen.has(k)) return false; seen.add(k); return true; });
        const tol = 1e-3 * Math.sqrt(300);
        for (const [x, y, z] of cs) pos.push(x, y, z, x + j[0] * tol, y + j[1] * tol, z + j[2] * tol);
        const n = pos.length / 3;
        const tri = new Uint32Array(3 * n);
        for (let v = 0; v < n; v++) tri.fill(v, 3 * v, 3 * v + 3);
        const r = weldVertices(new Float64Array(pos), tri, 1e-3);
        expect(r.merged).toBe(cs.length);
        expect(r.positions.length / 3).toBe(2 + cs.length);
      }), { numRuns: 200, seed: 3 });
  });
  it("drops unreferenced vertices and keeps exact duplicates apart from nothing at zero tolerance", () => {
    const p = new Float64Array([0, 0, 0, 1, 0, 0, 0, 1, 0, 1, 0, 0, 9, 9, 9]);
    const r = weldVertices(p, new Uint32Array([0, 1, 2, 3, 2, 0]), 0);
    expect(r.merged).toBe(1);
    expect(r.positions.length).toBe(9);
    expect(Array.from(r.triangles)).toEqual([0, 1, 2, 1, 2, 0]);
  });
  it("runs in linear time: 16x the vertices takes well under 16x squared the time", () => {
    const soup = (n: number) => {
      // A triangle soup of an n×n grid: 6 copies of most vertices, as in STL.
      const pos = new Float64Array(18 * n * n);
      let o = 0;
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
        for (const [a, b] of [[0, 0], [1, 0], [1, 1], [0, 0], [1, 1], [0, 1]]) { pos[o++] = (i + a) / n; pos[o++] = (j + b) / n; pos[o++] = 0; }
      }
      const tri = new Uint32Array(pos.length / 3);
      for (let k = 0; k < tri.length; k++) tri[k] = k;
      return { pos, tri };
    };
    const time = (n: number) => {
      const { pos, tri } = soup(n);
      const t0 = performance.now();
      const r = weldVertices(pos, tri);
      const dt = performance.now() - t0;
      expect(r.positions.length / 3).toBe((n + 1) * (n + 1));
      return dt;
    };
    // Best of three of each size: a shared machine's pauses only ever add time.
    const best = (n: number) => Math.min(time(n), time(n), time(n));
    // The smaller size still takes milliseconds, so a timer tick or a pause of a loaded machine
    // cannot dominate it.
    const small = Math.max(best(200), 1);
    const big = best(800); // 16x the vertices
    // Quadratic behaviour would be 256x; linear about 16x (hash tables growing out of cache
    // add a few times that). The bound sits between the two, far from both.
    expect(big / small).toBeLessThan(110);
  });
});

describe("dropDegenerate", () => {
  it("drops repeated-vertex and collinear triangles, keeps slivers above the threshold", () => {
    const p = new Float64Array([0, 0, 0, 1, 0, 0, 2, 0, 0, 0, 1, 0, 0.5, 1e-6, 0]);
    const t = new Uint32Array([0, 1, 3, 0, 0, 1, 0, 1, 2, 0, 1, 4]);
    const r = dropDegenerate(p, t, new Uint32Array([5, 6, 7, 8]));
    expect(r.dropped).toBe(2);
    expect(Array.from(r.group)).toEqual([5, 8]);
  });
});
