/**
 * Peak fields: singular (at a sharp edge) or converged, with the growth exponent or the error.
 *
 * Sources: an isolated sphere of radius R at V has the uniform surface field V/R (Gauss's law,
 * closed form). Near an edge of opening angle β the charge density behaves as ρ^(π/β − 1)
 * (Jackson, Classical Electrodynamics, 3rd ed., §2.11): ρ^(−1/2) at a thin sheet's rim (β = 2π),
 * ρ^(−1/3) at a right-angle solid edge (β = 3π/2); a panel of size h touching the edge averages
 * σ over it, so its field grows as h^(−p) with the same p. A plate's and a cube's peak lie at a
 * corner, where the singularity is stronger: σ ~ r^(−0.70) at the corner of a quarter-plane sheet
 * and r^(−0.55) at a cube's vertex (the vertex exponents 0.297 and 0.454 of the Laplace problem
 * in those cones, from memory of the corner-singularity literature, not from a single source).
 */
import { describe, it, expect, afterAll } from "vitest";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { generateShape } from "../../src/mesh/primitives/index.js";
import type { SurfaceMesh } from "../../src/mesh/model.js";
import { sharpPanels, assessPeak, peakSpread } from "../../src/extract/peak-field.js";
import { extractionReport } from "../../src/report/json.js";
import { markdownReport, reportData } from "../../src/report/csv.js";
import { extractionSummary, fieldCheckLine } from "../../src/report/extract-summary.js";
import type { ConductorResult, ExtractionResult } from "../../src/extract/result.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

afterAll(() => closeSharedPool());
const ctx = { unit: "m" as const, unitAssumed: false, source: "test" };

/** The strongest panel field among the panels that touch the mesh vertex nearest `point`. */
function fieldNear(r: ExtractionResult, point: [number, number, number]): number {
  const pos = r.mesh.positions, tr = r.mesh.triangles, f = r.excitation.field;
  let v0 = 0, best = Infinity;
  for (let v = 0; v < pos.length / 3; v++) {
    const d = Math.hypot(pos[3 * v] - point[0], pos[3 * v + 1] - point[1], pos[3 * v + 2] - point[2]);
    if (d < best) { best = d; v0 = v; }
  }
  let m = 0;
  for (let t = 0; t < f.length; t++) if (tr[3 * t] === v0 || tr[3 * t + 1] === v0 || tr[3 * t + 2] === v0) m = Math.max(m, f[t]);
  return m;
}

const count = (a: Uint8Array) => a.reduce((s, x) => s + x, 0);

describe("sharp panels", () => {
  it("a sphere has none, with its reference surface or without (mesh creases below the feature angle)", () => {
    const ball = generateShape("sphere", { radius: 1, level: 2 });
    expect(count(sharpPanels(ball, [true]))).toBe(0);
    const bare: SurfaceMesh = { positions: ball.positions, triangles: ball.triangles, conductor: ball.conductor, names: ball.names };
    expect(count(sharpPanels(bare, [true]))).toBe(0);
  });

  it("a box's panels along its edges and a plate's along its rim are sharp, the middle ones are not", () => {
    // 4 × 4 squares per face, two panels each: only the 8 panels of the inner 2 × 2 squares touch no edge.
    const box = generateShape("box", { size: [1, 1, 1], divisions: 4 });
    expect(count(sharpPanels(box, [true]))).toBe(6 * (32 - 8));
    const plate = generateShape("plate", { size: [1, 1], divisions: 4 });
    expect(count(sharpPanels(plate, [false]))).toBe(32 - 8);
    // A closed conductor's rim is a symmetry cut, not an edge.
    expect(count(sharpPanels(plate, [true]))).toBe(0);
  });

  it("a half plate's rim along its symmetry plane is the cut, not an edge", () => {
    const plate = generateShape("plate", { size: [1, 1], divisions: 4 });
    const sharp = sharpPanels(plate, [false], [{ axis: 0, offset: -0.5 }]);
    // Expected: the panels with a corner on the other three sides (the cut's end points lie on them too).
    const p = plate.positions, tr = plate.triangles;
    const onRim = (v: number) => Math.abs(Math.abs(p[3 * v + 1]) - 0.5) < 1e-12 || Math.abs(p[3 * v] - 0.5) < 1e-12;
    for (let t = 0; t < tr.length / 3; t++) expect(sharp[t]).toBe(onRim(tr[3 * t]) || onRim(tr[3 * t + 1]) || onRim(tr[3 * t + 2]) ? 1 : 0);
    expect(count(sharp)).toBeLessThan(24);
  });

  it("a filleted box: faces meeting tangentially are smooth, though the mesh creases there", () => {
    const m = generateShape("box", { size: [1, 1, 1], fillet: 0.2, divisions: 3 });
    expect(count(sharpPanels(m, [true]))).toBe(0);
    // Without the reference the coarse fillet's facets crease above the feature angle.
    const bare: SurfaceMesh = { positions: m.positions, triangles: m.triangles, conductor: m.conductor, names: m.names };
    expect(count(sharpPanels(bare, [true]))).toBeGreaterThan(0);
  });
});

