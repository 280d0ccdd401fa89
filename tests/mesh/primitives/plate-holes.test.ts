// Plate with circular holes: an open sheet A x B less the discs; area A B - sum pi R^2
// (approached from above: the hole rims are inscribed polygons).
import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { plateHolesMesh, plateMesh, generateShape, holesFault, type Hole } from "../../../src/mesh/primitives/index.js";
import { surfaceArea } from "../../../src/mesh/measure.js";
import { InputError } from "../../../src/errors.js";
import { topology, euler } from "../edge-census.js";
import { expectFaithful } from "./faithful.js";
import type { SurfaceMesh } from "../../../src/mesh/model.js";

const exactArea = (size: number[], holes: Hole[]): number => size[0] * size[1] - holes.reduce((s, h) => s + Math.PI * h[2] * h[2], 0);

/** Open sheet with k holes: Euler characteristic 1 - k, every triangle facing +z. */
function expectSheet(m: SurfaceMesh, holes: number, minShape: number): void {
  const t = topology(m);
  expect(t.nonManifold).toBe(0);
  expect(t.misoriented).toBe(0);
  expect(t.unused).toBe(0);
  expect(t.minShape).toBeGreaterThan(minShape);
  expect(euler(m)).toBe(1 - holes);
  const p = m.positions, tr = m.triangles;
  for (let i = 0; i < tr.length; i += 3) {
    const a = 3 * tr[i], b = 3 * tr[i + 1], c = 3 * tr[i + 2];
    expect((p[b] - p[a]) * (p[c + 1] - p[a + 1]) - (p[b + 1] - p[a + 1]) * (p[c] - p[a])).toBeGreaterThan(0);
  }
}

/** Distance of (x, y) from the nearest rim: the plate's edge or a hole's circle. */
function rimDistance(size: number[], holes: Hole[], x: number, y: number): number {
  let d = Math.min(size[0] / 2 - Math.abs(x), size[1] / 2 - Math.abs(y));
  for (const [cx, cy, r] of holes) d = Math.min(d, Math.abs(Math.hypot(x - cx, y - cy) - r));
  return d;
}

