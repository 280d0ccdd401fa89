import { describe, it, expect } from "vitest";
import fc from "fast-check";
import {
  sphereMesh, boxMesh, plateMesh, diskMesh, cylinderMesh, torusMesh, barMesh, generateShape,
  symmetricNodes, rimNodes, sphereLevel, icosphereEdge, diskLayout,
} from "../../src/mesh/primitives/index.js";
import { surfaceArea, signedVolume } from "../../src/mesh/measure.js";
import { boundingBox, triangleArea, type SurfaceMesh } from "../../src/mesh/model.js";
import { InputError } from "../../src/errors.js";
import { topology, euler } from "./edge-census.js";

function expectClosed(mesh: SurfaceMesh, genus = 0): void {
  const t = topology(mesh);
  expect(t.boundary).toBe(0);
  expect(t.nonManifold).toBe(0);
  expect(t.misoriented).toBe(0);
  expect(t.unused).toBe(0);
  expect(t.minShape).toBeGreaterThan(0.01);
  // Euler characteristic 2 - 2g of a closed orientable surface of genus g (common practice, topology of surfaces).
  expect(euler(mesh)).toBe(2 - 2 * genus);
  expect(signedVolume(mesh)).toBeGreaterThan(0);
}

function expectOpenSheet(mesh: SurfaceMesh): void {
  const t = topology(mesh);
  expect(t.nonManifold).toBe(0);
  expect(t.misoriented).toBe(0);
  expect(t.unused).toBe(0);
  expect(t.minShape).toBeGreaterThan(0.01);
  // A disk-like sheet has Euler characteristic 1.
  expect(euler(mesh)).toBe(1);
}

/** No triangle of a sheet in the xy plane is turned over: every normal has z > 0. */
function expectFacingZ(m: SurfaceMesh): void {
  const p = m.positions, t = m.triangles;
  let worst = Infinity;
  for (let i = 0; i < t.length; i += 3) {
    const a = 3 * t[i], b = 3 * t[i + 1], c = 3 * t[i + 2];
    worst = Math.min(worst, (p[b] - p[a]) * (p[c + 1] - p[a + 1]) - (p[b + 1] - p[a + 1]) * (p[c] - p[a]));
  }
  expect(worst).toBeGreaterThan(0);
}

describe("grading laws", () => {
  it("symmetric geometric nodes: ends exact, mirror-symmetric, ratio largest/smallest as asked, constant neighbour ratio", () => {
    for (const n of [3, 4, 7, 10]) {
      const s = symmetricNodes(n, 5);
      expect(s[0]).toBe(-1);
      expect(s[n]).toBe(1);
      for (let i = 0; i <= n; i++) expect(s[n - i] + s[i]).toBe(0);
      const h = Array.from({ length: n }, (_, i) => s[i + 1] - s[i]);
      expect(Math.max(...h) / Math.min(...h)).toBeCloseTo(5, 10);
      const m = Math.ceil(n / 2);
      const q = Math.pow(5, 1 / (m - 1));
      for (let i = 0; i + 1 < m; i++) expect(h[i + 1] / h[i]).toBeCloseTo(q, 10);
    }
  });
  it("ratio 1 is uniform", () => {
    const s = symmetricNodes(6, 1);
    for (let i = 0; i <= 6; i++) expect(s[i]).toBeCloseTo(-1 + i / 3, 14);
  });
  it("rim nodes shrink toward t = 1 by the stated ratio", () => {
    const t = rimNodes(8, 4);
    expect(t[0]).toBe(0);
    expect(t[8]).toBe(1);
    const h = Array.from({ length: 8 }, (_, i) => t[i + 1] - t[i]);
    for (let i = 0; i + 1 < 8; i++) expect(h[i + 1]).toBeLessThan(h[i]);
    expect(h[0] / h[7]).toBeCloseTo(4, 10);
  });
});

