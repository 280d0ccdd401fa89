import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { triangleTriangleDistance } from "../../src/mesh/triangle-distance.js";
import { trianglesIntersect, trianglesCrossProperly, coincidentSameFacing } from "../../src/mesh/triangle-intersection.js";
import { tri9, pairMesh } from "../geometry/triangle-samples.js";

describe("triangle–triangle intersection (Möller 1997)", () => {
  const cases: Array<[string, number[], number[], boolean]> = [
    ["piercing", [0, 0, 0, 2, 0, 0, 0, 2, 0], [0.5, 0.5, -1, 0.6, 0.5, 1, 0.5, 0.7, 1], true],
    ["parallel planes apart", [0, 0, 0, 1, 0, 0, 0, 1, 0], [0, 0, 0.1, 1, 0, 0.1, 0, 1, 0.1], false],
    ["coplanar overlapping", [0, 0, 0, 2, 0, 0, 0, 2, 0], [0.5, 0.5, 0, 3, 0.5, 0, 0.5, 3, 0], true],
    ["coplanar one inside the other", [0, 0, 0, 4, 0, 0, 0, 4, 0], [0.5, 0.5, 0, 1, 0.5, 0, 0.5, 1, 0], true],
    ["coplanar disjoint", [0, 0, 0, 1, 0, 0, 0, 1, 0], [2, 2, 0, 3, 2, 0, 2, 3, 0], false],
    ["sharing a vertex", [0, 0, 0, 1, 0, 0, 0, 1, 0], [0, 0, 0, -1, 0, 1, 0, -1, 1], true],
    ["planes cross but triangles miss", [0, 0, 0, 1, 0, 0, 0, 1, 0], [2, 2, -1, 2, 3, 1, 3, 2, 1], false],
    ["edge touching a face", [0, 0, 0, 2, 0, 0, 0, 2, 0], [0.2, 0.2, 0, 1, 0.2, 0, 0.5, 0.5, 1], true],
  ];
  for (const [name, a, b, want] of cases) {
    it(name, () => {
      const { p, t } = pairMesh(a, b);
      expect(trianglesIntersect(p, t, 0, 1)).toBe(want);
      expect(trianglesIntersect(p, t, 1, 0)).toBe(want);
    });
  }

  it("agrees with the exact distance on random pairs away from contact", () => {
    const out = new Float64Array(6);
    let hits = 0;
    fc.assert(fc.property(tri9, tri9, (a, b) => {
      const { p, t } = pairMesh(a, b);
      const d = triangleTriangleDistance(p, t, 0, 1, out);
      const x = trianglesIntersect(p, t, 0, 1);
      if (d === 0) { hits++; return x; }
      if (d > 1e-6) return !x;
      return true;
    }), { numRuns: 2000 });
    expect(hits).toBeGreaterThan(10);
    // Pairs built near each other, so that many of them intersect or nearly touch.
    let near = 0, misses = 0;
    fc.assert(fc.property(tri9, fc.array(fc.integer({ min: -100, max: 100 }).map((k) => k / 100), { minLength: 9, maxLength: 9 }), (a, dv) => {
      const b = a.map((x, i) => x + dv[i]);
      const { p, t } = pairMesh(a, b);
      const d = triangleTriangleDistance(p, t, 0, 1, out);
      const x = trianglesIntersect(p, t, 0, 1);
      if (d === 0) { near++; return x; }
      if (d > 1e-6) { misses++; return !x; }
      return true;
    }), { numRuns: 2000 });
    expect(near).toBeGreaterThan(50);
    expect(misses).toBeGreaterThan(300);
  });
});

describe("proper crossing: each triangle has corners strictly on both sides of the other's plane", () => {
  const A = [0, 0, 0, 2, 0, 0, 0, 2, 0];
  it("a triangle piercing another crosses it; one standing on it with an edge does not", () => {
    const { p, t } = pairMesh(A, [0.2, 0.5, -1, 0.8, 0.5, 1, 0.5, 0.5, 1]);
    expect(trianglesCrossProperly(p, t, 0, 1, 1e-9)).toBe(true);
    expect(trianglesCrossProperly(p, t, 1, 0, 1e-9)).toBe(true);
    const s = pairMesh(A, [0.2, 0.2, 0, 1, 0.2, 0, 0.5, 0.5, 1]);
    expect(trianglesCrossProperly(s.p, s.t, 0, 1, 1e-9)).toBe(false);
  });
  it("a corner reaching less than tol through the plane does not count", () => {
    const { p, t } = pairMesh(A, [0.2, 0.5, -1e-7, 0.8, 0.5, 1, 0.5, 0.5, 1]);
    expect(trianglesCrossProperly(p, t, 0, 1, 1e-6)).toBe(false);
    expect(trianglesCrossProperly(p, t, 0, 1, 1e-8)).toBe(true);
  });
  it("a zero-area triangle crosses nothing", () => {
    const { p, t } = pairMesh(A, [0.5, 0.5, -1, 0.5, 0.5, 0, 0.5, 0.5, 1]);
    expect(trianglesCrossProperly(p, t, 0, 1, 1e-9)).toBe(false);
  });
});

describe("coincident faces facing the same way", () => {
  const A = [0, 0, 0, 2, 0, 0, 0, 2, 0]; // normal +z
  const cases: Array<[string, number[], number, boolean]> = [
    ["overlapping, same facing", [0.5, 0.5, 0, 3, 0.5, 0, 0.5, 3, 0], 1e-9, true],
    ["one inside the other, same facing (no edges cross)", [0.2, 0.2, 0, 0.6, 0.2, 0, 0.2, 0.6, 0], 1e-9, true],
    ["overlapping, facing the other way", [0.5, 0.5, 0, 0.5, 3, 0, 3, 0.5, 0], 1e-9, false],
    ["same plane and facing, apart", [2, 2, 0, 3, 2, 0, 2, 3, 0], 1e-9, false],
    ["sharing only an edge", [2, 0, 0, 2, 2, 0, 0, 2, 0], 1e-9, false],
    ["overlapping 0.1 above, tol 1e-6", [0.5, 0.5, 0.1, 3, 0.5, 0.1, 0.5, 3, 0.1], 1e-6, false],
    ["overlapping 0.1 above, tol 0.2", [0.5, 0.5, 0.1, 3, 0.5, 0.1, 0.5, 3, 0.1], 0.2, true],
  ];
  for (const [name, b, tol, want] of cases) {
    it(name, () => {
      const { p, t } = pairMesh(A, b);
      expect(coincidentSameFacing(p, t, 0, 1, tol)).toBe(want);
      expect(coincidentSameFacing(p, t, 1, 0, tol)).toBe(want);
    });
  }
});
