// Washer: the ring a <= rho <= b, |z| <= t/2, its four edges square or rounded with radius e.
// Area (common practice, Pappus's theorem for the rounded section):
//   square:  2 pi (b^2 - a^2) + 2 pi (a + b) t
//   rounded: 2 pi [(b - e)^2 - (a + e)^2] + 2 pi (a + b)(t - 2e) + the four quarter-tori,
//            each (pi e / 2) * 2 pi (rho_c +- 2e/pi) with rho_c = b - e outside and a + e inside.
import { describe, it, expect } from "vitest";
import { washerMesh, generateShape } from "../../../src/mesh/primitives/index.js";
import { surfaceArea, signedVolume } from "../../../src/mesh/measure.js";
import { boundingBox } from "../../../src/mesh/model.js";
import { topology } from "../edge-census.js";
import { expectClosed, expectFaithful, type AnalyticSurface } from "./faithful.js";

function washerArea(a: number, b: number, t: number, e = 0): number {
  const flats = 2 * Math.PI * ((b - e) ** 2 - (a + e) ** 2);
  const walls = 2 * Math.PI * (a + b) * (t - 2 * e);
  // A quarter circle of radius e has length pi e / 2 and its centroid 2e/pi from the centre, outward.
  const arcs = 2 * (0.5 * Math.PI * e) * 2 * Math.PI * (b - e + (2 * e) / Math.PI) + 2 * (0.5 * Math.PI * e) * 2 * Math.PI * (a + e - (2 * e) / Math.PI);
  return flats + walls + arcs;
}

/** The washer about z: faces bottom, top, outer, inner and the four arcs "outer+", "outer-", "inner+", "inner-". */
function washer(a: number, b: number, t: number, e: number): AnalyticSurface {
  const arc = (f: string): [number, number] => [f.startsWith("outer") ? b - e : a + e, f.endsWith("+") ? t / 2 - e : -t / 2 + e];
  return {
    classify: (x, y, z) => {
      const r = Math.hypot(x, y);
      if (e > 0 && (r > b - e || r < a + e) && Math.abs(z) > t / 2 - e) return (r > b - e ? "outer" : "inner") + (z > 0 ? "+" : "-");
      const d = [Math.abs(z + t / 2), Math.abs(z - t / 2), Math.abs(r - b), Math.abs(r - a)];
      return ["bottom", "top", "outer", "inner"][d.indexOf(Math.min(...d))];
    },
    distance: (f, x, y, z) => {
      const r = Math.hypot(x, y);
      if (f === "bottom" || f === "top") return Math.abs(z - (f === "top" ? t / 2 : -t / 2)) + Math.max(0, a + e - r, r - (b - e));
      if (f === "outer" || f === "inner") return Math.abs(r - (f === "outer" ? b : a)) + Math.max(0, Math.abs(z) - (t / 2 - e));
      const [rc, zc] = arc(f);
      return Math.hypot(r - rc, z - zc) - e;
    },
    normal: (f, x, y, z) => {
      const r = Math.hypot(x, y);
      if (f === "bottom" || f === "top") return [0, 0, f === "top" ? 1 : -1];
      if (f === "outer" || f === "inner") { const s = f === "outer" ? 1 : -1; return [(s * x) / r, (s * y) / r, 0]; }
      const [rc, zc] = arc(f);
      const nr = (r - rc) / e;
      return [(nr * x) / r, (nr * y) / r, (z - zc) / e];
    },
    flat: (f) => f === "bottom" || f === "top",
  };
}