describe("sphere", () => {
  it("has 20 * 4^L triangles, all vertices on the sphere, closed and outward", () => {
    for (const [L, n] of [[0, 20], [3, 1280], [4, 5120]]) {
      const m = sphereMesh({ radius: 2, level: L, center: [1, -2, 3] });
      expect(m.triangles.length / 3).toBe(n);
      const p = m.positions;
      for (let i = 0; i < p.length; i += 3) expect(Math.hypot(p[i] - 1, p[i + 1] + 2, p[i + 2] - 3)).toBeCloseTo(2, 12);
      expectClosed(m);
    }
  });
  it("panel areas stay within a factor 1.31 of each other (measured 1.30 from level 4 on)", () => {
    const m = sphereMesh({ radius: 1, level: 5 });
    let lo = Infinity, hi = 0;
    for (let t = 0; t < m.triangles.length / 3; t++) { const a = triangleArea(m, t); lo = Math.min(lo, a); hi = Math.max(hi, a); }
    expect(hi / lo).toBeLessThan(1.31);
  });
  it("level 6 gives 81920 triangles", () => {
    expect(sphereMesh({ radius: 1, level: 6 }).triangles.length / 3).toBe(81920);
  });
  it("chooses the level from a panel count or a panel size", () => {
    expect(sphereLevel({ radius: 1, panels: 1280 })).toBe(3);
    expect(sphereLevel({ radius: 1, panels: 1281 })).toBe(4);
    const L = sphereLevel({ radius: 1, panelSize: 0.1 });
    expect(icosphereEdge(1, L)).toBeLessThanOrEqual(0.1);
    expect(icosphereEdge(1, L - 1)).toBeGreaterThan(0.1);
  });
  it("measured mean edge matches the estimate used to pick the level within 10%", () => {
    const m = sphereMesh({ radius: 1, level: 4 });
    const t = m.triangles, p = m.positions;
    let sum = 0;
    for (let i = 0; i < t.length; i++) {
      const a = 3 * t[i], b = 3 * t[i - (i % 3) + ((i % 3) + 1) % 3];
      sum += Math.hypot(p[b] - p[a], p[b + 1] - p[a + 1], p[b + 2] - p[a + 2]);
    }
    expect(sum / t.length / icosphereEdge(1, 4)).toBeGreaterThan(0.9);
    expect(sum / t.length / icosphereEdge(1, 4)).toBeLessThan(1.1);
  });
});

describe("box and bar", () => {
  it("closed, outward, exact bounds, counts 4(nx ny + ny nz + nz nx)", () => {
    const m = boxMesh({ size: [1, 2, 3], divisions: [2, 3, 5], grading: 3, center: [0.5, 0, -1] });
    expect(m.triangles.length / 3).toBe(4 * (6 + 15 + 10));
    expectClosed(m);
    expect(Array.from(boundingBox(m.positions))).toEqual([0, -1, -2.5, 1, 1, 0.5]);
  });
  it("a panel size gives ceil(L / h) divisions per side", () => {
    const m = boxMesh({ size: [1, 0.5, 0.25], panelSize: 0.25 });
    expect(m.triangles.length / 3).toBe(4 * (4 * 2 + 2 * 1 + 1 * 4));
  });
  it("every graded side keeps the geometric law (vertex coordinates of an edge)", () => {
    const m = boxMesh({ size: [2, 2, 2], divisions: 6, grading: 4 });
    const xs = new Set<number>();
    for (let i = 0; i < m.positions.length; i += 3) xs.add(m.positions[i]);
    const sorted = [...xs].sort((a, b) => a - b);
    expect(sorted).toHaveLength(7);
    const h = sorted.slice(1).map((x, i) => x - sorted[i]);
    expect(Math.max(...h) / Math.min(...h)).toBeCloseTo(4, 10);
  });
  it("property: random sizes and divisions always give a closed box of volume abc", () => {
    fc.assert(fc.property(
      fc.tuple(fc.double({ min: 0.01, max: 100, noNaN: true }), fc.double({ min: 0.01, max: 100, noNaN: true }), fc.double({ min: 0.01, max: 100, noNaN: true })),
      fc.tuple(fc.integer({ min: 1, max: 6 }), fc.integer({ min: 1, max: 6 }), fc.integer({ min: 1, max: 6 })),
      fc.double({ min: 1, max: 20, noNaN: true }),
      (size, div, g) => {
        const m = boxMesh({ size, divisions: div, grading: g });
        const t = topology(m);
        return t.boundary === 0 && t.misoriented === 0 && t.nonManifold === 0 && t.minShape > 0 &&
          Math.abs(signedVolume(m) / (size[0] * size[1] * size[2]) - 1) < 1e-12;
      }), { numRuns: 60 });
  });
  it("bar runs along its axis with thickness along z for x and y", () => {
    const bx = boundingBox(barMesh({ length: 10, width: 1, thickness: 0.1 }).positions);
    expect(Array.from(bx)).toEqual([-5, -0.5, -0.05, 5, 0.5, 0.05]);
    const by = boundingBox(barMesh({ length: 10, width: 1, thickness: 0.1, axis: "y" }).positions);
    expect(Array.from(by)).toEqual([-0.5, -5, -0.05, 0.5, 5, 0.05]);
    const bz = barMesh({ length: 10, width: 1, thickness: 0.1, axis: "z", panelSize: 0.5 });
    expect(Array.from(boundingBox(bz.positions))).toEqual([-0.5, -0.05, -5, 0.5, 0.05, 5]);
    expectClosed(bz);
    // Default panel size is a quarter of the width: 40 x 4 x 1 divisions.
    expect(barMesh({ length: 10, width: 1, thickness: 0.1 }).triangles.length / 3).toBe(4 * (40 * 4 + 4 * 1 + 1 * 40));
  });
});

