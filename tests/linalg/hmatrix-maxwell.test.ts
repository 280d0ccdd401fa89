import { describe, it, expect } from "vitest";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { sphereMesh, barMesh, plateMesh, boxMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes, type SurfaceMesh } from "../../src/mesh/model.js";
import { EPSILON_0 } from "../../src/extract/constants.js";

// The compressed solver against the dense direct solver on the same meshes: the issue's
// acceptance check is every Maxwell entry within 0.1 % of the largest.
function named(m: SurfaceMesh, name: string): SurfaceMesh { return { ...m, names: [name] }; }

async function compare(mesh: SurfaceMesh, method: "galerkin" | "collocation" = "galerkin") {
  const dense = await extractMesh(mesh, { solver: "direct", method });
  const comp = await extractMesh(mesh, { solver: "compressed", method });
  const k = dense.k;
  let big = 0, worst = 0;
  for (let i = 0; i < k * k; i++) big = Math.max(big, Math.abs(dense.maxwell[i]));
  for (let i = 0; i < k * k; i++) worst = Math.max(worst, Math.abs(comp.maxwell[i] - dense.maxwell[i]) / big);
  return { worst, comp, dense };
}

describe("compressed solver against the dense solver", () => {
  it("two spheres (2 × 1280 panels)", async () => {
    const m = concatMeshes([named(sphereMesh({ radius: 1, level: 3 }), "a"), named(sphereMesh({ radius: 1, level: 3, center: [2.5, 0, 0] }), "b")]);
    const { worst, comp } = await compare(m);
    expect(worst).toBeLessThan(1e-3);
    expect(comp.solver.solver).toBe("compressed");
    expect(comp.solver.farBlocks).toBeGreaterThan(0);
    expect(comp.solver.compressionRatio).toBeLessThan(1);
    expect(comp.solver.residual).toBeLessThanOrEqual(comp.solver.krylovTolerance!);
  });

  it("crossing bars", async () => {
    const a = named(barMesh({ length: 4, width: 0.5, thickness: 0.25, panelSize: 0.08, axis: "x" }), "x-bar");
    const b = named(barMesh({ length: 4, width: 0.5, thickness: 0.25, panelSize: 0.08, axis: "y", center: [0, 0, 0.6] }), "y-bar");
    const { worst, comp } = await compare(concatMeshes([a, b]));
    expect(comp.solver.panels).toBeGreaterThan(2000);
    expect(worst).toBeLessThan(1e-3);
  });

  it("a plate over a plane of 3 × 3 pads, and collocation (GMRES) on the same scene", async () => {
    const parts = [named(plateMesh({ size: [3, 3], divisions: 24, center: [0, 0, 0.4] }), "plate")];
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++)
      parts.push(named(plateMesh({ size: [0.8, 0.8], divisions: 8, center: [i - 1, j - 1, 0] }), `pad${i}${j}`));
    const m = concatMeshes(parts);
    const g = await compare(m);
    expect(g.worst).toBeLessThan(1e-3);
    const c = await compare(m, "collocation");
    expect(c.worst).toBeLessThan(1e-3);
  });

  it("unit cube (16 divisions per side) near Hwang & Mascagni's 0.66068·4πε0a", async () => {
    // Hwang & Mascagni, J. Appl. Phys. 95, 2004: C = 0.66067813(1)·4πε0 for the unit cube; the
    // 16×16 mesh is 0.3 % low by its discretisation (tests/bench/extract.bench.mjs target).
    const r = await extractMesh(boxMesh({ size: [1, 1, 1], divisions: 16 }), { solver: "compressed" });
    const ref = 4 * Math.PI * EPSILON_0 * 0.66067813;
    expect(Math.abs(r.maxwell[0] / ref - 1)).toBeLessThan(0.003);
  });
});
