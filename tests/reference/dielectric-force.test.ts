/**
 * Force on dielectric bodies against virtual work at constant potential, F = +½ Vᵀ (∂C/∂x) V
 * (e.g. Jackson, Classical Electrodynamics, 3rd ed., §4.7; the energy method at fixed
 * potentials), with ∂C/∂x by central differences of the same solver on the same meshes moved
 * rigidly, against Newton's third law (the conductor's force from its own Maxwell stress), and
 * for the slab against the parallel-plate energy with fringing neglected.
 */
import { describe, it, expect, afterAll } from "vitest";
import { sphereMesh, boxMesh, plateMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes, type SurfaceMesh } from "../../src/mesh/model.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { closeSharedPool } from "../../src/linalg/pool.js";
import { EPSILON_0 } from "../../src/extract/constants.js";

afterAll(() => closeSharedPool());
const shiftX = (m: SurfaceMesh, dx: number): SurfaceMesh => {
  const p = m.positions.slice();
  for (let i = 0; i < p.length; i += 3) p[i] += dx;
  return { ...m, positions: p };
};

describe("force on a dielectric body", () => {
  it("a dielectric sphere near a charged sphere: attraction equal to ½V² ∂C/∂x (2 %) and opposite to the conductor's force (2 %)", async () => {
    const ball = { ...sphereMesh({ radius: 1, level: 2 }), names: ["ball"] };
    const bead = (x: number) => sphereMesh({ radius: 0.8, level: 2, center: [x, 0, 0] });
    const V = 100, x0 = 2.6, h = 0.02;
    const run = (x: number) => extractMesh(ball, { potentials: [V], solver: "direct", dielectrics: [{ name: "bead", mesh: bead(x), permittivity: 4 }] });
    const r = await run(x0);
    const f = r.dielectric!.forces[0]!;
    const [cp, cm] = [(await run(x0 + h)).maxwell[0], (await run(x0 - h)).maxwell[0]];
    const virtual = 0.5 * V * V * (cp - cm) / (2 * h);
    expect(virtual).toBeLessThan(0); // C grows as the bead approaches: pulled in (−x)
    expect(Math.abs(f[0] / virtual - 1)).toBeLessThan(2e-2);
    expect(Math.abs(f[1]) + Math.abs(f[2])).toBeLessThan(1e-2 * Math.abs(f[0]));
    expect(Math.abs(r.conductors[0].force[0] / -f[0] - 1)).toBeLessThan(2e-2);
  });

  it("a slab partly inserted between plates is drawn in: force equals ½V² ∂C/∂x (5 %)", async () => {
    const plate = (z: number, name: string) => ({ ...plateMesh({ size: [2, 1], divisions: [10, 5], center: [0, 0, z] }), names: [name] });
    const plates = concatMeshes([plate(0.15, "top"), plate(-0.15, "bottom")]);
    const slab = boxMesh({ size: [2, 1, 0.2], divisions: [10, 5, 2] });
    const x0 = 1.0, h = 0.05; // the slab's centre at x0: half of it between the plates
    const run = (x: number) => extractMesh(plates, { potentials: [1, 0], solver: "direct", dielectrics: [{ name: "slab", mesh: shiftX(slab, x), permittivity: 3 }] });
    const r = await run(x0);
    const f = r.dielectric!.forces[0]!;
    const [cp, cm] = [(await run(x0 + h)).maxwell[0], (await run(x0 - h)).maxwell[0]];
    const virtual = 0.5 * (cp - cm) / (2 * h);
    expect(virtual).toBeLessThan(0); // pulled further in (−x)
    expect(Math.abs(f[0] / virtual - 1)).toBeLessThan(5e-2);
    // Parallel-plate energy with fringing neglected (textbook series-capacitor form): per unit
    // inserted length C' = ε0 w (1/(g − t + t/εr) − 1/g), F = ½V² C'; measured 0.4 % off.
    const g = 0.3, t = 0.2, w = 1;
    const sheet = -0.5 * EPSILON_0 * w * (1 / (g - t + t / 3) - 1 / g);
    expect(Math.abs(f[0] / sheet - 1)).toBeLessThan(3e-2);
  });

  it("a body touching a conductor gets no force (a contact force is not an electrostatic result)", async () => {
    const r = await extractMesh({ ...sphereMesh({ radius: 1, level: 1 }), names: ["ball"] }, { dielectrics: [{ name: "coat", mesh: sphereMesh({ radius: 2, level: 1 }), permittivity: 4 }] });
    expect(r.dielectric!.forces[0]).toBeNull();
  });
});