describe("open sheets", () => {
  it("plate: flat, open, graded, turned to its normal axis", () => {
    const m = plateMesh({ size: [2, 1], divisions: [8, 4], grading: 3, axis: "x", center: [1, 0, 0] });
    expectOpenSheet(m);
    for (let i = 0; i < m.positions.length; i += 3) expect(m.positions[i]).toBe(1);
    expect(topology(m).boundary).toBe(2 * (8 + 4));
  });
  it("disk: rings graded toward the rim, segment counts never decrease outward", () => {
    const layout = diskLayout(1, 10, 4);
    for (let k = 1; k < 10; k++) {
      expect(layout.segments[k]).toBeGreaterThanOrEqual(layout.segments[k - 1]);
      expect(layout.radii[k]).toBeGreaterThan(layout.radii[k - 1]);
    }
    const m = diskMesh({ radius: 1, divisions: 10, grading: 4 });
    expectOpenSheet(m);
    expect(topology(m).boundary).toBe(layout.segments[9]);
    for (let i = 0; i < m.positions.length; i += 3) expect(m.positions[i + 2]).toBe(0);
    expectFacingZ(m);
  });
  it("uniform disk starts with a hexagon and well-shaped triangles", () => {
    const layout = diskLayout(1, 8, 1);
    expect(layout.segments[0]).toBe(6);
    // The hexagonal pattern's triangles are near equilateral (sqrt(3)/4 = 0.433 for equilateral, 0.25 for a right isosceles triangle).
    expect(topology(diskMesh({ radius: 1, divisions: 8 })).minShape).toBeGreaterThan(0.25);
    for (const [n, g] of [[3, 1], [10, 4], [20, 10], [40, 100]]) {
      const m = diskMesh({ radius: 1, divisions: n, grading: g });
      expectFacingZ(m);
      expect(topology(m).minShape).toBeGreaterThan(0.2);
    }
  });
});

describe("cylinder and torus", () => {
  it("cylinder: closed, caps share the side's rims", () => {
    for (const g of [1, 4]) {
      const m = cylinderMesh({ radius: 1, height: 3, divisions: 24, grading: g, axis: "y", center: [0, 1, 0] });
      expectClosed(m);
      const b = boundingBox(m.positions);
      expect(b[1]).toBeCloseTo(-0.5, 14);
      expect(b[4]).toBeCloseTo(2.5, 14);
    }
  });
  it("torus: closed surface of genus 1, outward", () => {
    const m = torusMesh({ majorRadius: 2, minorRadius: 0.5, divisions: [24, 8] });
    expect(m.triangles.length / 3).toBe(2 * 24 * 8);
    expectClosed(m, 1);
  });
});

describe("generateShape", () => {
  it("dispatches with unit scaling", () => {
    const m = generateShape("sphere", { radius: "2", level: 2 }, { metresPerUnit: 1e-3 });
    expect(m.triangles.length / 3).toBe(320);
    expect(Math.hypot(m.positions[0], m.positions[1], m.positions[2])).toBeCloseTo(2e-3, 15);
    const b = generateShape("box", { size: [1, 2, 3], grading: 4, divisions: 3, name: "lid" }, { metresPerUnit: 1e-3 });
    expect(b.names).toEqual(["lid"]);
    expect(signedVolume(b)).toBeCloseTo(6e-9, 20);
    expect(surfaceArea(generateShape("plate", { size: "3,4" }))).toBeCloseTo(12, 12);
  });
  const bad: [string, Record<string, unknown>, RegExp][] = [
    ["cone", { radius: 1 }, /unknown shape "cone"/],
    ["sphere", {}, /needs --radius/],
    ["sphere", { radius: "-1" }, /--radius must be positive/],
    ["sphere", { radius: "abc" }, /--radius "abc" is not a number/],
    ["sphere", { radius: 1, level: 11 }, /--level must be a whole number/],
    ["sphere", { radius: 1, level: 2, panels: 100 }, /only one of --level and --panels/],
    ["sphere", { radius: 1, grading: 2 }, /--grading does not apply to a sphere/],
    ["box", { size: "1,2" }, /--size takes 3 values, got 2/],
    ["box", { size: "1,2,3", grading: 0.5 }, /--grading must be at least 1/],
    ["box", { size: "1,2,3", divisions: 2.5 }, /--divisions must be whole numbers/],
    ["box", { size: "1,2,3", divisions: 10000 }, /more than the limit.*--panel-size/],
    ["torus", { majorRadius: 1, minorRadius: 2 }, /--minor-radius must be less than --major-radius/],
    ["cylinder", { radius: 1, height: 1, divisions: 2 }, /--divisions must be at least 3/],
    ["disk", { radius: 1, axis: "w" }, /--axis must be x, y or z/],
    ["box", { size: "1,2,3", center: "1,2" }, /--center takes 3 values/],
  ];
  it.each(bad)("%s %j is refused with a message naming the option", (shape, params, re) => {
    const describe = (p: string) => "--" + p.replace(/[A-Z]/g, (c) => "-" + c.toLowerCase());
    let caught: unknown;
    try { generateShape(shape, params as never, { describe }); } catch (e) { caught = e; }
    expect(caught).toBeInstanceOf(InputError);
    expect((caught as Error).message).toMatch(re);
  });
});
