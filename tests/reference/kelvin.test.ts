/**
 * Kelvin's iterated images (./kelvin.ts) checked against closed forms and independent code
 * paths, then sigmesh's capacitances and peak fields checked against them through the public
 * library API. Each check names its source.
 */
import { describe, it, expect, afterAll } from "vitest";
import { sphereMesh, concatMeshes, extractMesh, closeSharedPool, EPSILON_0, type SurfaceMesh } from "../../src/index.js";
import {
  EPS0, spherePlaneCharges, spherePlaneCapacitance, spherePlanePotential, spherePlaneAxialField, spherePlaneFields, spherePlaneBispherical,
  twoSphereCharges, twoSphereMaxwell, twoSpherePotential, twoSphereFields, equalSpheresBispherical,
} from "./kelvin.js";

afterAll(() => closeSharedPool());

const rel = (x: number, y: number): number => Math.abs(x / y - 1);

/** Points on a sphere (radius a, centre c) spread by a golden-angle spiral. */
function spherePoints(a: number, c: [number, number, number], n: number): Array<[number, number, number]> {
  const out: Array<[number, number, number]> = [];
  for (let i = 0; i < n; i++) {
    const z = 1 - (2 * i + 1) / n, r = Math.sqrt(1 - z * z), ph = i * Math.PI * (3 - Math.sqrt(5));
    out.push([c[0] + a * r * Math.cos(ph), c[1] + a * r * Math.sin(ph), c[2] + a * z]);
  }
  return out;
}

/**
 * −dφ/dn at distance 0 along the unit direction n from p by central differences across the
 * surface (the image series is analytic there: its charges lie well inside), Richardson-
 * extrapolated from steps h and h/2: a code path apart from the summed Coulomb fields.
 */
function normalDerivative(phi: (x: number, y: number, z: number) => number, p: [number, number, number], n: [number, number, number], h: number): number {
  const d = (s: number): number => (phi(p[0] - s * n[0], p[1] - s * n[1], p[2] - s * n[2]) - phi(p[0] + s * n[0], p[1] + s * n[1], p[2] + s * n[2])) / (2 * s);
  return (4 * d(h / 2) - d(h)) / 3;
}

describe("Kelvin's images: sphere above a grounded plane", () => {
  it("the images hold the sphere at V and the plane at 0 V (to rounding)", () => {
    for (const [a, d] of [[1, 1.05], [1e-3, 1.5e-3], [2, 7]]) {
      const c = spherePlaneCharges(a, d, 5);
      for (const p of spherePoints(a, [0, 0, d], 200)) expect(Math.abs(spherePlanePotential(c, ...p) - 5)).toBeLessThan(1e-12 * 5);
      for (const [x, y] of [[0, 0], [a, 0.3 * a], [-4 * d, 2 * d]]) expect(Math.abs(spherePlanePotential(c, x, y, 0))).toBeLessThan(1e-15);
    }
  });

  it("capacitance equals the bispherical series C = 4π ε0 a sinh α Σ 1/sinh(nα), cosh α = d/a (Smythe §5.08, from memory)", () => {
    for (const ratio of [1.001, 1.05, 1.5, 3, 10, 1000]) {
      const a = 1e-3, d = ratio * a;
      expect(rel(spherePlaneCapacitance(a, d), spherePlaneBispherical(a, d))).toBeLessThan(1e-13);
    }
  });

  it("field at the lowest and top points equals −dφ/dn of the image potential (numerical derivative)", () => {
    for (const [a, d] of [[1e-3, 1.5e-3], [1, 1.2], [1, 4]]) {
      const c = spherePlaneCharges(a, d, 1);
      const phi = (x: number, y: number, z: number): number => spherePlanePotential(c, x, y, z);
      const f = spherePlaneFields(a, d, 1);
      // The field points out of the positive sphere: down (−z) at its lowest point, up at its top.
      expect(spherePlaneAxialField(c, d - a)).toBeLessThan(0);
      expect(rel(normalDerivative(phi, [0, 0, d - a], [0, 0, -1], 1e-3 * a), f.lowest)).toBeLessThan(1e-9);
      expect(rel(normalDerivative(phi, [0, 0, d + a], [0, 0, 1], 1e-3 * a), f.top)).toBeLessThan(1e-9);
      expect(f.lowest).toBeGreaterThan(f.top);
    }
  });

  it("far from the plane: C → 4π ε0 a (1 + a/2d), both fields → V/a (isolated sphere, exact; the first image's correction)", () => {
    const a = 1, V = 1;
    for (const d of [1e3, 1e5]) {
      const C = spherePlaneCapacitance(a, d) / (4 * Math.PI * EPS0 * a);
      expect(Math.abs(C - (1 + a / (2 * d)))).toBeLessThan((a / d) ** 2);
      const f = spherePlaneFields(a, d, V);
      // Next order: the image's field 3 Q/(4π ε0 (2d)²) induced at the poles, 3a²/(4d²) of V/a, and C's own a²/(4d²).
      expect(Math.abs((f.lowest * a) / V - 1 - a / (2 * d))).toBeLessThan(1.5 * (a / d) ** 2);
      expect(Math.abs((f.top * a) / V - 1 - a / (2 * d))).toBeLessThan(1.5 * (a / d) ** 2);
    }
  });

  it("reference figures of the sigmesh case: a = 1 mm, d = 1.5 mm, 1 V", () => {
    // Printed to the digits the checks above support (agreement to 1e-9 and better).
    const a = 1e-3, d = 1.5e-3, f = spherePlaneFields(a, d, 1);
    expect(spherePlaneCapacitance(a, d)).toBeCloseTo(1.70833008e-13, 20);
    expect(f.lowest).toBeCloseTo(2717.99266, 4);
    expect(f.top).toBeCloseTo(1191.30283, 4);
  });
});

