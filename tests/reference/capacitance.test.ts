/**
 * Capacitance of canonical conductors against published or closed-form values.
 * Each check names its source. Meshes come from the project's generator; sizes are kept
 * small so the suite stays fast (the benchmark runs the fine cases).
 */
import { describe, it, expect, afterAll } from "vitest";
import { sphereMesh, boxMesh, plateMesh, diskMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes, type SurfaceMesh } from "../../src/mesh/model.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

const FOUR_PI_EPS0 = 4 * Math.PI * EPSILON_0;
afterAll(() => closeSharedPool());

function named(m: SurfaceMesh, name: string): SurfaceMesh {
  return { ...m, names: [name] };
}

describe("isolated conductors", () => {
  it("sphere: C = 4π ε0 R (exact), approached from below", async () => {
    const R = 0.01;
    const r = await extractMesh(sphereMesh({ radius: R, level: 3 }), { solver: "direct" });
    const ratio = r.maxwell[0] / (FOUR_PI_EPS0 * R);
    // Galerkin on the inscribed faceted sphere: a lower bound, within 0.5 % at 1280 panels.
    expect(ratio).toBeLessThan(1);
    expect(ratio).toBeGreaterThan(0.995);
  });

  it("sphere with --refine 1 from 1280 panels extrapolates to 0.02 % and the estimate brackets the true error", async () => {
    const R = 2;
    const r = await extractMesh(sphereMesh({ radius: R, level: 3 }), { refine: 1 });
    const exact = FOUR_PI_EPS0 * R;
    const err = Math.abs(r.maxwell[0] - exact) / exact;
    expect(err).toBeLessThan(2e-4);
    expect(r.accuracy!.richardson.relativeError).toBeGreaterThanOrEqual(err);
    // and the estimate is not uselessly loose: the coarse-to-fine change is under 1 %.
    expect(r.accuracy!.richardson.relativeError).toBeLessThan(1e-2);
  });

  it("thin circular disk: C = 8 ε0 R (exact; Jackson, Classical Electrodynamics, 3rd ed., §3.12)", async () => {
    const R = 0.05;
    const r = await extractMesh(diskMesh({ radius: R, divisions: 12, grading: 4 }), {});
    const ratio = r.maxwell[0] / (8 * EPSILON_0 * R);
    expect(ratio).toBeLessThan(1);
    expect(ratio).toBeGreaterThan(0.99);
    expect(r.conductors[0].closed).toBe(false);
  });

  it("unit cube: C/(4π ε0 a) = 0.66068 (Hwang & Mascagni, J. Appl. Phys. 95, 2004)", async () => {
    const r = await extractMesh(boxMesh({ size: [1, 1, 1], divisions: 10 }), {});
    const ratio = r.maxwell[0] / FOUR_PI_EPS0 / 0.66068;
    expect(ratio).toBeLessThan(1);
    expect(ratio).toBeGreaterThan(0.997);
  });

  it("thin square plate: C/(4π ε0 a) ≈ 0.3668 (boundary-element extrapolations in the literature; value from memory)", async () => {
    const r = await extractMesh(plateMesh({ size: [1, 1], divisions: 12 }), { refine: 2 });
    const ratio = r.maxwell[0] / FOUR_PI_EPS0 / 0.36679;
    expect(Math.abs(ratio - 1)).toBeLessThan(1e-3);
    // Edges make the convergence slower than on smooth bodies: the observed order is near 1.
    expect(r.accuracy!.richardson.orderObserved).toBe(true);
    expect(r.accuracy!.richardson.order).toBeGreaterThan(0.7);
    expect(r.accuracy!.richardson.order).toBeLessThan(1.6);
  });

  it("observed order on the sphere is about 2 (flat facets on a smooth body)", async () => {
    const r = await extractMesh(sphereMesh({ radius: 1, level: 1 }), { refine: 2 });
    expect(r.accuracy!.richardson.orderObserved).toBe(true);
    expect(r.accuracy!.richardson.order).toBeGreaterThan(1.7);
    expect(r.accuracy!.richardson.order).toBeLessThan(2.5);
  });

  it("observed order on the cube is between 1 and 2 (σ is singular at its edges and corners)", async () => {
    const r = await extractMesh(boxMesh({ size: [1, 1, 1], divisions: 4 }), { refine: 2 });
    expect(r.accuracy!.richardson.orderObserved).toBe(true);
    expect(r.accuracy!.richardson.order).toBeGreaterThan(1.0);
    expect(r.accuracy!.richardson.order).toBeLessThan(2.0);
    // and the extrapolation lands within 0.1 % of Hwang & Mascagni's 0.66068 from 3072 panels.
    expect(Math.abs(r.maxwell[0] / FOUR_PI_EPS0 / 0.66068 - 1)).toBeLessThan(1e-3);
  });

  it("uniform medium: C scales with εr (Gauss's law in a linear homogeneous dielectric)", async () => {
    const m = sphereMesh({ radius: 1, level: 2 });
    const a = await extractMesh(m, {});
    const b = await extractMesh(m, { permittivity: 4.5 });
    expect(b.maxwell[0] / a.maxwell[0]).toBeCloseTo(4.5, 10);
  });
});

