import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { triangleTriangleDistance } from "../../src/mesh/triangle-distance.js";
import { samples, diameter, tri9, pairMesh } from "../geometry/triangle-samples.js";

describe("triangle–triangle distance", () => {
  it("matches brute-force sampling of both triangles", () => {
    const out = new Float64Array(6);
    fc.assert(fc.property(tri9, tri9, (a, b) => {
      const { p, t } = pairMesh(a, b);
      const d = triangleTriangleDistance(p, t, 0, 1, out);
      const k = 24;
      const sa = samples(a, k), sb = samples(b, k);
      let best = Infinity;
      for (const x of sa) for (const y of sb) best = Math.min(best, Math.hypot(x[0] - y[0], x[1] - y[1], x[2] - y[2]));
      expect(d).toBeLessThanOrEqual(best + 1e-12);
      expect(best - d).toBeLessThanOrEqual((diameter(a) + diameter(b)) / k + 1e-12);
      // The reported points realise the distance.
      expect(Math.hypot(out[0] - out[3], out[1] - out[4], out[2] - out[5])).toBeCloseTo(d, 10);
    }), { numRuns: 60 });
  });

  it("is zero where one triangle pierces the other", () => {
    const out = new Float64Array(6);
    const { p, t } = pairMesh([0, 0, 0, 2, 0, 0, 0, 2, 0], [0.5, 0.5, -1, 0.6, 0.5, 1, 0.5, 0.7, 1]);
    expect(triangleTriangleDistance(p, t, 0, 1, out)).toBe(0);
    expect(out[2]).toBeCloseTo(0, 14);
  });
});