describe("plate with holes", () => {
  const size = [10, 6];
  const holes: Hole[] = [[0, 0, 1], [3, 1, 0.5], [-3, -1, 1.5]];

  it("is an open sheet with one rim per hole, facing +z, of bounded aspect ratio", () => {
    for (const g of [1, 3]) {
      const m = plateHolesMesh({ size, holes, grading: g });
      // Grading 3 makes strips along the rims, as on the plain plate (its worst is 0.096).
      expectSheet(m, 3, g === 1 ? 0.1 : 0.08);
    }
  });

  it("is graded toward each hole's rim: the first ring sits at the rim spacing over the grading", () => {
    for (const g of [1, 5]) {
      const m = plateHolesMesh({ size, holes: [[0, 0, 1]], panelSize: 0.5, grading: g });
      let rim = 0, nearest = Infinity;
      for (let i = 0; i < m.positions.length; i += 3) {
        const d = Math.hypot(m.positions[i], m.positions[i + 1]) - 1;
        if (Math.abs(d) < 1e-12) rim++;
        else nearest = Math.min(nearest, d);
      }
      expect(nearest / ((2 * Math.PI) / rim / g)).toBeCloseTo(1, 10);
    }
  });

  it("holes near each other and near the edge: refined to the gap, still well shaped", () => {
    for (const hs of [[[0, 0, 1], [2.05, 0, 1]], [[4.4, 0, 0.5]], [[0, 0, 0.05]]] as Hole[][]) {
      const m = plateHolesMesh({ size, holes: hs });
      // Measured worst 0.099 (a right isosceles triangle is 0.25; the plain plate's worst 0.22).
      expectSheet(m, hs.length, 0.08);
    }
  });

  it("property: any holes that fit give an open sheet of Euler characteristic 1 - holes, facing +z, with no degenerate triangle", () => {
    const circle = fc.tuple(fc.double({ min: -0.5, max: 0.5, noNaN: true }), fc.double({ min: -0.5, max: 0.5, noNaN: true }), fc.double({ min: 0.01, max: 0.3, noNaN: true }));
    fc.assert(fc.property(
      fc.tuple(fc.double({ min: 1, max: 10, noNaN: true }), fc.double({ min: 1, max: 10, noNaN: true })),
      fc.array(circle, { minLength: 1, maxLength: 4 }),
      fc.integer({ min: 2, max: 16 }), fc.double({ min: 1, max: 5, noNaN: true }),
      (sz, raw, n, g) => {
        // Circles in units of the plate, kept while they fit (the generator refuses the rest).
        const hs: Hole[] = [];
        for (const [u, v, w] of raw) {
          const h: Hole = [u * sz[0], v * sz[1], w * Math.min(...sz)];
          if (holesFault(sz, [...hs, h]) === undefined) hs.push(h);
        }
        if (hs.length === 0) return true;
        const m = plateHolesMesh({ size: sz, holes: hs, divisions: n, grading: g });
        expectSheet(m, hs.length, 1e-4);
        return true;
      }), { numRuns: 25 });
  });

  it("faces: one flat face, vertices on the plane, hole rims on their circles, exact reference normals", () => {
    const center = [1, 2, 3];
    const m = plateHolesMesh({ size, holes, axis: "x", center });
    // Axis x turns the plate's (x, y, normal) into world (y, z, x).
    expect(expectFaithful(m, {
      classify: () => "plate",
      distance: (_f, x) => x - center[0],
      normal: () => [1, 0, 0],
      flat: () => true,
    }, 1e-15)).toEqual(["plate"]);
    // Every rim vertex of the mesh and of the reference is on the plate's edge or on a hole's circle.
    for (const [p, tr] of [[m.positions, m.triangles], [m.reference!.positions, m.reference!.triangles]] as [Float64Array, Uint32Array][]) {
      const sheet: SurfaceMesh = { positions: p, triangles: tr, conductor: new Uint32Array(tr.length / 3), names: ["s"] };
      const uses = new Map<string, number>();
      for (let i = 0; i < tr.length; i += 3) for (let j = 0; j < 3; j++) {
        const a = tr[i + j], b = tr[i + ((j + 1) % 3)];
        const k = a < b ? `${a},${b}` : `${b},${a}`;
        uses.set(k, (uses.get(k) ?? 0) + 1);
      }
      let worst = 0;
      for (const [k, n] of uses) {
        if (n !== 1) continue;
        for (const v of k.split(",").map(Number)) worst = Math.max(worst, rimDistance(size, holes, p[3 * v + 1] - center[1], p[3 * v + 2] - center[2]));
      }
      expect(worst).toBeLessThan(1e-12);
      expect(sheet.triangles.length).toBeGreaterThan(0);
    }
  });

  it("area converges to A B - sum pi R^2 at second order, from above", () => {
    const exact = exactArea(size, holes);
    const err = [0.5, 0.25, 0.125].map((h) => {
      const m = plateHolesMesh({ size, holes, panelSize: h });
      // The sheet covers the rectangle less the rim polygons exactly: m_i vertices on circle i,
      // polygon area (m/2) R^2 sin(2 pi / m).
      const onRim = holes.map(([cx, cy, r]) => {
        let n = 0;
        for (let i = 0; i < m.positions.length; i += 3) if (Math.abs(Math.hypot(m.positions[i] - cx, m.positions[i + 1] - cy) - r) < 1e-12) n++;
        return (n / 2) * r * r * Math.sin((2 * Math.PI) / n);
      });
      expect(surfaceArea(m) / (size[0] * size[1] - onRim.reduce((a, b) => a + b, 0)) - 1).toBeLessThan(1e-13);
      return surfaceArea(m) / exact - 1;
    });
    for (const e of err) expect(e).toBeGreaterThan(0);
    expect(err[0]).toBeLessThan(0.01);
    // Rim counts grow with 1/h (ceil and the least 8 segments blur the first step): about 4x per halving.
    expect(err[1]).toBeLessThan(err[0] / 2.5);
    expect(err[2]).toBeLessThan(err[1] / 3);
  });

  it("refuses holes that reach the edge, overlap or touch; takes holes in the caller's unit", () => {
    expect(holesFault(size, [[4.5, 0, 0.5]])).toMatch(/hole 1 \(4\.5, 0, radius 0\.5\) reaches the plate's edge/);
    expect(holesFault(size, [[0, 0, 1], [1.5, 0, 0.5]])).toMatch(/hole 2 overlaps or touches hole 1/);
    expect(holesFault(size, [[0, 0, 1], [2, 0, 0.5]])).toBeUndefined();
    const describe = (p: string) => "--" + p;
    for (const [h, re] of [
      ["0,0,1;1.5,0,0.5", /^--holes: hole 2 overlaps or touches hole 1$/],
      ["0,0,1,2", /--holes takes circles as x, y, radius triples, got 4 numbers/],
      ["0,0,-1", /--holes: hole 1 has a radius of -1; it must be positive/],
      ["0,2.5,1", /--holes: hole 1 \(0, 2\.5, radius 1\) reaches the plate's edge/],
    ] as [string, RegExp][]) {
      let caught: unknown;
      try { generateShape("plate", { size: "10,6", holes: h }, { describe }); } catch (e) { caught = e; }
      expect(caught).toBeInstanceOf(InputError);
      expect((caught as Error).message).toMatch(re);
    }
    const mm = generateShape("plate", { size: [10, 6], holes: [[0, 0, 1], [3, 1, 0.5]] }, { metresPerUnit: 1e-3 });
    expect(surfaceArea(mm) / (exactArea(size, [[0, 0, 1], [3, 1, 0.5]]) * 1e-6) - 1).toBeLessThan(0.01);
    // No holes: the plain plate, mesh for mesh.
    expect(Array.from(generateShape("plate", { size: "3,4", holes: [] }).positions)).toEqual(Array.from(plateMesh({ size: [3, 4] }).positions));
  });
});
