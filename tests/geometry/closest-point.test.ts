import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { closestPointTriangle, closestPointsSegments } from "../../src/geometry/closest-point.js";
import { samples, diameter, coord, tri9 } from "./triangle-samples.js";

describe("closest points (Ericson 5.1.5, 5.1.9)", () => {
  it("point–triangle distance matches dense sampling", () => {
    const out = new Float64Array(3);
    fc.assert(fc.property(tri9, coord, coord, coord, (c, x, y, z) => {
      const d = Math.sqrt(closestPointTriangle(out, x, y, z, c[0], c[1], c[2], c[3], c[4], c[5], c[6], c[7], c[8]));
      let best = Infinity;
      for (const s of samples(c, 60)) best = Math.min(best, Math.hypot(s[0] - x, s[1] - y, s[2] - z));
      // Sampling overestimates by at most the grid spacing; the exact value is never above it.
      expect(d).toBeLessThanOrEqual(best + 1e-12);
      expect(best - d).toBeLessThanOrEqual(diameter(c) / 60 + 1e-12);
      expect(Math.hypot(out[0] - x, out[1] - y, out[2] - z)).toBeCloseTo(d, 12);
    }), { numRuns: 150 });
  });

  it("segment–segment distance matches dense sampling, parallel and crossing cases included", () => {
    const out = new Float64Array(6);
    const d = Math.sqrt(closestPointsSegments(out, 0, 0, 0, 1, 0, 0, 0.5, 1, 0, 2, 1, 0));
    expect(d).toBeCloseTo(1, 14);
    expect(Math.sqrt(closestPointsSegments(out, -1, 0, 0, 1, 0, 0, 0, -1, 2, 0, 1, 2))).toBeCloseTo(2, 14);
    fc.assert(fc.property(fc.array(coord, { minLength: 12, maxLength: 12 }), (c) => {
      const e = Math.sqrt(closestPointsSegments(out, c[0], c[1], c[2], c[3], c[4], c[5], c[6], c[7], c[8], c[9], c[10], c[11]));
      let best = Infinity;
      const k = 300;
      for (let i = 0; i <= k; i++) for (let j = 0; j <= k; j += 1) {
        const s = i / k, t = j / k;
        const dx = c[0] + s * (c[3] - c[0]) - c[6] - t * (c[9] - c[6]);
        const dy = c[1] + s * (c[4] - c[1]) - c[7] - t * (c[10] - c[7]);
        const dz = c[2] + s * (c[5] - c[2]) - c[8] - t * (c[11] - c[8]);
        best = Math.min(best, Math.hypot(dx, dy, dz));
      }
      const len = Math.hypot(c[3] - c[0], c[4] - c[1], c[5] - c[2]) + Math.hypot(c[9] - c[6], c[10] - c[7], c[11] - c[8]);
      expect(e).toBeLessThanOrEqual(best + 1e-12);
      expect(best - e).toBeLessThanOrEqual(len / k + 1e-12);
    }), { numRuns: 40 });
  });
});

