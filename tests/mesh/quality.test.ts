import { describe, it, expect } from "vitest";
import fc from "fast-check";
import type { SurfaceMesh } from "../../src/mesh/model.js";
import { triangleAspect, conductorQuality, panelSizes } from "../../src/mesh/quality.js";

function one(coords: number[]): { p: Float64Array; t: Uint32Array } {
  return { p: new Float64Array(coords), t: new Uint32Array([0, 1, 2]) };
}

/**
 * Radius ratio from the angles alone: r = 4R sin(A/2) sin(B/2) sin(C/2) (a classical identity
 * of triangle geometry, e.g. Johnson, "Advanced Euclidean Geometry", 1929, §298), hence
 * R/(2r) = 1 / (8 sin(A/2) sin(B/2) sin(C/2)).
 */
function aspectFromAngles(c: number[]): number {
  const v = (i: number) => [c[3 * i], c[3 * i + 1], c[3 * i + 2]];
  const angle = (i: number, j: number, k: number) => {
    const a = v(i), b = v(j), d = v(k);
    const u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]], w = [d[0] - a[0], d[1] - a[1], d[2] - a[2]];
    return Math.acos((u[0] * w[0] + u[1] * w[1] + u[2] * w[2]) / (Math.hypot(...u) * Math.hypot(...w)));
  };
  const A = angle(0, 1, 2), B = angle(1, 2, 0), C = Math.PI - A - B;
  return 1 / (8 * Math.sin(A / 2) * Math.sin(B / 2) * Math.sin(C / 2));
}

describe("triangle aspect ratio R/(2r)", () => {
  it("is 1 for an equilateral triangle and (1+√2)/2 for a right isosceles one", () => {
    const e = one([0, 0, 0, 1, 0, 0, 0.5, Math.sqrt(3) / 2, 0]);
    expect(triangleAspect(e.p, e.t, 0)).toBeCloseTo(1, 14);
    const r = one([0, 0, 0, 1, 0, 0, 0, 1, 0]);
    expect(triangleAspect(r.p, r.t, 0)).toBeCloseTo((1 + Math.SQRT2) / 2, 14);
  });

  it("agrees with the angle identity on random triangles (property)", () => {
    const coord = fc.integer({ min: -1000, max: 1000 }).map((k) => k / 100);
    let compared = 0;
    fc.assert(fc.property(fc.array(coord, { minLength: 9, maxLength: 9 }), (c) => {
      const { p, t } = one(c);
      const q = triangleAspect(p, t, 0);
      const ref = aspectFromAngles(c);
      if (q === Infinity) return true; // near-collinear: reported as degenerate
      // The angle route loses digits for slivers; compare relatively where it is well conditioned.
      if (!Number.isFinite(ref) || ref > 1e4) return true;
      compared++;
      return Math.abs(q - ref) <= 1e-7 * ref;
    }), { numRuns: 300 });
    expect(compared).toBeGreaterThan(250);
  });

  it("is unchanged by scaling and grows without bound for a needle", () => {
    const base = [0, 0, 0, 3, 0, 0, 1, 2, 0];
    const a = triangleAspect(one(base).p, one(base).t, 0);
    const s = base.map((x) => x * 1e-6);
    expect(triangleAspect(one(s).p, one(s).t, 0)).toBeCloseTo(a, 9);
    const n1 = one([0, 0, 0, 1, 0, 0, 0.5, 1e-2, 0]), n2 = one([0, 0, 0, 1, 0, 0, 0.5, 1e-4, 0]);
    expect(triangleAspect(n2.p, n2.t, 0)).toBeGreaterThan(50 * triangleAspect(n1.p, n1.t, 0));
  });

  it("calls collinear and repeated-vertex triangles degenerate", () => {
    const c = one([0, 0, 0, 1, 1, 1, 2, 2, 2]);
    expect(triangleAspect(c.p, c.t, 0)).toBe(Infinity);
    const r = { p: new Float64Array([0, 0, 0, 1, 0, 0]), t: new Uint32Array([0, 1, 1]) };
    expect(triangleAspect(r.p, r.t, 0)).toBe(Infinity);
  });
});

describe("conductorQuality", () => {
  it("reports edge range, worst aspect and degenerate count per conductor", () => {
    const m: SurfaceMesh = {
      positions: new Float64Array([0, 0, 0, 2, 0, 0, 0, 2, 0, 5, 0, 0, 6, 0, 0, 5.5, Math.sqrt(3) / 2, 0, 7, 0, 0, 8, 0, 0, 9, 0, 0]),
      triangles: new Uint32Array([0, 1, 2, 3, 4, 5, 6, 7, 8]),
      conductor: new Uint32Array([0, 1, 1]),
      names: ["right", "mixed"],
    };
    const [a, b] = conductorQuality(m);
    expect(a.minEdge).toBeCloseTo(2, 14);
    expect(a.maxEdge).toBeCloseTo(2 * Math.SQRT2, 14);
    expect(a.worstAspect).toBeCloseTo((1 + Math.SQRT2) / 2, 14);
    expect(a.degenerateTriangles).toBe(0);
    expect(b.degenerateTriangles).toBe(1);
    expect(b.worstAspect).toBe(Infinity);
    expect(b.worstAspectTriangle).toBe(2);
    expect(b.minEdge).toBeCloseTo(1, 14);
    expect(b.maxEdge).toBeCloseTo(2, 14);
    expect(Array.from(panelSizes(m.positions, m.triangles))).toEqual([2 * Math.SQRT2, 1, 2].map((x, i) => (i === 0 ? Math.sqrt(8) : x)));
  });

  it("gives NaN figures for a conductor without triangles", () => {
    const m: SurfaceMesh = { positions: new Float64Array(9), triangles: new Uint32Array(0), conductor: new Uint32Array(0), names: ["none"] };
    const [q] = conductorQuality(m);
    expect(q.minEdge).toBeNaN();
    expect(q.worstAspectTriangle).toBe(-1);
  });
});
