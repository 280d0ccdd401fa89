/**
 * Refinement to a requested accuracy (src/extract/adaptive.ts) against closed forms and published
 * values, and its parts (error-indicator.ts, accuracy.ts sequenceRichardson). Larger accuracies
 * (1e-4, 1e-5) are measured in tests/bench/adaptive.bench.mjs.
 */
import { describe, it, expect } from "vitest";
import { extractMesh, boxMesh, plateMesh, sphereMesh, concatMeshes } from "../../src/index.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { dorflerMarking, panelIndicators } from "../../src/extract/error-indicator.js";
import { sequenceRichardson } from "../../src/extract/accuracy.js";
import { governingEntries } from "../../src/extract/adaptive.js";
import { InputError } from "../../src/errors.js";
import { spherePlaneCapacitance } from "../reference/kelvin.js";

const K4 = 4 * Math.PI * EPSILON_0;

describe("--accuracy against published values", () => {
  it("unit cube to 1e-3: |error| ≤ estimate ≤ R against Hwang & Mascagni, J. Appl. Phys. 95 (2004), 0.6606782", async () => {
    const ref = K4 * 0.6606782;
    const r = await extractMesh(boxMesh({ size: [1, 1, 1], divisions: 6 }), { accuracy: 1e-3 });
    const err = Math.abs(r.maxwell[0] - ref) / ref;
    const est = r.accuracy!.richardson.errorEstimate[0] / r.maxwell[0];
    expect(r.accuracy!.adaptive!.reached).toBe(true);
    expect(err).toBeLessThanOrEqual(est);
    expect(est).toBeLessThanOrEqual(1e-3);
    // Local refinement: fewer panels than one uniform refinement (1,728) would have.
    expect(r.accuracy!.levels.at(-1)!.panels).toBeLessThan(4 * 432 * 2);
    expect(r.accuracy!.levels.length).toBeGreaterThanOrEqual(3);
  });

  it("square plate to 1e-3: |error| ≤ estimate ≤ R against Read, J. Comput. Phys. 133 (1997), 0.3667874 (value from memory)", async () => {
    const ref = K4 * 0.3667874;
    const r = await extractMesh(plateMesh({ size: [1, 1], divisions: 8 }), { accuracy: 1e-3 });
    const err = Math.abs(r.maxwell[0] - ref) / ref;
    const est = r.accuracy!.richardson.errorEstimate[0] / r.maxwell[0];
    expect(err).toBeLessThanOrEqual(est);
    expect(est).toBeLessThanOrEqual(1e-3);
    // The panels gather at the rim: the finest mesh's smallest panel is far smaller than its largest.
    const a = r.panels.areas;
    let lo = Infinity, hi = 0;
    for (let i = 0; i < a.length; i++) { lo = Math.min(lo, a[i]); hi = Math.max(hi, a[i]); }
    expect(hi / lo).toBeGreaterThan(16);
  });

  it("sphere over a grounded plane to 1e-3: C within its estimate against Kelvin's images (tests/reference/kelvin.ts)", async () => {
    const a = 1e-3, d = 1.5e-3;
    const ref = spherePlaneCapacitance(a, d);
    const m = sphereMesh({ radius: a, level: 2, center: [0, 0, d] });
    const r = await extractMesh(m, { accuracy: 1e-3, groundPlane: { axis: "z", offset: 0 } });
    const err = Math.abs(r.maxwell[0] - ref) / ref;
    const est = r.accuracy!.richardson.errorEstimate[0] / r.maxwell[0];
    expect(err).toBeLessThanOrEqual(est);
    expect(est).toBeLessThanOrEqual(1e-3);
  });
});

describe("--accuracy options", () => {
  it("refuses accuracy with refine, and accuracies out of range, as input errors", async () => {
    const m = boxMesh({ size: [1, 1, 1], divisions: 2 });
    await expect(extractMesh(m, { accuracy: 1e-3, refine: 1 })).rejects.toThrow(InputError);
    await expect(extractMesh(m, { accuracy: 0.5 })).rejects.toThrow(/accuracy must be a relative error/);
    await expect(extractMesh(m, { accuracy: 0 })).rejects.toThrow(InputError);
    await expect(extractMesh(m, { accuracy: 1e-3, maxPanels: -3 })).rejects.toThrow(InputError);
  });

  it("stops at --max-panels with a warning saying the accuracy was not reached", async () => {
    const r = await extractMesh(boxMesh({ size: [1, 1, 1], divisions: 4 }), { accuracy: 1e-6, maxPanels: 1500 });
    expect(r.accuracy?.adaptive?.reached ?? false).toBe(false);
    expect(r.warnings.some((w) => /requested accuracy 0.000001 was not reached|requested accuracy 1e-6 was not reached/.test(w))).toBe(true);
    expect(r.accuracy!.levels.at(-1)!.panels).toBeLessThanOrEqual(1500);
  });
});

