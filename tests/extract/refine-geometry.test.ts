/**
 * Refinement that moves the geometry: the lower-bound claim only over nested levels, and a
 * sphere given with its true surface converging at second order to C = 4π ε0 R (exact).
 */
import { describe, it, expect, afterAll } from "vitest";
import { sphereMesh, boxMesh } from "../../src/mesh/primitives/index.js";
import type { ReferenceSurface, SurfaceMesh } from "../../src/mesh/model.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { extractionReport } from "../../src/report/json.js";
import { extractionSummary } from "../../src/report/extract-summary.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

const FOUR_PI_EPS0 = 4 * Math.PI * EPSILON_0;
afterAll(() => closeSharedPool());

const ctx = { unit: "m" as const, unitAssumed: false, source: "test" };

/** An icosphere at `level` with the exact normals, one face: the true sphere as data. */
function sphereReference(R: number, level: number): ReferenceSurface {
  const m = sphereMesh({ radius: R, level });
  return { positions: m.positions, normals: m.positions.map((x) => x / R), triangles: m.triangles, face: new Uint32Array(m.triangles.length / 3), faceCount: 1 };
}

describe("the lower-bound claim", () => {
  it("is made for a flat-faced box under refine 1 (nested levels)", async () => {
    const r = await extractMesh(boxMesh({ size: [1, 1, 1], divisions: 3 }), { refine: 1, solver: "direct" });
    expect(r.accuracy!.nested).toBe(true);
    expect(r.accuracy!.displacement).toBe(0);
    expect(r.accuracy!.lowerBound).toBe(true);
    // And it holds: the finest diagonal is under the refined value and the published one (Hwang & Mascagni 2004: 0.66068).
    expect(r.accuracy!.levels[1].maxwell[0]).toBeGreaterThan(r.accuracy!.levels[0].maxwell[0]);
    expect(r.accuracy!.levels[1].maxwell[0]).toBeLessThan(0.66068 * FOUR_PI_EPS0);
    const text = extractionSummary(r, ctx);
    expect(text).toMatch(/is a lower bound for/);
    // Printed with the digits of the matrix entry, rounded down so that it stays a bound.
    const bound = /the finest-mesh diagonal (\S+) (\S?)F is a lower bound/.exec(text)!;
    const scale: Record<string, number> = { "": 1, m: 1e-3, µ: 1e-6, n: 1e-9, p: 1e-12, f: 1e-15 };
    const printed = Number(bound[1]) * scale[bound[2]];
    expect(printed).toBeLessThanOrEqual(r.accuracy!.levels[1].maxwell[0]);
    const entry = new RegExp(`^\\s*\\S+\\s+(\\d[\\d.]*) ${bound[2]}F`, "m").exec(text.slice(text.indexOf("Maxwell")))!;
    expect(bound[1].replace(/\D/g, "").length).toBe(entry[1].replace(/\D/g, "").length);
    const json = extractionReport(r, { version: "test", files: [], unit: "m", inputWarnings: [] }) as Record<string, any>;
    expect(json.accuracy.lowerBound).toBe(true);
    expect(json.accuracy.nested).toBe(true);
  });

  it("is not made for a sphere, whose refinement moves points onto the curved surface", async () => {
    const r = await extractMesh(sphereMesh({ radius: 1, level: 1 }), { refine: 1, solver: "direct" });
    expect(r.accuracy!.nested).toBe(false);
    expect(r.accuracy!.displacement).toBeGreaterThan(0.01);
    expect(r.accuracy!.lowerBound).toBe(false);
    const text = extractionSummary(r, ctx);
    expect(text).not.toMatch(/lower bound for/);
    expect(text).toMatch(/refinement moved the panels toward the curved surface/);
    const json = extractionReport(r, { version: "test", files: [], unit: "m", inputWarnings: [] }) as Record<string, any>;
    expect(json.accuracy.lowerBound).toBe(false);
    expect(json.accuracy.refinementDisplacement).toBeGreaterThan(0.01);
  });
});

describe("a sphere with its reference surface", () => {
  it("converges at second order to 4π ε0 R under refine 2 (exact; the mesh's own PN surface converges elsewhere)", async () => {
    const R = 0.5, exact = FOUR_PI_EPS0 * R;
    const ref = sphereReference(R, 5);
    const coarse: SurfaceMesh = { ...sphereMesh({ radius: R, level: 1 }), reference: ref };
    coarse.faces = new Uint32Array(coarse.triangles.length / 3);
    const r = await extractMesh(coarse, { refine: 2, solver: "direct" });
    const e = r.accuracy!.levels.map((l) => (exact - l.maxwell[0]) / exact);
    const ratios = e.slice(1).map((x, i) => e[i] / x);
    const plain = await extractMesh(sphereMesh({ radius: R, level: 1 }), { refine: 2, solver: "direct" });
    const ePlain = plain.accuracy!.levels.map((l) => (exact - l.maxwell[0]) / exact);
    console.log(`sphere C error by level (80, 320, 1280 panels), reference: ${e.map((x) => x.toExponential(3)).join(" ")} ratios ${ratios.map((q) => q.toFixed(2)).join(" ")}; extrapolated ${((r.maxwell[0] - exact) / exact).toExponential(2)}` +
      `; mesh alone: ${ePlain.map((x) => x.toExponential(3)).join(" ")}, extrapolated ${((plain.maxwell[0] - exact) / exact).toExponential(2)}`);
    // Second order: each level's error a quarter of the last (inscribed facets, O(h^2)).
    for (const q of ratios) { expect(q).toBeGreaterThan(3.3); expect(q).toBeLessThan(4.7); }
    // The extrapolated value is within its own estimate of the exact one, and far closer than the finest level.
    const errX = Math.abs(r.maxwell[0] - exact) / exact;
    expect(errX).toBeLessThan(r.accuracy!.richardson.relativeError);
    expect(errX).toBeLessThan(Math.abs(e[2]) / 10);
    expect(r.accuracy!.lowerBound).toBe(false);
  });
});