describe("washer", () => {
  it("is closed (genus 1) and outward, square or rounded, along its axis", () => {
    for (const [e, g] of [[0, 1], [0, 4], [0.1, 1], [0.25, 1]]) {
      const m = washerMesh({ innerRadius: 1, outerRadius: 3, thickness: 0.5, edgeRadius: e, grading: g, axis: "y", center: [0, 1, 0] });
      // Grading 4 makes strips along the edges; a rounding far below the panel size makes strips
      // along it (aspect about panel size / (pi e / 4), documented): 0.39 / 0.078 here.
      expectClosed(m, 1, g > 1 ? 0.1 : e === 0.1 ? 0.05 : 0.2);
      const b = boundingBox(m.positions);
      expect(b[1]).toBeCloseTo(0.75, 14);
      expect(b[4]).toBeCloseTo(1.25, 14);
    }
  });

  it("faces: 4 with square edges, 8 rounded, 6 when the rounding takes the walls; exact reference normals", () => {
    expect(expectFaithful(washerMesh({ innerRadius: 1, outerRadius: 3, thickness: 0.5, divisions: 32 }), washer(1, 3, 0.5, 0), 1e-14).sort())
      .toEqual(["bottom", "inner", "outer", "top"]);
    expect(expectFaithful(washerMesh({ innerRadius: 1, outerRadius: 3, thickness: 0.5, edgeRadius: 0.1, divisions: 32 }), washer(1, 3, 0.5, 0.1), 1e-14)).toHaveLength(8);
    expect(expectFaithful(washerMesh({ innerRadius: 1, outerRadius: 3, thickness: 0.5, edgeRadius: 0.25, divisions: 32 }), washer(1, 3, 0.5, 0.25), 1e-14).sort())
      .toEqual(["bottom", "inner+", "inner-", "outer+", "outer-", "top"]);
  });

  it("the reference has four times the steps along the section, even where the least 2 steps per quarter arc apply", () => {
    const sectionNodes = (p: Float64Array): number => {
      const keys = new Set<string>();
      for (let i = 0; i < p.length; i += 3) keys.add(`${Math.hypot(p[i], p[i + 1]).toFixed(9)},${p[i + 2].toFixed(9)}`);
      return keys.size;
    };
    // Panel size 0.8 against quarter arcs of 0.39: 2 steps on each arc both in the mesh and, by panel size alone, at a quarter of it.
    const m = washerMesh({ innerRadius: 1, outerRadius: 3, thickness: 0.5, edgeRadius: 0.25, panelSize: 0.8 });
    expect(sectionNodes(m.reference!.positions)).toBe(4 * sectionNodes(m.positions));
  });

  it("square edges are graded: the steps along each side shrink toward both ends by the grading ratio", () => {
    const m = washerMesh({ innerRadius: 1, outerRadius: 3, thickness: 1, panelSize: 0.25, grading: 5 });
    const radii = new Set<number>();
    for (let i = 0; i < m.positions.length; i += 3) if (m.positions[i + 2] === 0.5) radii.add(Number(Math.hypot(m.positions[i], m.positions[i + 1]).toFixed(12)));
    const r = [...radii].sort((x, y) => x - y);
    const steps = r.slice(1).map((x, i) => x - r[i]);
    expect(r[0]).toBeCloseTo(1, 12);
    expect(r[r.length - 1]).toBeCloseTo(3, 12);
    expect(Math.max(...steps) / Math.min(...steps)).toBeCloseTo(5, 6);
    expect(steps[0]).toBeLessThan(steps[Math.floor(steps.length / 2)]);
  });

  it("area converges to the closed form at second order, square and rounded", () => {
    for (const e of [0, 0.2]) {
      const exact = washerArea(1, 3, 0.5, e);
      // Panel sizes that put 2, 4, 8 steps on each quarter arc of radius 0.2.
      const err = [2, 4, 8].map((k) => Math.abs(surfaceArea(washerMesh({ innerRadius: 1, outerRadius: 3, thickness: 0.5, edgeRadius: e, panelSize: (0.5 * Math.PI * 0.2) / k })) / exact - 1));
      expect(err[0]).toBeLessThan(0.02);
      expect(err[1]).toBeLessThan(err[0] / 3);
      expect(err[2]).toBeLessThan(err[1] / 3);
    }
    // Volume of the square ring, pi (b^2 - a^2) t, from below (inscribed polygons).
    const v = signedVolume(washerMesh({ innerRadius: 1, outerRadius: 3, thickness: 0.5, divisions: 96 }));
    expect(v / (Math.PI * 8 * 0.5)).toBeGreaterThan(0.99);
  });

  it("a thin wide ring keeps bounded panels from the hole to the rim", () => {
    const m = washerMesh({ innerRadius: 0.2, outerRadius: 10, thickness: 0.1, panelSize: 0.5 });
    expect(topology(m).minShape).toBeGreaterThan(0.01);
    expectClosed(m, 1, 0.01);
  });

  it("through generateShape: inner below outer, edge radius at most half the thickness", () => {
    const m = generateShape("washer", { innerRadius: 2, outerRadius: "5", thickness: 1, edgeRadius: 0.5, divisions: 96 }, { metresPerUnit: 1e-3 });
    expect(Math.abs(surfaceArea(m) / (washerArea(2, 5, 1, 0.5) * 1e-6) - 1)).toBeLessThan(0.01);
    const describe = (p: string) => "--" + p.replace(/[A-Z]/g, (c) => "-" + c.toLowerCase());
    for (const [params, re] of [
      [{ innerRadius: 5, outerRadius: 2, thickness: 1 }, /--inner-radius must be less than --outer-radius/],
      [{ innerRadius: 1, outerRadius: 2, thickness: 1, edgeRadius: 0.6 }, /--edge-radius must be at most half the thickness and half the ring's width \(0\.5\), got 0\.6/],
      [{ innerRadius: 1, outerRadius: 2 }, /a washer needs --thickness/],
    ] as [Record<string, unknown>, RegExp][]) expect(() => generateShape("washer", params as never, { describe })).toThrow(re);
  });
});