describe("indicators and marking", () => {
  it("Dörfler marks the fewest largest indicators reaching θ of the total", () => {
    const eta = Float64Array.from([1, 8, 2, 4, 0, 5]);
    const m = dorflerMarking(eta, 0.5);
    // total 20, goal 10: 8 then 5 → 13 ≥ 10.
    expect(Array.from(m)).toEqual([0, 1, 0, 0, 0, 1]);
    expect(Array.from(dorflerMarking(new Float64Array(3), 0.5))).toEqual([0, 0, 0]);
  });

  it("the averaging indicator is zero for a constant density on a flat mesh, and far larger at a plate's rim than at its centre for a rim-singular density", () => {
    const m = plateMesh({ size: [1, 1], divisions: 8 });
    const n = m.conductor.length;
    const areas = new Float64Array(n);
    for (let t = 0; t < n; t++) {
      const p = m.positions, tr = m.triangles;
      const a = 3 * tr[3 * t], b = 3 * tr[3 * t + 1], c = 3 * tr[3 * t + 2];
      areas[t] = 0.5 * Math.abs((p[b] - p[a]) * (p[c + 1] - p[a + 1]) - (p[c] - p[a]) * (p[b + 1] - p[a + 1]));
    }
    const eta0 = panelIndicators(m, areas, [Float64Array.from(areas)], 1, Float64Array.of(1));
    expect(Math.max(...eta0)).toBeLessThan(1e-15);
    // A rim-singular density: σ = 1/√(distance to the nearest side).
    const x = new Float64Array(n);
    let rimMax = 0, inMax = 0;
    for (let t = 0; t < n; t++) {
      const p = m.positions, tr = m.triangles;
      let cx = 0, cy = 0;
      for (let j = 0; j < 3; j++) { cx += p[3 * tr[3 * t + j]] / 3; cy += p[3 * tr[3 * t + j] + 1] / 3; }
      const dist = Math.min(0.5 - Math.abs(cx), 0.5 - Math.abs(cy));
      x[t] = areas[t] / Math.sqrt(dist);
    }
    const eta = panelIndicators(m, areas, [x], 1, Float64Array.of(1));
    for (let t = 0; t < n; t++) {
      const p = m.positions, tr = m.triangles;
      const onRim = [0, 1, 2].some((j) => Math.abs(Math.abs(p[3 * tr[3 * t + j]]) - 0.5) < 1e-12 || Math.abs(Math.abs(p[3 * tr[3 * t + j] + 1]) - 0.5) < 1e-12);
      const centre = [0, 1, 2].every((j) => Math.abs(p[3 * tr[3 * t + j]]) <= 0.25 + 1e-12 && Math.abs(p[3 * tr[3 * t + j] + 1]) <= 0.25 + 1e-12);
      if (onRim) rimMax = Math.max(rimMax, eta[t]); else if (centre) inMax = Math.max(inMax, eta[t]);
    }
    expect(rimMax).toBeGreaterThan(10 * inMax);
  });

  it("governing entries: diagonals and couplings at least 5 % of their row's diagonal", () => {
    const c = Float64Array.from([10, -0.6, -0.2, -0.6, 8, -0.3, -0.2, -0.3, 4]);
    expect(Array.from(governingEntries(c, 3))).toEqual([1, 1, 0, 1, 1, 0, 1, 1, 1]);
  });
});

