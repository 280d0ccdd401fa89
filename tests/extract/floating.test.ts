/**
 * Floating conductors: the Schur-complement elimination against a general-purpose linear
 * algebra library (ml-matrix), and a floating shell inside a spherical capacitor against the
 * closed form and against eliminating it from the full matrix by hand.
 */
import { describe, it, expect, afterAll } from "vitest";
import { Matrix, inverse } from "ml-matrix";
import { eliminateFloating, withFloatingPotentials } from "../../src/extract/floating.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { sphereMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { closeSharedPool } from "../../src/linalg/pool.js";
import { parseScene } from "../../src/io/scene.js";
import { parsePlane } from "../../src/io/inputs.js";

const FOUR_PI_EPS0 = 4 * Math.PI * EPSILON_0;
afterAll(() => closeSharedPool());

/** A random symmetric positive definite k×k matrix with the Maxwell sign pattern (fixed seed). */
function randomMaxwell(k: number, seed: number): Float64Array {
  let s = seed;
  const rnd = () => (s = (s * 1103515245 + 12345) % 2147483648) / 2147483648;
  const C = new Float64Array(k * k);
  for (let i = 0; i < k; i++) for (let j = i + 1; j < k; j++) { const v = -rnd(); C[i * k + j] = v; C[j * k + i] = v; }
  // Diagonal dominance with a positive row sum (capacitance to the reference) makes it SPD.
  for (let i = 0; i < k; i++) { let r = 0; for (let j = 0; j < k; j++) if (j !== i) r -= C[i * k + j]; C[i * k + i] = r + 0.1 + rnd(); }
  return C;
}

describe("elimination of floating conductors", () => {
  it("equals C_dd − C_df C_ff⁻¹ C_fd computed with ml-matrix, and the solved potentials leave zero charge on the floating ones", () => {
    for (const [k, flags] of [[3, [false, true, false]], [5, [true, false, false, true, false]], [6, [false, true, true, true, false, true]]] as const) {
      const C = randomMaxwell(k, 11 + k);
      const red = eliminateFloating(C, k, flags);
      const d = flags.map((f, i) => (f ? -1 : i)).filter((i) => i >= 0), f = flags.map((x, i) => (x ? i : -1)).filter((i) => i >= 0);
      const M = new Matrix(Array.from({ length: k }, (_, i) => Array.from(C.subarray(i * k, (i + 1) * k))));
      const sub = (r: number[], c: number[]) => new Matrix(r.map((i) => c.map((j) => M.get(i, j))));
      const ref = sub(d, d).sub(sub(d, f).mmul(inverse(sub(f, f))).mmul(sub(f, d)));
      for (let a = 0; a < d.length; a++) for (let b = 0; b < d.length; b++) {
        expect(Math.abs(red.reducedMaxwell[a * d.length + b] - ref.get(a, b))).toBeLessThan(1e-12 * Math.abs(ref.get(a, a)));
      }
      const V = Float64Array.from({ length: k }, (_, i) => Math.sin(i + 1));
      const W = withFloatingPotentials(red, k, V);
      let energyFull = 0, energyReduced = 0;
      for (let i = 0; i < k; i++) {
        let q = 0;
        for (let j = 0; j < k; j++) q += C[i * k + j] * W[j];
        if (flags[i]) expect(Math.abs(q)).toBeLessThan(1e-12 * C[i * k + i]);
        else expect(W[i]).toBe(V[i]);
        energyFull += 0.5 * W[i] * q;
      }
      for (let a = 0; a < d.length; a++) for (let b = 0; b < d.length; b++) energyReduced += 0.5 * V[d[a]] * red.reducedMaxwell[a * d.length + b] * V[d[b]];
      expect(Math.abs(energyFull - energyReduced)).toBeLessThan(1e-12 * Math.abs(energyReduced));
    }
  });

  it("refuses a model where every conductor floats", () => {
    expect(() => eliminateFloating(randomMaxwell(2, 3), 2, [true, true])).toThrow(/every conductor is floating/);
  });
});

