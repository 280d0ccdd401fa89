import { describe, it, expect } from "vitest";
import { panelSet } from "../../src/bem/panels.js";
import { collocationEntry, collocationFar, COLLOCATION_FAR } from "../../src/bem/collocation.js";
import { trianglePotential } from "../../src/bem/triangle-potential.js";
import { icosphere } from "./icosphere.js";

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe("collocation entries", () => {
  const s = icosphere(3);
  const P = panelSet(s.positions, s.triangles);
  it("equal the direct analytic potential at the centroid over the area, near and far (far rung ≤ 1e-6)", () => {
    let worstFar = 0, worstNear = 0;
    for (let i = 0; i < P.n; i += 13) for (let j = 0; j < P.n; j += 5) {
      const c = P.centroids;
      const direct = trianglePotential(P.vertices, 9 * j, c[3 * i], c[3 * i + 1], c[3 * i + 2]) / P.areas[j];
      const d = Math.hypot(c[3 * i] - c[3 * j], c[3 * i + 1] - c[3 * j + 1], c[3 * i + 2] - c[3 * j + 2]);
      const e = rel(collocationEntry(P, i, j), direct);
      if (d >= COLLOCATION_FAR * P.radii[j]) worstFar = Math.max(worstFar, e); else worstNear = Math.max(worstNear, e);
    }
    expect(worstNear).toBe(0);
    expect(worstFar).toBeLessThan(1e-6);
  });
  it("self term is the potential at the centroid: √3·a·ln(2+√3)/A for an equilateral panel (derived closed form)", () => {
    const a = 0.01;
    const Q = panelSet(Float64Array.from([0, 0, 0, a, 0, 0, a / 2, (a * Math.sqrt(3)) / 2, 0]), new Uint32Array([0, 1, 2]));
    const A = (Math.sqrt(3) / 4) * a * a;
    expect(rel(collocationEntry(Q, 0, 0), (Math.sqrt(3) * a * Math.log(2 + Math.sqrt(3))) / A)).toBeLessThan(1e-14);
  });
  it("far expansion is a real approximation: wrong close in", () => {
    const i = 0;
    let j = 1; // a neighbour of panel 0
    for (let k = 1; k < P.n; k++) if (Math.hypot(P.centroids[3 * k] - P.centroids[0], P.centroids[3 * k + 1] - P.centroids[1], P.centroids[3 * k + 2] - P.centroids[2]) < 2 * P.radii[0]) { j = k; break; }
    const direct = trianglePotential(P.vertices, 9 * j, P.centroids[0], P.centroids[1], P.centroids[2]) / P.areas[j];
    expect(rel(collocationFar(P, i, j), direct)).toBeGreaterThan(1e-5);
  });
});
