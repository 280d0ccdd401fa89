// Capacitance of CAD input: the same cube in three units gives the same C, and a sphere given
// as STEP converges toward the isolated sphere's C = 4πε0R (closed form; e.g. Jackson,
// Classical Electrodynamics, 3rd ed., §1.11).
import { describe, it, expect } from "vitest";
import { loadMeshFile } from "../../src/io/load.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { fixture } from "./helpers.js";

/** CODATA 2018 vacuum permittivity, F/m. */
const EPS0 = 8.8541878128e-12;

describe("CAD input solved", () => {
  it("the same cube written in m, mm and in gives the same capacitance", async () => {
    const c: number[] = [];
    for (const f of ["cube-m.step", "cube-mm.step", "cube-in.step"]) {
      const r = await extractMesh(loadMeshFile(fixture(`cad/${f}`), { unit: "mm" }).mesh, { solver: "direct" });
      c.push(r.maxwell[0]);
    }
    expect(c[1] / c[0]).toBeCloseTo(1, 9);
    expect(c[2] / c[0]).toBeCloseTo(1, 9);
    // A 1 m cube: C ≈ 0.66068·4πε0·(1 m) (value from memory, the unit cube's capacitance as
    // high-accuracy computations give it); twelve panels are coarse and Galerkin errs below.
    const ratio = c[0] / (4 * Math.PI * EPS0 * 0.6606785);
    expect(ratio).toBeLessThan(1);
    expect(ratio).toBeGreaterThan(0.85);
  });
  it("a sphere from STEP: C approaches 4πε0R as the panel size shrinks", async () => {
    const exact = 4 * Math.PI * EPS0 * 5e-3;
    const errs: number[] = [];
    for (const h of [2.5e-3, 1.25e-3]) {
      const m = loadMeshFile(fixture("cad/sphere.step"), { unit: "mm", panelSize: h }).mesh;
      const r = await extractMesh(m, { solver: "direct" });
      errs.push(Math.abs(r.maxwell[0] / exact - 1));
    }
    expect(errs[1]).toBeLessThan(errs[0]);
    expect(errs[1]).toBeLessThan(5e-3);
  });
});