describe("floating shell between two conductors", () => {
  it("a thin floating shell inside a spherical capacitor: reduced C equals hand elimination and the closed form, V_f as predicted", async () => {
    // Concentric spheres a < b < c, the middle thin shell floating. Gauss's law: the shell carries
    // −Q inside and +Q outside, so the field and C_ac = 4π ε0 ac/(c − a) are unchanged (spherical
    // capacitor, e.g. Jackson §1.13), and V(b) = V_c + (V_a − V_c)(1/b − 1/c)/(1/a − 1/c).
    const a = 1, b = 2, c = 3;
    const m = concatMeshes([
      { ...sphereMesh({ radius: a, level: 2 }), names: ["inner"] },
      { ...sphereMesh({ radius: b, level: 3 }), names: ["shield"] },
      { ...sphereMesh({ radius: c, level: 3 }), names: ["outer"] },
    ]);
    const full = await extractMesh(m, {});
    const r = await extractMesh(m, { floating: [false, true, false], potentials: [1, 0, 0] });
    expect(r.reducedNames).toEqual(["inner", "outer"]);
    expect(r.floatingNames).toEqual(["shield"]);
    // Hand elimination of conductor 1 from the 3×3 matrix.
    const C = full.maxwell;
    const hand = (i: number, j: number) => C[i * 3 + j] - C[i * 3 + 1] * C[3 + j] / C[4];
    const idx = [0, 2];
    for (let p = 0; p < 2; p++) for (let q = 0; q < 2; q++) {
      expect(Math.abs(r.reducedMaxwell[2 * p + q] - hand(idx[p], idx[q]))).toBeLessThan(1e-12 * C[8]);
    }
    // Closed form (spherical capacitor); 320 panels on the inner sphere put it ~1 % low.
    const cac = FOUR_PI_EPS0 * a * c / (c - a);
    expect(Math.abs(r.reducedMaxwell[0] / cac - 1)).toBeLessThan(2e-2);
    expect(Math.abs(-r.reducedMaxwell[1] / cac - 1)).toBeLessThan(2e-2);
    expect(Math.abs(r.reducedMaxwell[3] / (cac + FOUR_PI_EPS0 * c) - 1)).toBeLessThan(2e-2);
    const vb = (1 / b - 1 / c) / (1 / a - 1 / c);
    expect(Math.abs(r.floatingPotentials[0] - vb)).toBeLessThan(5e-3);
    expect(r.conductors[1].floating).toBe(true);
    expect(r.conductors[1].potential).toBe(r.floatingPotentials[0]);
    expect(Math.abs(r.conductors[1].charge)).toBeLessThan(1e-9 * Math.abs(r.conductors[0].charge));
    // Panel charges at the working point: the shell's inner face carries −Q of the inner sphere.
    let shellCharge = 0;
    for (let p = 0; p < r.panelConductor.length; p++) if (r.panelConductor[p] === 1) shellCharge += r.excitation.charge[p];
    expect(Math.abs(shellCharge)).toBeLessThan(1e-6 * Math.abs(r.conductors[0].charge));
    // The full matrix is reported alongside the reduced one.
    expect(Array.from(r.maxwell)).toEqual(Array.from(full.maxwell));
  });
});

describe("scene keys for surroundings and floating conductors", () => {
  const scene = (o: object) => JSON.stringify({ conductors: [{ mesh: "a.stl" }, { mesh: "b.stl", floating: true }], ...o });
  it("reads groundPlane and symmetry in the scene's unit and floating flags", () => {
    const s = parseScene(scene({ unit: "mm", groundPlane: { z: -2 }, symmetry: [{ x: 0 }, { y: 1.5 }] }), "/tmp/s.json");
    expect(s.groundPlane).toEqual({ axis: "z", offset: -0.002 });
    expect(s.symmetry).toEqual([{ axis: "x", offset: 0, images: "even" }, { axis: "y", offset: 0.0015, images: "even" }]);
    const odd = parseScene(scene({ unit: "mm", symmetry: [{ x: 1, images: "odd" }, { images: "both", z: 0, mirrored: "opposite" }] }), "/tmp/s.json");
    expect(odd.symmetry).toEqual([{ axis: "x", offset: 0.001, images: "odd" }, { axis: "z", offset: 0, images: "both", mirrored: "opposite" }]);
    expect(s.conductors.map((c) => c.floating)).toEqual([false, true]);
  });
  it("names the key of each fault", () => {
    expect(() => parseScene(scene({ groundPlane: { z: 0, x: 1 } }), "s.json")).toThrow(/s\.json: groundPlane: expected exactly one of the keys x, y, z/);
    expect(() => parseScene(scene({ symmetry: [{ x: 0 }, { x: 1 }] }), "s.json")).toThrow(/symmetry\[1\]: symmetry\[0\] is already normal to x/);
    expect(() => parseScene(scene({ groundPlane: { z: 0 }, symmetry: [{ z: 1 }] }), "s.json")).toThrow(/symmetry\[0\]: parallel to the ground plane/);
    expect(() => parseScene(scene({ groundPlane: { z: "0" } }), "s.json")).toThrow(/groundPlane: z: expected a number/);
    const both = JSON.stringify({ conductors: [{ mesh: "a.stl" }, { mesh: "b.stl", floating: true, potential: 3 }] });
    expect(() => parseScene(both, "s.json")).toThrow(/conductors\[1\]\.potential: a floating conductor takes no potential/);
    const all = JSON.stringify({ conductors: [{ mesh: "a.stl", floating: true }] });
    expect(() => parseScene(all, "s.json")).toThrow(/every conductor is floating/);
  });
  it("plane options AXIS=POSITION in the input unit", () => {
    expect(parsePlane("z=2.5", "mm", "ground plane")).toEqual({ axis: "z", offset: 0.0025 });
    expect(parsePlane(" X = -1e-3 ", "m", "symmetry plane")).toEqual({ axis: "x", offset: -1e-3 });
    expect(() => parsePlane("w=0", "mm", "ground plane")).toThrow(/ground plane "w=0": expected AXIS=POSITION/);
  });
});