describe("Kelvin's images: two spheres", () => {
  it("the images hold each sphere at its potential, also for unequal radii", () => {
    for (const [a1, a2, s, V1, V2] of [[1, 1, 2.2, 1, -1], [1, 1, 3, 1, 1], [1, 0.3, 1.6, 2, 0.5]]) {
      const c = twoSphereCharges(a1, a2, s, V1, V2);
      for (const p of spherePoints(a1, [0, 0, 0], 100)) expect(Math.abs(twoSpherePotential(c, ...p) - V1)).toBeLessThan(1e-12);
      for (const p of spherePoints(a2, [s, 0, 0], 100)) expect(Math.abs(twoSpherePotential(c, ...p) - V2)).toBeLessThan(1e-12);
    }
  });

  it("Maxwell coefficients equal the bispherical series of equal spheres (Smythe §5.08, from memory) and are symmetric", () => {
    for (const ratio of [2.01, 2.2, 3, 10]) {
      const a = 1e-3, s = ratio * a;
      const [c11, c12, c21, c22] = twoSphereMaxwell(a, a, s);
      const b = equalSpheresBispherical(a, s);
      expect(rel(c11, b.c11)).toBeLessThan(1e-12);
      expect(rel(c12, b.c12)).toBeLessThan(1e-12);
      expect(rel(c21, c12)).toBeLessThan(1e-13);
      expect(rel(c22, c11)).toBeLessThan(1e-13);
    }
    // Unequal radii: reciprocity C12 = C21 (Green's reciprocity theorem), which the series do not build in.
    const [, c12, c21] = twoSphereMaxwell(1, 0.3, 1.6);
    expect(rel(c21, c12)).toBeLessThan(1e-12);
  });

  it("the pair at ±V is the sphere over a plane at d = s/2: C11 − C12 and the gap field (two independent series)", () => {
    for (const ratio of [2.05, 3, 6]) {
      const a = 1e-3, s = ratio * a;
      const [c11, c12] = twoSphereMaxwell(a, a, s);
      expect(rel(c11 - c12, spherePlaneCapacitance(a, s / 2))).toBeLessThan(1e-12);
      const pair = twoSphereFields(a, a, s, 1, -1), plane = spherePlaneFields(a, s / 2, 1);
      expect(rel(pair.gap[0], plane.lowest)).toBeLessThan(1e-12);
      expect(rel(pair.gap[1], plane.lowest)).toBeLessThan(1e-12);
      expect(rel(pair.outer[0], plane.top)).toBeLessThan(1e-12);
    }
  });

  it("the pair at +V, +V: charge (C11 + C12) V each, the peak at the outer points, fields by numerical derivative", () => {
    const a = 1e-3, s = 3e-3;
    const c = twoSphereCharges(a, a, s, 1, 1);
    const [c11, c12] = twoSphereMaxwell(a, a, s);
    const q1 = c.one.q.reduce((x, y) => x + y, 0);
    expect(rel(q1, c11 + c12)).toBeLessThan(1e-13);
    const f = twoSphereFields(a, a, s, 1, 1);
    const phi = (x: number, y: number, z: number): number => twoSpherePotential(c, x, y, z);
    expect(rel(normalDerivative(phi, [-a, 0, 0], [-1, 0, 0], 1e-3 * a), f.outer[0])).toBeLessThan(1e-9);
    expect(rel(normalDerivative(phi, [a, 0, 0], [1, 0, 0], 1e-3 * a), f.gap[0])).toBeLessThan(1e-9);
    expect(f.outer[0]).toBeGreaterThan(f.gap[0]);
  });
});

