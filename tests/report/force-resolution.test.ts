// One rule for when a net force is resolved: a sphere alone and the same sphere centred in a
// grounded shell (both zero by symmetry) both print "none resolved"; a sphere pulled toward a
// plate prints its force. The rule: FORCE_RESOLUTION of the conductor's gross panel force.
import { describe, it, expect, afterAll } from "vitest";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { sphereMesh, plateMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { extractionSummary } from "../../src/report/extract-summary.js";
import { FORCE_RESOLUTION } from "../../src/extract/excitation.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

afterAll(() => closeSharedPool());
const ctx = { unit: "mm" as const, unitAssumed: false, source: "test" };

describe("force resolution", () => {
  it("alone and centred in a shell, a sphere's zero force is 'none resolved'; near a plate its force is printed", async () => {
    const ball = sphereMesh({ radius: 1e-3, level: 2, name: "ball" });
    const alone = await extractMesh(ball, { potentials: [1000] });
    const shell = sphereMesh({ radius: 3e-3, level: 2, name: "shell" });
    const inShell = await extractMesh(concatMeshes([ball, shell]), { potentials: [1000, 0] });
    for (const r of [alone, inShell]) {
      const c = r.conductors[0];
      expect(Math.hypot(...c.force)).toBeLessThan(c.forceResolution);
      expect(extractionSummary(r, ctx)).toMatch(/force on ball: none resolved \(below/);
    }
    // The resolution is that fraction of the gross panel force Σ ½ ε E² A ≈ Q²/(8π ε R²) on a sphere.
    const q = alone.conductors[0].charge;
    const gross = (q * q) / (8 * Math.PI * 8.8541878128e-12 * 1e-6);
    expect(alone.conductors[0].forceResolution / (FORCE_RESOLUTION * gross)).toBeGreaterThan(0.95);
    expect(alone.conductors[0].forceResolution / (FORCE_RESOLUTION * gross)).toBeLessThan(1.05);
    const plate = plateMesh({ size: [8e-3, 8e-3], divisions: 8, center: [0, 0, -2e-3], name: "plate" });
    const pulled = await extractMesh(concatMeshes([ball, plate]), { potentials: [1000, 0] });
    expect(extractionSummary(pulled, ctx)).toMatch(/force on ball: \S+ \S*N along \(/);
  });
});