describe("assessPeak", () => {
  it("converged: the larger of the first-order correction and the spread; singular: log2 of the last ratio", () => {
    const big = assessPeak([1.1, 1.0], false, 0.02);
    expect(big.singular).toBe(false);
    expect(big.error).toBeCloseTo(0.1, 12);
    expect(big.growth).toBeNull();
    expect(assessPeak([1.01, 1.0], false, 0.02)).toEqual({ singular: false, error: 0.02, growth: null });
    const s = assessPeak([1, 1.5, 2], true, 0.3);
    expect(s.error).toBeNull();
    expect(s.growth).toBeCloseTo(Math.log2(2 / 1.5), 12);
    expect(assessPeak([2], false, 0.1)).toEqual({ singular: false, error: null, growth: null });
  });

  it("peakSpread is the range of the field over the panels sharing a corner, relative to the panel's", () => {
    // Two triangles sharing an edge, a third apart.
    const mesh: SurfaceMesh = {
      positions: new Float64Array([0, 0, 0, 1, 0, 0, 0, 1, 0, 1, 1, 0, 5, 5, 0, 6, 5, 0, 5, 6, 0]),
      triangles: new Uint32Array([0, 1, 2, 1, 3, 2, 4, 5, 6]), conductor: new Uint32Array(3), names: ["a"],
    };
    expect(peakSpread([2, 1.5, 0.1], mesh, 0)).toBeCloseTo(0.25, 12);
  });
});

describe("peak field of a run", () => {
  it("a sphere's peak converges: not singular, and the error covers the true error (E = V/R) within 4×", async () => {
    for (const level of [1, 2]) {
      const r = await extractMesh(generateShape("sphere", { radius: 0.01, level }), { potentials: [100], refine: 1 });
      const c = r.conductors[0];
      const exact = 100 / 0.01;
      const trueError = Math.abs(c.peakField / exact - 1);
      expect(c.peakFieldSingular).toBe(false);
      expect(c.peakFieldGrowth).toBeNull();
      // Recovered peaks (recoveredPeaks), measured: level 1 estimate 3.65e-2 against 1.13e-2 (3.2×),
      // level 2 6.6e-3 against 4.75e-3 (1.4×); the largest panel field was 2.8e-2 and 1.05e-2 off.
      expect(c.peakFieldError!).toBeGreaterThanOrEqual(trueError);
      expect(c.peakFieldError!).toBeLessThan(4 * trueError);
    }
  });

  it("without refinement the classification is there, the error and growth are not", async () => {
    const r = await extractMesh(generateShape("plate", { size: [1, 1], divisions: 4 }), { potentials: [1] });
    expect(r.conductors[0].peakFieldSingular).toBe(true);
    expect(r.conductors[0].peakFieldError).toBeNull();
    expect(r.conductors[0].peakFieldGrowth).toBeNull();
  });

  it("a plate's peak is singular and grows as the quarter-plane corner's h^(−0.70); its rim's middle as h^(−1/2)", async () => {
    const r = await extractMesh(generateShape("plate", { size: [1, 1], divisions: 4 }), { potentials: [1], refine: 2 });
    const c = r.conductors[0];
    expect(c.peakFieldSingular).toBe(true);
    expect(c.peakFieldError).toBeNull();
    // Measured 0.664 (refine 1), 0.688 (refine 2), 0.696 (refine 3): rising toward 0.70.
    expect(Math.abs(c.peakFieldGrowth! - 0.70)).toBeLessThan(0.06);
    // At the middle of a side (the same physical place on 4, 8, 16 divisions), measured 0.447, 0.479:
    // approaching 1/2 from below as the panels enter the asymptotic range.
    const at = [4, 8, 16].map(async (divisions) => fieldNear(await extractMesh(generateShape("plate", { size: [1, 1], divisions }), { potentials: [1] }), [0, -0.5, 0]));
    const e = await Promise.all(at);
    const p = Math.log2(e[2] / e[1]);
    expect(Math.abs(p - 0.5)).toBeLessThan(0.05);
    expect(p).toBeGreaterThan(Math.log2(e[1] / e[0]));
  });

  it("a cube's peak is singular and grows as the vertex's h^(−0.55); an edge's middle as h^(−1/3)", async () => {
    const r = await extractMesh(generateShape("box", { size: [1, 1, 1], divisions: 3 }), { potentials: [1], refine: 2 });
    const c = r.conductors[0];
    expect(c.peakFieldSingular).toBe(true);
    // Measured 0.527 from 3 divisions (refine 2), 0.536 from 4, 0.542 from 4 with refine 3.
    expect(Math.abs(c.peakFieldGrowth! - 0.55)).toBeLessThan(0.05);
    const at = [4, 8].map(async (divisions) => fieldNear(await extractMesh(generateShape("box", { size: [1, 1, 1], divisions }), { potentials: [1] }), [0, -0.5, -0.5]));
    const e = await Promise.all(at);
    // Measured 0.305 (4 → 8), 0.324 (8 → 16).
    expect(Math.abs(Math.log2(e[1] / e[0]) - 1 / 3)).toBeLessThan(0.05);
  });

  it("a filleted box with its fillet resolved: the peak converges", async () => {
    const r = await extractMesh(generateShape("box", { size: [1, 1, 1], fillet: 0.2, divisions: 3 }), { potentials: [1], refine: 1 });
    const c = r.conductors[0];
    expect(c.peakFieldSingular).toBe(false);
    expect(c.peakFieldError).toBeGreaterThan(0);
    expect(c.peakFieldError).toBeLessThan(0.2);
  });
});