describe("pairs and enclosures", () => {
  it("sphere inside a concentric thin spherical shell: the exact 2×2 Maxwell matrix; the inner row sums to zero", async () => {
    // Spherical capacitor (e.g. Jackson §1.13 / any electrostatics text):
    // C_aa = −C_ab = 4π ε0 ab/(b − a), C_bb = 4π ε0 ab/(b − a) + 4π ε0 b.
    const a = 1, b = 2;
    const m = concatMeshes([named(sphereMesh({ radius: a, level: 3 }), "inner"), named(sphereMesh({ radius: b, level: 3 }), "shell")]);
    const r = await extractMesh(m, { refine: 1 });
    const cab = FOUR_PI_EPS0 * a * b / (b - a);
    const C = r.maxwell;
    const scale = cab + FOUR_PI_EPS0 * b;
    expect(Math.abs(C[0] - cab) / scale).toBeLessThan(1e-3);
    expect(Math.abs(C[1] + cab) / scale).toBeLessThan(1e-3);
    expect(Math.abs(C[3] - (cab + FOUR_PI_EPS0 * b)) / scale).toBeLessThan(1e-3);
    // Full enclosure: all field lines from the inner sphere end on the shell.
    expect(Math.abs(C[0] + C[1]) / C[0]).toBeLessThan(2e-3);
  });

  it("two equal spheres: the bispherical series (Smythe, Static and Dynamic Electricity, §5.08)", async () => {
    // cosh β = d/(2a); C11 = 4π ε0 a sinh β Σ_{n≥0} csch((2n+1)β), C12 = −4π ε0 a sinh β Σ_{n≥1} csch(2nβ).
    const a = 1, d = 3;
    const beta = Math.acosh(d / (2 * a));
    let s11 = 0, s12 = 0;
    for (let n = 0; n < 200; n++) s11 += 1 / Math.sinh((2 * n + 1) * beta);
    for (let n = 1; n < 200; n++) s12 += 1 / Math.sinh(2 * n * beta);
    const c11 = FOUR_PI_EPS0 * a * Math.sinh(beta) * s11;
    const c12 = -FOUR_PI_EPS0 * a * Math.sinh(beta) * s12;
    const m = concatMeshes([
      named(sphereMesh({ radius: a, level: 3, center: [-d / 2, 0, 0] }), "left"),
      named(sphereMesh({ radius: a, level: 3, center: [d / 2, 0, 0] }), "right"),
    ]);
    const r = await extractMesh(m, { refine: 1 });
    expect(Math.abs(r.maxwell[0] - c11) / c11).toBeLessThan(5e-4);
    expect(Math.abs(r.maxwell[1] - c12) / c11).toBeLessThan(5e-4);
    expect(Math.abs(r.maxwell[3] - c11) / c11).toBeLessThan(5e-4);
    // Sign pattern of a Maxwell matrix, symmetry.
    expect(r.maxwell[1]).toBeLessThan(0);
    expect(r.maxwell[1]).toBe(r.maxwell[2]);
    expect(r.warnings.filter((w) => /positive|negative/.test(w))).toEqual([]);
  });

  it("coaxial parallel disks at a small gap: Kirchhoff's formula (G. Kirchhoff, 1877)", async () => {
    // C = ε0 π R²/d + ε0 R [ln(16π R/d) − 1] for the pair at ±V/2, i.e. (C11 − C12)/2;
    // asymptotic in d/R, good to a fraction of a per cent at d/R = 0.1.
    const R = 1, d = 0.1;
    const disk = diskMesh({ radius: R, divisions: 10, grading: 4 });
    const lift = (m: SurfaceMesh, z: number, name: string): SurfaceMesh => {
      const p = m.positions.slice();
      for (let i = 2; i < p.length; i += 3) p[i] += z;
      return { ...m, positions: p, names: [name] };
    };
    const m = concatMeshes([lift(disk, -d / 2, "bottom"), lift(disk, d / 2, "top")]);
    const r = await extractMesh(m, { refine: 1 });
    const kirchhoff = EPSILON_0 * Math.PI * R * R / d + EPSILON_0 * R * (Math.log(16 * Math.PI * R / d) - 1);
    const pair = (r.maxwell[0] - r.maxwell[1]) / 2;
    expect(Math.abs(pair - kirchhoff) / kirchhoff).toBeLessThan(1e-2);
  });

  it("parallel plates approach ε0 A/d as the gap shrinks (fringing falls away)", async () => {
    const a = 1;
    const ratios: number[] = [];
    for (const d of [0.2, 0.1, 0.05]) {
      const plate = plateMesh({ size: [a, a], divisions: 14, grading: 3 });
      const lift = (z: number, name: string): SurfaceMesh => {
        const p = plate.positions.slice();
        for (let i = 2; i < p.length; i += 3) p[i] += z;
        return { ...plate, positions: p, names: [name] };
      };
      const r = await extractMesh(concatMeshes([lift(0, "lower"), lift(d, "upper")]), {});
      ratios.push(r.mutual[1] / (EPSILON_0 * a * a / d));
    }
    // Fringing adds capacitance: every ratio above 1, shrinking toward 1 with the gap.
    for (const x of ratios) expect(x).toBeGreaterThan(1);
    expect(ratios[1] - 1).toBeLessThan(ratios[0] - 1);
    expect(ratios[2] - 1).toBeLessThan(ratios[1] - 1);
    expect(ratios[2]).toBeLessThan(1.25);
  });
});
