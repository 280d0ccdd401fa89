/**
 * Physical consistency of extraction results: probes against closed-form fields,
 * energy and charge identities, forces against the virtual-work principle, solver and
 * discretisation agreement.
 */
import { describe, it, expect, afterAll } from "vitest";
import { sphereMesh, torusMesh, plateMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes, type SurfaceMesh } from "../../src/mesh/model.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { probeExtraction } from "../../src/extract/probe.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

afterAll(() => closeSharedPool());
const K = 1 / (4 * Math.PI * EPSILON_0);

function named(m: SurfaceMesh, name: string): SurfaceMesh { return { ...m, names: [name] }; }
function shifted(m: SurfaceMesh, dx: number, dy: number, dz: number, name: string): SurfaceMesh {
  const p = m.positions.slice();
  for (let i = 0; i < p.length; i += 3) { p[i] += dx; p[i + 1] += dy; p[i + 2] += dz; }
  return { ...m, positions: p, names: [name] };
}

describe("probes", () => {
  it("outside a sphere at V the potential is V·R/r and the field radial V·R/r² (exterior of a charged sphere: Gauss's law)", async () => {
    const R = 0.5, V = 7;
    const r = await extractMesh(sphereMesh({ radius: R, level: 3 }), { potentials: [V] });
    const pts = new Float64Array([1.0, 0, 0, 0, 2.0, 0, 0.6, 0.6, 0.6]);
    const pr = probeExtraction(r, pts);
    // Use the solved charge: φ = kQ/r exactly for any spherically symmetric charge.
    const Q = r.conductors[0].charge;
    for (let i = 0; i < 3; i++) {
      const x = pts[3 * i], y = pts[3 * i + 1], z = pts[3 * i + 2];
      const d = Math.hypot(x, y, z);
      expect(pr.potential[i] / (K * Q / d)).toBeCloseTo(1, 3);
      const er = (pr.field[3 * i] * x + pr.field[3 * i + 1] * y + pr.field[3 * i + 2] * z) / d;
      expect(er / (K * Q / (d * d))).toBeCloseTo(1, 3);
      // and against the sphere's closed form V R / r within the mesh's capacitance error
      expect(Math.abs(pr.potential[i] / (V * R / d) - 1)).toBeLessThan(5e-3);
    }
  });

  it("on the axis of a thin charged ring: φ = kQ/√(R² + z²), E_z = kQz/(R² + z²)^{3/2} (e.g. Griffiths, Introduction to Electrodynamics, ring of charge)", async () => {
    const R = 1, a = 0.02;
    const r = await extractMesh(torusMesh({ majorRadius: R, minorRadius: a, divisions: [96, 8] }), { potentials: [1] });
    const Q = r.conductors[0].charge;
    for (const z of [0.3, 1, 2.5]) {
      const pr = probeExtraction(r, new Float64Array([0, 0, z]));
      const s = R * R + z * z;
      // The tube's finite radius changes the on-axis values by O((a/R)²) ≈ 4e-4.
      expect(pr.potential[0] / (K * Q / Math.sqrt(s))).toBeCloseTo(1, 2);
      expect(pr.field[2] / (K * Q * z / Math.pow(s, 1.5))).toBeCloseTo(1, 2);
      expect(Math.abs(pr.field[0]) + Math.abs(pr.field[1])).toBeLessThan(1e-3 * Math.abs(pr.field[2]));
    }
  });
});

