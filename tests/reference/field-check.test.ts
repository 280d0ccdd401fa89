/**
 * The field check per medium against Gauss's law on the coated sphere (closed form): a sphere
 * of radius a at V inside a concentric coat of radius b and relative permittivity εr carries
 * Q = C V with C = 4π ε0 / ((1/a − 1/b)/εr + 1/b) (two spherical capacitors in series), and the
 * field just outside it, in the coat, is E = D/(ε0 εr) = Q/(4π ε0 εr a²).
 */
import { describe, it, expect, afterAll } from "vitest";
import { sphereMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { extractionReport } from "../../src/report/json.js";
import { extractionSummary } from "../../src/report/extract-summary.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

const FOUR_PI_EPS0 = 4 * Math.PI * EPSILON_0;
afterAll(() => closeSharedPool());

const a = 1, b = 2, er = 4, V = 1e6;
const C = FOUR_PI_EPS0 / ((1 / a - 1 / b) / er + 1 / b);
const E = (C * V) / (FOUR_PI_EPS0 * er * a * a);

describe("field check per medium", () => {
  it("coated sphere: the field in the coat is Q/(4π ε0 εr a²) and is checked against the coat's own strength", async () => {
    const coatStrength = 20e6;
    const r = await extractMesh({ ...sphereMesh({ radius: a, level: 2 }), names: ["ball"] }, {
      potentials: [V], solver: "direct",
      dielectrics: [{ name: "coat", mesh: sphereMesh({ radius: b, level: 2 }), permittivity: er, breakdownField: coatStrength }],
    });
    const c = r.conductors[0];
    expect(c.medium).toBe("coat");
    expect(c.mediumBreakdownField).toBe(coatStrength);
    // Panel fields of a 320-panel icosphere scatter by a few per cent about the mean (panel sizes differ).
    let mean = 0, area = 0;
    for (let p = 0; p < r.panels.n; p++) { mean += r.excitation.field[p] * r.panels.areas[p]; area += r.panels.areas[p]; }
    mean /= area;
    expect(Math.abs(mean / E - 1)).toBeLessThan(2e-2);
    expect(Math.abs(c.criticalField / E - 1)).toBeLessThan(6e-2);
    expect(c.fieldRatio).toBeCloseTo(c.criticalField / coatStrength, 12);
    expect(r.media.map((m) => m.name)).toEqual(["background", "coat"]);
  });

  it("a bare and a coated conductor: each is checked in its own medium; a weak coat is the critical one", async () => {
    const bare = { ...sphereMesh({ radius: a, level: 2, center: [6, 0, 0] }), names: ["bare"] };
    const coated = { ...sphereMesh({ radius: a, level: 2 }), names: ["coated"] };
    const r = await extractMesh(concatMeshes([coated, bare]), {
      potentials: [V, V], solver: "direct", breakdownField: 3e6,
      dielectrics: [{ name: "coat", mesh: sphereMesh({ radius: b, level: 1 }), permittivity: er, breakdownField: 1e6 }],
    });
    const [cc, cb] = r.conductors;
    expect(cc.medium).toBe("coat");
    expect(cb.medium).toBe("background");
    expect(cb.mediumBreakdownField).toBe(3e6);
    expect(cc.fieldRatio).toBeCloseTo(cc.criticalField / 1e6, 12);
    expect(cb.fieldRatio).toBeCloseTo(cb.criticalField / 3e6, 12);
    const json = extractionReport(r, { version: "test", files: [], unit: "m", inputWarnings: [] }) as Record<string, any>;
    expect(json.conductors[0].fieldCheck.medium).toBe("coat");
    expect(json.conductors[0].fieldCheck.breakdownField).toBe(1e6);
    expect(json.fieldCheck.media).toEqual([
      { name: "background", relativePermittivity: 1, breakdownField: 3e6 },
      { name: "coat", relativePermittivity: er, breakdownField: 1e6 },
    ]);
    const text = extractionSummary(r, { unit: "m", unitAssumed: false, source: "test" });
    expect(text).toMatch(/coated: peak .*; critical in coat \(1\.00 MV\/m\)/);
    expect(text).toMatch(/bare: peak .*; critical in background \(3\.00 MV\/m\)/);
    expect(text).toMatch(/Breakdown strengths of solid and liquid insulation/);
  });

  it("a bad body strength is refused naming the body", async () => {
    await expect(extractMesh({ ...sphereMesh({ radius: a, level: 1 }), names: ["ball"] }, {
      dielectrics: [{ name: "coat", mesh: sphereMesh({ radius: b, level: 1 }), permittivity: er, breakdownField: -1 }],
    })).rejects.toThrow(/dielectric coat: breakdown field must be a positive number/);
  });
});