describe("sequenceRichardson", () => {
  it("recovers C* and the order of an exact power law in the panel count, irregular steps", () => {
    const n = [100, 180, 330, 560, 1000];
    const q = 0.7, cs = 2, a = -0.5;
    const levels = n.map((N) => Float64Array.of(cs + a * N ** -q));
    const r = sequenceRichardson(levels, n, 1, { fromBelow: true });
    expect(r.orderObserved).toBe(true);
    expect(Math.abs(r.order - 2 * q)).toBeLessThan(0.01);
    expect(Math.abs(r.extrapolated[0] - cs)).toBeLessThan(2e-3 * Math.abs(a * 1000 ** -q));
    // The estimate covers the (tiny) error and is half the tail.
    expect(r.errorEstimate[0]).toBeGreaterThanOrEqual(Math.abs(r.extrapolated[0] - cs));
  });

  it("reports the finest values with twice the last change when the sequence does not converge steadily", () => {
    const levels = [1, 1.2, 1.1, 1.25].map((v) => Float64Array.of(v));
    const r = sequenceRichardson(levels, [10, 20, 40, 80], 1, { fromBelow: false });
    expect(r.orderObserved).toBe(false);
    expect(r.extrapolated[0]).toBe(1.25);
    expect(r.errorEstimate[0]).toBeCloseTo(0.3, 12);
    expect(r.warnings.length).toBe(1);
  });
});

describe("--accuracy with the rest of the model", () => {
  it("with a dielectric body every step is uniform, and the coated sphere's C is within its estimate (closed form for a concentric shell)", async () => {
    // Sphere radius 1 in a shell of εr 4 out to radius 2: C = 4πε0 / (1/(εr)(1/a − 1/b) + 1/b) (Gauss's law).
    const a = 1, b = 2, er = 4;
    const ref = K4 / ((1 / er) * (1 / a - 1 / b) + 1 / b);
    const r = await extractMesh(sphereMesh({ radius: a, level: 1 }), { accuracy: 2e-2, dielectrics: [{ name: "coat", mesh: sphereMesh({ radius: b, level: 1 }), permittivity: er }] });
    expect(r.accuracy!.adaptive!.marking).toBe("uniform");
    const panels = r.accuracy!.levels.map((l) => l.panels);
    for (let i = 1; i < panels.length; i++) expect(panels[i]).toBe(4 * panels[i - 1]);
    const err = Math.abs(r.maxwell[0] - ref) / ref;
    expect(err).toBeLessThanOrEqual(r.accuracy!.richardson.errorEstimate[0] / r.maxwell[0]);
  });

  it("a floating conductor and a pair: the reduced matrix and the governing couplings come from the extrapolated one", async () => {
    const one = boxMesh({ size: [1, 1, 1], divisions: 3, center: [0, 0, 0] });
    const two = boxMesh({ size: [1, 1, 1], divisions: 3, center: [1.6, 0, 0] });
    const three = boxMesh({ size: [1, 1, 1], divisions: 3, center: [3.2, 0, 0] });
    const m = concatMeshes([{ ...one, names: ["one"] }, { ...two, names: ["two"] }, { ...three, names: ["three"] }]);
    const r = await extractMesh(m, { accuracy: 1e-2, floating: [false, true, false], potentials: [1, 0, 0] });
    const g = r.accuracy!.adaptive!.governing;
    // one–two and two–three couple strongly (above 5 %); one–three, behind two, less.
    expect(g[1]).toBe(1);
    expect(g[5]).toBe(1);
    expect(r.reducedNames).toEqual(["one", "three"]);
    expect(r.accuracy!.adaptive!.reached).toBe(true);
    for (let e = 0; e < 9; e++) if (g[e]) expect(r.accuracy!.richardson.errorEstimate[e]).toBeLessThanOrEqual(1e-2 * Math.abs(r.maxwell[e]));
  });
});

describe("--accuracy with symmetry planes", () => {
  it("a half model with images both gives the full pair's Maxwell matrix within the estimates", async () => {
    const half = boxMesh({ size: [1, 1, 1], divisions: 3, center: [1, 0, 0] });
    const sym = await extractMesh(half, { accuracy: 1e-2, symmetry: [{ axis: "x", offset: 0, images: "both" }] });
    const full = await extractMesh(concatMeshes([{ ...half, names: ["a"] }, { ...boxMesh({ size: [1, 1, 1], divisions: 3, center: [-1, 0, 0] }), names: ["b"] }]), { accuracy: 1e-2 });
    expect(sym.k).toBe(2);
    for (const e of [0, 1]) {
      const tol = sym.accuracy!.richardson.errorEstimate[e] + full.accuracy!.richardson.errorEstimate[e];
      expect(Math.abs(sym.maxwell[e] - full.maxwell[e])).toBeLessThanOrEqual(tol);
    }
  });
});