describe("identities", () => {
  const pair = () => concatMeshes([
    shifted(sphereMesh({ radius: 1, level: 2 }), -1.5, 0, 0, "a"),
    shifted(sphereMesh({ radius: 0.7, level: 2 }), 1.2, 0.3, 0, "b"),
  ]);

  it("energy ½ VᵀCV equals ½ QᵀV with Q summed from the panel charges", async () => {
    const r = await extractMesh(pair(), { potentials: [3, -2] });
    const q = new Float64Array(2);
    for (let p = 0; p < r.excitation.charge.length; p++) q[r.panelConductor[p]] += r.excitation.charge[p];
    // Q = C·V uses the symmetrised matrix, the panel sums the raw solution: they differ by
    // the solver's asymmetry (iterative tolerance), far below 1e-6.
    expect(q[0] / r.conductors[0].charge).toBeCloseTo(1, 6);
    expect(q[1] / r.conductors[1].charge).toBeCloseTo(1, 6);
    const w = 0.5 * (q[0] * 3 + q[1] * -2);
    expect(w / r.energy).toBeCloseTo(1, 6);
  });

  it("direct and iterative solvers agree; collocation agrees with Galerkin to the discretisation error", async () => {
    const d = await extractMesh(pair(), { solver: "direct" });
    const it = await extractMesh(pair(), { solver: "iterative", tolerance: 1e-6 });
    for (let e = 0; e < 4; e++) expect(Math.abs(it.maxwell[e] - d.maxwell[e]) / d.maxwell[0]).toBeLessThan(1e-6);
    const c = await extractMesh(pair(), { method: "collocation" });
    for (let e = 0; e < 4; e++) expect(Math.abs(c.maxwell[e] - d.maxwell[e]) / d.maxwell[0]).toBeLessThan(2e-2);
    expect(c.asymmetry).toBeGreaterThan(0); // collocation is not symmetric; the report measures it
    expect(d.asymmetry).toBeLessThan(1e-12);
  });
});

describe("forces", () => {
  // Virtual work at constant potentials: F_x = +∂W/∂x of the moved body (e.g. Jackson §4.7;
  // at constant charge it would be −∂W/∂x).
  async function energyAt(gap: number): Promise<{ w: number; fx: number }> {
    const m = concatMeshes([
      shifted(sphereMesh({ radius: 1, level: 3 }), -1 - gap / 2, 0, 0, "left"),
      shifted(sphereMesh({ radius: 1, level: 3 }), 1 + gap / 2, 0, 0, "right"),
    ]);
    const r = await extractMesh(m, { potentials: [1, -1], solver: "direct" });
    return { w: r.energy, fx: r.conductors[1].force[0] };
  }

  it("two spheres at ±V attract, and the force matches the virtual work dW/dd at constant V", async () => {
    const g = 1, h = 0.05;
    const [lo, mid, hi] = [await energyAt(g - h), await energyAt(g), await energyAt(g + h)];
    const dWdd = (hi.w - lo.w) / (2 * h);
    expect(mid.fx).toBeLessThan(0); // the right sphere is pulled toward the left one
    expect(Math.abs(mid.fx - dWdd) / Math.abs(dWdd)).toBeLessThan(0.02);
  });

  it("parallel sheets: the force on an open plate matches virtual work too (σ·E_pv on sheets)", async () => {
    const plate = plateMesh({ size: [1, 1], divisions: 10, grading: 2 });
    const at = async (d: number) => {
      const r = await extractMesh(concatMeshes([shifted(plate, 0, 0, 0, "lower"), shifted(plate, 0, 0, d, "upper")]), { potentials: [0, 1], solver: "direct" });
      return r;
    };
    const d = 0.2, h = 0.01;
    const [lo, mid, hi] = [await at(d - h), await at(d), await at(d + h)];
    expect(mid.forcesComplete).toBe(true);
    const dWdd = (hi.energy - lo.energy) / (2 * h);
    expect(mid.conductors[1].force[2]).toBeLessThan(0);
    expect(Math.abs(mid.conductors[1].force[2] - dWdd) / Math.abs(dWdd)).toBeLessThan(0.05);
    // Ideal-capacitor estimate ε0 A V²/(2d²): fringing adds to it.
    const ideal = EPSILON_0 / (2 * d * d);
    expect(-mid.conductors[1].force[2]).toBeGreaterThan(ideal);
  });
});
