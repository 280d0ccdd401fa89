/**
 * The normal field of a flat panel at points of its own plane, tested with a parallel normal:
 * the principal value 0 everywhere on the plane, also exactly on the panel's edges, where the
 * in-plane gradient is infinite (a pad edge through a board panel's quadrature point). The
 * limit from off the plane is the reference: the field of a uniformly charged flat triangle
 * tends to ±σ/(2ε0) over its inside and to ±σ/(4ε0) over an edge (the solid angle of the panel
 * tends to 2π and π), whose mean over the two sides is 0 (common practice: the jump of the
 * normal field across a surface charge, Gauss's law).
 */
import { describe, it, expect } from "vitest";
import { panelSet } from "../../src/bem/panels.js";
import { normalFieldAt } from "../../src/bem/interface.js";

describe("normal field on the panel's own plane", () => {
  const positions = new Float64Array([0, 0, 0, 1e-3, 0, 0, 0, 1e-3, 0]);
  const P = panelSet(positions, new Uint32Array([0, 1, 2]));
  const A = P.areas[0];
  const points: Array<[string, number[], number]> = [
    ["on an edge", [0.5e-3, 0, 0], Math.PI], ["on the hypotenuse", [0.25e-3, 0.75e-3, 0], Math.PI],
    ["at a vertex", [1e-3, 0, 0], Math.PI / 4], ["inside", [0.2e-3, 0.3e-3, 0], 2 * Math.PI], ["outside", [-0.4e-3, 0.2e-3, 0], 0],
  ];
  for (const [what, x, omega] of points) {
    it(`is 0 ${what}, the mean of the one-sided limits ±Ω/A`, () => {
      for (const sign of [1, -1]) expect(normalFieldAt(P, 0, x[0], x[1], x[2], 0, 0, sign)).toBe(0);
      const h = 1e-12;
      const above = normalFieldAt(P, 0, x[0], x[1], h, 0, 0, 1), below = normalFieldAt(P, 0, x[0], x[1], -h, 0, 0, 1);
      expect(Number.isFinite(above) && Number.isFinite(below)).toBe(true);
      expect(Math.abs(above * A - omega)).toBeLessThan(1e-6);
      expect(Math.abs(below * A + omega)).toBeLessThan(1e-6);
    });
  }
  it("keeps the in-plane field for a normal that is not parallel (perpendicular test panel)", () => {
    const v = normalFieldAt(P, 0, -0.5e-3, 0.25e-3, 0, -1, 0, 0);
    expect(Number.isFinite(v) && v > 0).toBe(true); // pushed away from the panel, along −x
  });
});