describe("reports", () => {
  const base = {
    name: "hv", peakField: 4e6, peakFieldAt: [0, 0, 0.01] as [number, number, number], fieldRatio: 4e6 / 3e6, criticalField: 4e6,
    criticalFieldAt: [0, 0, 0.01] as [number, number, number], medium: "background", mediumBreakdownField: 3e6,
  } as ConductorResult;

  it("the field check: a converged peak gets its verdict and error, a singular one its own line and no verdict", () => {
    const converged = fieldCheckLine({ ...base, peakFieldSingular: false, peakFieldError: 0.012, peakFieldGrowth: null }, false, "m");
    expect(converged).toContain("EXCEEDS the breakdown field");
    expect(converged).toContain("± 1.2 %");
    const singular = fieldCheckLine({ ...base, peakFieldSingular: true, peakFieldError: null, peakFieldGrowth: 0.69 }, false, "m");
    expect(singular).not.toContain("EXCEEDS");
    expect(singular).toContain("sharp edge: the computed peak grows as the mesh is refined (exponent 0.69); model the real edge radius");
    const unrefined = fieldCheckLine({ ...base, peakFieldSingular: true, peakFieldError: null, peakFieldGrowth: null }, false, "m");
    expect(unrefined).toContain("--refine 1 or more");
    // Refined, yet no growth (dielectric bodies, images "both", an adaptive step that left the peak): no advice to refine.
    const refinedNoGrowth = fieldCheckLine({ ...base, peakFieldSingular: true, peakFieldError: null, peakFieldGrowth: null }, false, "m", true);
    expect(refinedNoGrowth).toContain("its rate is not measured in this run");
    expect(refinedNoGrowth).not.toContain("--refine");
    const below = fieldCheckLine({ ...base, fieldRatio: 0.5, peakFieldSingular: false, peakFieldError: null, peakFieldGrowth: null }, false, "m");
    expect(below).toContain("2.00× below breakdown");
  });

  it("a plate at 30 kV: the summary gives the sharp-edge line and keeps the cautions; the JSON carries the fields", async () => {
    const r = await extractMesh(generateShape("plate", { size: [0.01, 0.01], divisions: 4 }), { potentials: [30e3], refine: 1 });
    const text = extractionSummary(r, ctx);
    expect(text).toMatch(/sharp edge: the computed peak grows as the mesh is refined \(exponent 0\.\d+\)/);
    expect(text).not.toContain("EXCEEDS");
    expect(text).toContain("Cautions");
    const json = extractionReport(r, { version: "test", files: [], unit: "m", inputWarnings: [] }) as Record<string, any>;
    const c = json.conductors[0];
    expect(c.peakFieldSingular).toBe(true);
    expect(c.peakFieldError).toBeNull();
    expect(c.peakFieldGrowth).toBeGreaterThan(0.5);
    expect(json.fieldCheck.exceeded).toEqual([]);
    expect(json.fieldCheck.sharpEdges).toEqual([r.names[0]]);
    expect(r.conductors[0].fieldRatio).toBeGreaterThan(1);
    const md = markdownReport(reportData(JSON.parse(JSON.stringify(json))));
    expect(md).toContain("sharp edge: grows with refinement, model the real radius");
    expect(md).not.toContain("exceeds breakdown");
  });
});