describe("closest point on a triangle, closed forms for each Voronoi region (Ericson 5.1.5)", () => {
  // a = (0,0,0), b = (3,0,0), c = (0,4,0): a 3-4-5 right triangle in z = 0, seen from 2 above and below.
  const T = [0, 0, 0, 3, 0, 0, 0, 4, 0] as const;
  const regions: Array<[string, number, number, number[], number]> = [
    ["corner a", -1, -1, [0, 0, 0], 1 + 1 + 4],
    ["corner b", 4, -1, [3, 0, 0], 1 + 1 + 4],
    ["corner c", -1, 5, [0, 4, 0], 1 + 1 + 4],
    ["side ab", 1.5, -1, [1.5, 0, 0], 1 + 4],
    ["side ac", -1, 2, [0, 2, 0], 1 + 4],
    // 5 along the outward normal (4, 3)/5 of side bc from its midpoint (1.5, 2).
    ["side bc", 5.5, 5, [1.5, 2, 0], 25 + 4],
    ["face", 1, 1, [1, 1, 0], 4],
  ];
  const out = new Float64Array(3);
  for (const [name, x, y, q, d2] of regions) {
    it(`${name}: closest point (${q.join(", ")}), squared distance ${d2}`, () => {
      for (const z of [2, -2]) {
        expect(closestPointTriangle(out, x, y, z, ...T)).toBeCloseTo(d2, 14);
        for (let k = 0; k < 3; k++) expect(out[k]).toBeCloseTo(q[k], 14);
      }
    });
  }

  it("is the point itself, at distance 0, for points on the triangle", () => {
    expect(closestPointTriangle(out, 1, 1, 0, ...T)).toBe(0);
    expect(Array.from(out)).toEqual([1, 1, 0]);
    expect(closestPointTriangle(out, 3, 0, 0, ...T)).toBe(0);
    expect(Array.from(out)).toEqual([3, 0, 0]);
  });

  it("falls back on the nearest side for a zero-length side bc or ca, or collinear corners", () => {
    // Corners b = c, then c = a: the segment from (0,0,0) to (2,0,0); (1,1,0) is 1 from its midpoint.
    expect(closestPointTriangle(out, 1, 1, 0, 0, 0, 0, 2, 0, 0, 2, 0, 0)).toBeCloseTo(1, 15);
    expect(Array.from(out)).toEqual([1, 0, 0]);
    expect(closestPointTriangle(out, 1, 1, 0, 0, 0, 0, 2, 0, 0, 0, 0, 0)).toBeCloseTo(1, 15);
    expect(Array.from(out)).toEqual([1, 0, 0]);
    // Collinear corners along x from 0 to 2: (3,1,0) is nearest the end (2,0,0), √2 away.
    expect(closestPointTriangle(out, 3, 1, 0, 0, 0, 0, 1, 0, 0, 2, 0, 0)).toBeCloseTo(2, 15);
    expect(Array.from(out)).toEqual([2, 0, 0]);
  });

  // Known fault, left as it is by the split that moved this function (it was to change no number):
  // with a = b every d1, d3, vc is 0, so the side-ab test takes the point to corner a (squared
  // distance 2 here) instead of the nearest point (1,0,0) of the remaining side. Turn into `it`
  // when fixed.
  it("a zero-length side ab: the nearest point of the remaining side", () => {
    expect(closestPointTriangle(out, 1, 1, 0, 0, 0, 0, 0, 0, 0, 2, 0, 0)).toBeCloseTo(1, 15);
    expect(Array.from(out)).toEqual([1, 0, 0]);
  });
});

describe("closest points of two segments, closed forms (Ericson 5.1.9)", () => {
  const out = new Float64Array(6);
  it("skew perpendicular segments: the common perpendicular between their midpoints", () => {
    expect(closestPointsSegments(out, -1, 0, 0, 1, 0, 0, 0, -1, 2, 0, 1, 2)).toBe(4);
    expect(Array.from(out)).toEqual([0, 0, 0, 0, 0, 2]);
  });
  it("segments whose nearest points are both ends", () => {
    // The end (1,0,0) of the first and the start (2,1,0) of the second, √2 apart.
    expect(closestPointsSegments(out, 0, 0, 0, 1, 0, 0, 2, 1, 0, 3, 5, 0)).toBe(2);
    expect(Array.from(out)).toEqual([1, 0, 0, 2, 1, 0]);
  });
  it("parallel overlapping segments: their separation", () => {
    expect(closestPointsSegments(out, 0, 0, 0, 2, 0, 0, 1, 0, 3, 4, 0, 3)).toBe(9);
  });
  it("a segment of zero length is a point", () => {
    expect(closestPointsSegments(out, 1, 1, 0, 1, 1, 0, 0, 0, 0, 2, 0, 0)).toBe(1);
    expect(Array.from(out)).toEqual([1, 1, 0, 1, 0, 0]);
    expect(closestPointsSegments(out, 5, 0, 0, 5, 0, 0, 5, 0, 1, 5, 0, 1)).toBe(1);
  });
});
