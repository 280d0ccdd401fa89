// The reference surface of generated shapes: how much finer it is, and vertices split per face
// so that a sharp edge keeps both faces' normals (src/mesh/model.ts, ReferenceSurface).
import { describe, it, expect } from "vitest";
import { referenceFactor, REFERENCE_TRIANGLE_BUDGET, washerMesh, capsuleMesh } from "../../../src/mesh/primitives/index.js";

describe("reference surfaces", () => {
  it("are 4x finer when 16x the triangles fit the budget, else 2x, else the mesh itself", () => {
    expect(referenceFactor(REFERENCE_TRIANGLE_BUDGET / 16)).toBe(4);
    expect(referenceFactor(REFERENCE_TRIANGLE_BUDGET / 16 + 1)).toBe(2);
    expect(referenceFactor(REFERENCE_TRIANGLE_BUDGET / 4)).toBe(2);
    expect(referenceFactor(REFERENCE_TRIANGLE_BUDGET / 4 + 1)).toBe(1);
  });

  it("keep a vertex once per face: a square edge carries both normals, a smooth seam one normal twice", () => {
    const w = washerMesh({ innerRadius: 1, outerRadius: 2, thickness: 0.5, divisions: 16 });
    const ref = w.reference!;
    // The outer bottom edge at angle 0: (2, 0, -0.25), on the bottom face and the outer wall.
    const at: number[][] = [];
    for (let i = 0; i < ref.positions.length; i += 3) {
      if (Math.hypot(ref.positions[i] - 2, ref.positions[i + 1], ref.positions[i + 2] + 0.25) < 1e-12) at.push([ref.normals[i], ref.normals[i + 1], ref.normals[i + 2]]);
    }
    expect(at.sort((a, b) => a[2] - b[2])).toEqual([[0, 0, -1], [1, 0, 0]]);
    // A capsule's equator joins the hemisphere and the cylinder tangentially: same normal, once per face.
    const c = capsuleMesh({ radius: 1, length: 2, divisions: 8 }).reference!;
    const eq: number[][] = [];
    for (let i = 0; i < c.positions.length; i += 3) {
      if (Math.hypot(c.positions[i] - 1, c.positions[i + 1], c.positions[i + 2] - 1) < 1e-12) eq.push([c.normals[i], c.normals[i + 1], c.normals[i + 2]]);
    }
    expect(eq).toHaveLength(2);
    for (const n of eq) {
      expect(n[0]).toBeCloseTo(1, 15);
      expect(Math.abs(n[1]) + Math.abs(n[2])).toBeLessThan(1e-15);
    }
  });
});
