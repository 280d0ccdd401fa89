// Capsule: a cylinder of radius R and straight length L with hemispherical ends; area
// 2 pi R L + 4 pi R^2 (common practice). With L = 0 it is a sphere, whose capacitance
// 4 pi eps0 R is the closed form checked through extractMesh.
import { describe, it, expect, afterAll } from "vitest";
import { capsuleMesh, generateShape, sphereMesh } from "../../../src/mesh/primitives/index.js";
import { surfaceArea } from "../../../src/mesh/measure.js";
import { boundingBox } from "../../../src/mesh/model.js";
import { extractMesh } from "../../../src/extract/extract-mesh.js";
import { EPSILON_0 } from "../../../src/extract/constants.js";
import { closeSharedPool } from "../../../src/linalg/pool.js";
import { expectClosed, expectFaithful, type AnalyticSurface } from "./faithful.js";

afterAll(async () => { await closeSharedPool(); });

/** The capsule along z centred at the origin: "lower", "side", "upper". */
function capsule(R: number, L: number): AnalyticSurface {
  const zc = (f: string): number => (f === "lower" ? -L / 2 : L / 2);
  return {
    classify: (_x, _y, z) => (z < -L / 2 ? "lower" : z > L / 2 ? "upper" : "side"),
    distance: (f, x, y, z) => (f === "side" ? Math.hypot(x, y) - R : Math.hypot(x, y, z - zc(f)) - R),
    normal: (f, x, y, z) => {
      if (f === "side") { const r = Math.hypot(x, y); return [x / r, y / r, 0]; }
      return [x / R, y / R, (z - zc(f)) / R];
    },
    flat: () => false,
  };
}

describe("capsule", () => {
  it("is closed and outward with near-square panels, of the stated length, along its axis", () => {
    // [length, segments, least shape]: a straight part far shorter than a panel is one band of
    // long panels (aspect about panel / length: documented), 3 segments is a crude prism.
    for (const [L, m, shape] of [[3, 32, 0.2], [0, 16, 0.2], [0.5, 12, 0.2], [0.01, 12, 0.005], [10, 3, 0.05]]) {
      const c = capsuleMesh({ radius: 1, length: L, divisions: m });
      expectClosed(c, 0, shape);
      const b = boundingBox(c.positions);
      expect(b[2]).toBeCloseTo(-1 - L / 2, 14);
      expect(b[5]).toBeCloseTo(1 + L / 2, 14);
    }
    const x = boundingBox(capsuleMesh({ radius: 0.5, length: 4, axis: "x", center: [1, 2, 3] }).positions);
    expect(x[0]).toBeCloseTo(1 - 2.5, 14);
    expect(x[3]).toBeCloseTo(1 + 2.5, 14);
    expect(x[4]).toBeCloseTo(2.5, 2);
  });

  it("faces: two hemispheres and the cylinder (none when L = 0), exact reference normals", () => {
    expect(expectFaithful(capsuleMesh({ radius: 1.5, length: 4, divisions: 20 }), capsule(1.5, 4), 1e-14)).toEqual(["lower", "side", "upper"]);
    expect(expectFaithful(capsuleMesh({ radius: 1.5, length: 0, divisions: 20 }), capsule(1.5, 0), 1e-14)).toEqual(["lower", "upper"]);
  });

  it("area converges to 2 pi R L + 4 pi R^2 at second order", () => {
    const R = 1, L = 3, exact = 2 * Math.PI * R * L + 4 * Math.PI * R * R;
    const err = [16, 32, 64].map((m) => Math.abs(surfaceArea(capsuleMesh({ radius: R, length: L, divisions: m })) / exact - 1));
    expect(err[0]).toBeLessThan(0.03);
    expect(err[1]).toBeLessThan(err[0] / 3.5);
    expect(err[2]).toBeLessThan(err[1] / 3.5);
    const byPanel = capsuleMesh({ radius: R, length: L, panelSize: (2 * Math.PI) / 32 });
    expect(byPanel.triangles.length).toBe(capsuleMesh({ radius: R, length: L, divisions: 32 }).triangles.length);
  });

  it("of zero length is a sphere: capacitance 4 pi eps0 R within the error of a mesh of its size", async () => {
    const R = 1e-3;
    const c = capsuleMesh({ radius: R, length: 0, divisions: 20 });
    const ball = sphereMesh({ radius: R, level: 2 });
    const exact = 4 * Math.PI * EPSILON_0 * R;
    const [rc, rs] = [await extractMesh(c), await extractMesh(ball)];
    const ec = Math.abs(rc.maxwell[0] / exact - 1), es = Math.abs(rs.maxwell[0] / exact - 1);
    // An inscribed polyhedron of some hundreds of panels: the icosphere of 320 is within about 1 %.
    expect(c.triangles.length / 3).toBeLessThan(500);
    expect(ec).toBeLessThan(0.015);
    expect(ec).toBeLessThan(1.5 * es);
    // Second order in the panel size: measured -1.48e-2, -3.79e-3 at 20 and 40 segments (252, 1016 panels).
    const finer = await extractMesh(capsuleMesh({ radius: R, length: 0, divisions: 40 }));
    expect(Math.abs(finer.maxwell[0] / exact - 1)).toBeLessThan(ec / 3);
    // A longer rod holds more charge at the same potential.
    const rod = await extractMesh(capsuleMesh({ radius: R, length: 2 * R, divisions: 20 }));
    expect(rod.maxwell[0]).toBeGreaterThan(1.2 * rc.maxwell[0]);
  });

  it("through generateShape, lengths in the caller's unit; a negative length is refused", () => {
    const m = generateShape("capsule", { radius: "2", length: "0" }, { metresPerUnit: 1e-3 });
    expect(m.names).toEqual(["capsule"]);
    expect(Math.abs(surfaceArea(m) / (4 * Math.PI * 4e-6) - 1)).toBeLessThan(0.01);
    expect(() => generateShape("capsule", { radius: 1, length: -1 }, { describe: (p) => "--" + p })).toThrow(/--length must be 0 or more/);
    expect(() => generateShape("capsule", { radius: 1 }, { describe: (p) => "--" + p })).toThrow(/a capsule needs --length/);
    expect(() => generateShape("capsule", { radius: 1, length: 1, divisions: 2 }, { describe: (p) => "--" + p })).toThrow(/--divisions must be at least 3/);
  });
});
