import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { clusterPoints, leafIndexSets } from "../../src/linalg/cluster.js";
import { randomBlock } from "./random.js";

describe("cluster tree by bounding-box bisection", () => {
  it("covers every point once, with small balanced leaves inside their boxes", () => {
    fc.assert(fc.property(fc.integer({ min: 0, max: 400 }), fc.integer({ min: 1, max: 40 }), fc.integer(), fc.boolean(),
      (N, leafSize, seed, coincide) => {
        const pts = randomBlock(N, 3, seed);
        if (coincide) for (let i = 0; i < 3 * N; i += 6) { pts[i] = 0.25; pts[i + 1] = 0.25; pts[i + 2] = 0.25; }
        const t = clusterPoints(pts, leafSize);
        const seen = new Uint8Array(N);
        for (const i of t.order) seen[i]++;
        if (!seen.every((c) => c === 1)) return false;
        let at = 0;
        for (const [s, e] of t.leaves) {
          if (s !== at || e - s > leafSize || (N > 0 && e === s)) return false;
          at = e;
        }
        if (at !== N) return false;
        for (let v = 0; v < t.start.length; v++) {
          const l = t.left[v], r = t.right[v];
          if (l >= 0) {
            const a = t.end[l] - t.start[l], b = t.end[r] - t.start[r];
            if (t.start[l] !== t.start[v] || t.end[l] !== t.start[r] || t.end[r] !== t.end[v] || Math.abs(a - b) > 1) return false;
            if (t.depth[l] !== t.depth[v] + 1) return false;
          }
          for (let p = t.start[v]; p < t.end[v]; p++)
            for (let d = 0; d < 3; d++) {
              const x = pts[3 * t.order[p] + d];
              if (x < t.bbox[6 * v + d] || x > t.bbox[6 * v + 3 + d]) return false;
            }
        }
        return true;
      }), { numRuns: 150 });
  });

  it("splits the longest side: two separated groups part at the root", () => {
    // 50 points near x = 0 and 50 near x = 10; y, z spread over 1.
    const pts = randomBlock(100, 3, 1);
    for (let i = 50; i < 100; i++) pts[3 * i] += 10;
    const t = clusterPoints(pts, 8);
    const left = t.order.slice(t.start[t.left[0]], t.end[t.left[0]]);
    expect(Array.from(left).sort((a, b) => a - b)).toEqual(Array.from({ length: 50 }, (_, i) => i));
    expect(leafIndexSets(t).reduce((s, I) => s + I.length, 0)).toBe(100);
  });

  it("rejects bad input", () => {
    expect(() => clusterPoints(new Float64Array(4), 4)).toThrow(/multiple of 3/);
    expect(() => clusterPoints(new Float64Array(3), 0)).toThrow(/leaf size/);
    expect(() => clusterPoints(Float64Array.of(0, NaN, 0), 2)).toThrow(/point 0/);
  });
});