/** Relative errors of sigmesh against the reference and its own estimates, for the report. */
function coverage(label: string, trueError: number, estimate: number | null): void {
  const e = estimate ?? NaN;
  console.log(`${label}: true error ${trueError.toExponential(2)}, estimate ${e.toExponential(2)}, estimate/true ${(e / trueError).toFixed(1)}`);
}

describe("sigmesh against Kelvin's images (public API)", () => {
  const a = 1e-3;

  // Measured (Galerkin, default options, 2026-12): level 2 (320 panels) with refine 2 (5,120):
  // C true error 3.1e-5 against the estimate 1.2e-3 (39x); the peak at the lowest point true
  // error 2.22e-3 against peakFieldError 6.46e-3 (2.9x). The peak is the recovered (vertex-averaged)
  // field, which converges as h² (recoveredPeaks, peak-field.ts); the largest panel field, reported
  // before, stalled near 1e-3 (O(h) panel-to-panel scatter: 1.0e-3 here against an estimate 15x as
  // large).
  it("sphere of 1 mm at d = 1.5 mm over the ground plane, refine 2: C and the lowest-point peak within their estimates", async () => {
    const d = 1.5e-3;
    const r = await extractMesh(sphereMesh({ radius: a, level: 2, center: [0, 0, d] }), { groundPlane: { axis: "z", offset: 0 }, refine: 2 });
    const C = spherePlaneCapacitance(a, d), E = spherePlaneFields(a, d, 1);
    expect(EPS0).toBe(EPSILON_0);
    const cErr = rel(r.maxwell[0], C);
    const cEst = r.accuracy!.richardson.errorEstimate[0] / r.maxwell[0];
    const peak = r.conductors[0];
    const eErr = rel(peak.peakField, E.lowest);
    coverage("sphere over plane, C", cErr, cEst);
    coverage("sphere over plane, peak field", eErr, peak.peakFieldError);
    // The peak sits at the lowest point (within a panel), on a smooth surface.
    expect(peak.peakFieldSingular).toBe(false);
    expect(Math.hypot(peak.peakFieldAt[0], peak.peakFieldAt[1])).toBeLessThan(0.1 * a);
    expect(peak.peakFieldAt[2]).toBeLessThan(d - 0.99 * a);
    expect(cErr).toBeLessThanOrEqual(cEst);
    expect(eErr).toBeLessThanOrEqual(peak.peakFieldError!);
    expect(peak.peakFieldError!).toBeLessThan(5 * eErr);
  });

  // Measured (as above): C11 true error 2.4e-5 against the estimate 9.9e-4 (42x), C12 4.1e-5
  // against 1.8e-3 (55x); each gap-point peak (recovered) 2.2e-3 against peakFieldError 6.4e-3 (2.9x).
  it("two spheres of 1 mm at s = 3 mm at ±1 V, refine 2: C11, C12 and the gap-point peak within their estimates", async () => {
    const s = 3e-3;
    const one = sphereMesh({ radius: a, level: 2, center: [0, 0, 0], name: "one" });
    const two = sphereMesh({ radius: a, level: 2, center: [s, 0, 0], name: "two" });
    const mesh: SurfaceMesh = concatMeshes([one, two]);
    const r = await extractMesh(mesh, { potentials: [1, -1], refine: 2 });
    const [c11, c12] = twoSphereMaxwell(a, a, s);
    const est = r.accuracy!.richardson.errorEstimate;
    const err11 = Math.abs(r.maxwell[0] - c11), err12 = Math.abs(r.maxwell[1] - c12);
    coverage("two spheres, C11", err11 / c11, est[0] / c11);
    coverage("two spheres, C12", err12 / Math.abs(c12), est[1] / Math.abs(c12));
    const E = twoSphereFields(a, a, s, 1, -1);
    for (let i = 0; i < 2; i++) {
      const pk = r.conductors[i];
      const eErr = rel(pk.peakField, E.gap[i]);
      coverage(`two spheres, peak field of ${pk.name}`, eErr, pk.peakFieldError);
      expect(pk.peakFieldSingular).toBe(false);
      // At the gap point: x = a on the first, x = s − a on the second. (The two meshes are
      // translates, not mirror images, so their peaks differ slightly.)
      expect(Math.abs(pk.peakFieldAt[0] - (i === 0 ? a : s - a))).toBeLessThan(0.01 * a);
      expect(eErr).toBeLessThanOrEqual(pk.peakFieldError!);
      expect(pk.peakFieldError!).toBeLessThan(5 * eErr);
    }
    expect(err11).toBeLessThanOrEqual(est[0]);
    expect(err12).toBeLessThanOrEqual(est[1]);
  });
});
