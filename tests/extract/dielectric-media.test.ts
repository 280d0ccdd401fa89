/**
 * Media of the dielectric model: containment by ray crossings (src/mesh/containment.ts) against
 * the exact winding sum of solid angles, and nested and touching bodies resolved per panel side.
 */
import { describe, it, expect } from "vitest";
import { surfaceIndex, windingNumber } from "../../src/mesh/containment.js";
import { sphereMesh, boxMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes, type SurfaceMesh } from "../../src/mesh/model.js";
import { prepareBodies } from "../../src/extract/dielectric-bodies.js";
import { dielectricModel } from "../../src/extract/dielectric-model.js";
import { triangleSolidAngle } from "../../src/bem/triangle-potential.js";
import { panelSet } from "../../src/bem/panels.js";

/** The direct winding number: −Σ Ω/(4π) over outward triangles (triangle-potential.ts sign). */
function exactWinding(m: SurfaceMesh, x: number, y: number, z: number): number {
  const v = panelSet(m.positions, m.triangles).vertices;
  let w = 0;
  for (let t = 0; t < v.length / 9; t++) w += triangleSolidAngle(v, 9 * t, x, y, z);
  return Math.round(-w / (4 * Math.PI)) + 0;
}

describe("containment by ray crossings", () => {
  it("agrees with the solid-angle winding number at random points, at lattice points aligned with a box's vertices and edges, and for two surfaces", () => {
    const box = boxMesh({ size: [2, 1, 0.5], divisions: [4, 2, 2] });
    const sphere = sphereMesh({ radius: 0.7, level: 2, center: [3, 0, 0] });
    const both = concatMeshes([box, sphere]);
    let s = 17;
    const rnd = () => (s = (s * 1103515245 + 12345) % 2147483648) / 2147483648;
    for (const m of [box, sphere, both]) {
      const S = surfaceIndex(m.positions, m.triangles);
      for (let t = 0; t < 300; t++) {
        const x = -1.5 + 6 * rnd(), y = -1 + 2 * rnd(), z = -0.6 + 1.2 * rnd();
        expect(windingNumber(S, x, y, z)).toBe(exactWinding(m, x, y, z));
      }
    }
    // Points on the grid lines of the box mesh, where axis rays would run along faces and edges.
    const S = surfaceIndex(box.positions, box.triangles);
    for (const x of [-1, -0.5, 0, 0.5, 1, 1.5]) for (const y of [-0.5, 0, 0.25, 0.5]) for (const z of [-0.25, 0, 0.25, 0.3]) {
      const inside = Math.abs(x) < 1 && Math.abs(y) < 0.5 && Math.abs(z) < 0.25;
      const outside = Math.abs(x) > 1 || Math.abs(y) > 0.5 || Math.abs(z) > 0.25;
      if (inside) expect(windingNumber(S, x, y, z)).toBe(1);
      if (outside) expect(windingNumber(S, x, y, z)).toBe(0);
    }
  });

  it("a point just inside or outside a face (1e-6 of the size) is classified by its side", () => {
    const m = sphereMesh({ radius: 1, level: 3 });
    const P = panelSet(m.positions, m.triangles), S = surfaceIndex(m.positions, m.triangles);
    for (let t = 0; t < P.n; t += 37) {
      const c = [P.centroids[3 * t], P.centroids[3 * t + 1], P.centroids[3 * t + 2]], n = [P.normals[3 * t], P.normals[3 * t + 1], P.normals[3 * t + 2]];
      expect(windingNumber(S, c[0] - 1e-6 * n[0], c[1] - 1e-6 * n[1], c[2] - 1e-6 * n[2])).toBe(1);
      expect(windingNumber(S, c[0] + 1e-6 * n[0], c[1] + 1e-6 * n[1], c[2] + 1e-6 * n[2])).toBe(0);
    }
  });
});

describe("nested bodies", () => {
  it("a sphere in a sphere in a box: each interface panel sees its own inside and the next body out", () => {
    const conductor = { ...sphereMesh({ radius: 0.2, level: 1, center: [0, 0, 0] }), names: ["c"] };
    const bodies = prepareBodies([
      { name: "box", mesh: boxMesh({ size: [4, 4, 4], divisions: 3 }), permittivity: 2 },
      { name: "outer", mesh: sphereMesh({ radius: 1.5, level: 2 }), permittivity: 3 },
      { name: "inner", mesh: sphereMesh({ radius: 0.8, level: 2 }), permittivity: 5 },
    ], 1);
    const m = dielectricModel(conductor, bodies, 1);
    const expected = [[2, 1], [3, 2], [5, 3]];
    for (let a = 0; a < m.ni; a++) {
      const [inside, outside] = expected[m.interfaceBody[a]];
      expect(m.epsMinus[a]).toBe(inside);
      expect(m.epsPlus[a]).toBe(outside);
    }
    expect(m.bodies.map((b) => b.outside)).toEqual(["background", "box", "outer"]);
    // The conductor sits inside the innermost body.
    expect(Array.from(m.conductorPlus).every((e) => e === 5)).toBe(true);
  });

  it("touching boxes: the shared face merged once, its sides the two bodies' permittivities; a body inside a closed conductor is removed", () => {
    const conductor = { ...boxMesh({ size: [0.5, 0.5, 0.5], divisions: 2, center: [5, 0, 0] }), names: ["c"] };
    const bodies = prepareBodies([
      { name: "lower", mesh: boxMesh({ size: [1, 1, 1], divisions: 2, center: [0, 0, -0.5] }), permittivity: 2 },
      { name: "upper", mesh: boxMesh({ size: [1, 1, 1], divisions: 2, center: [0, 0, 0.5] }), permittivity: 6 },
      { name: "buried", mesh: boxMesh({ size: [0.2, 0.2, 0.2], divisions: 1, center: [5, 0, 0] }), permittivity: 4 },
    ], 1);
    const m = dielectricModel(conductor, bodies, 1);
    expect(m.mergedInterfacePanels).toBe(8);
    expect(m.bodies[2].removed).toBe(12);
    let shared = 0;
    const P = panelSet(m.positions, m.triangles);
    for (let a = 0; a < m.ni; a++) {
      const z = P.centroids[3 * (m.nc + a) + 2];
      if (Math.abs(z) < 1e-12) { shared++; expect([m.epsMinus[a], m.epsPlus[a]].sort()).toEqual([2, 6]); }
    }
    expect(shared).toBe(8);
  });
});
