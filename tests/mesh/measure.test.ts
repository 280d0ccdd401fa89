import { describe, it, expect } from "vitest";
import { surfaceArea, signedVolume } from "../../src/mesh/measure.js";
import type { SurfaceMesh } from "../../src/mesh/model.js";

function tetra(offset: number[]): SurfaceMesh {
  const [x, y, z] = offset;
  return {
    positions: new Float64Array([x, y, z, x + 1, y, z, x, y + 1, z, x, y, z + 1]),
    // Outward: each face counter-clockwise seen from outside.
    triangles: new Uint32Array([0, 2, 1, 0, 1, 3, 0, 3, 2, 1, 2, 3]),
    conductor: new Uint32Array(4),
    names: ["t"],
  };
}

describe("measure", () => {
  it("unit right tetrahedron: volume 1/6, area 3/2 + sqrt(3)/2 (closed form)", () => {
    const t = tetra([0, 0, 0]);
    expect(signedVolume(t)).toBeCloseTo(1 / 6, 15);
    expect(surfaceArea(t)).toBeCloseTo(1.5 + Math.sqrt(3) / 2, 14);
  });
  it("turning every triangle over negates the volume", () => {
    const t = tetra([0, 0, 0]);
    const tr = t.triangles;
    for (let i = 0; i < tr.length; i += 3) { const s = tr[i + 1]; tr[i + 1] = tr[i + 2]; tr[i + 2] = s; }
    expect(signedVolume(t)).toBeCloseTo(-1 / 6, 15);
  });
  it("keeps its digits far from the origin (reference point at the bounding-box centre)", () => {
    const far = tetra([1e7, -3e7, 2e7]);
    expect(Math.abs(signedVolume(far) * 6 - 1)).toBeLessThan(1e-9);
  });
  it("counts one conductor when asked", () => {
    const a = tetra([0, 0, 0]);
    const m: SurfaceMesh = {
      positions: new Float64Array([...a.positions, ...a.positions.map((v) => 2 * v + 5)]),
      triangles: new Uint32Array([...a.triangles, ...a.triangles.map((v) => v + 4)]),
      conductor: new Uint32Array([0, 0, 0, 0, 1, 1, 1, 1]),
      names: ["small", "big"],
    };
    expect(signedVolume(m, 0)).toBeCloseTo(1 / 6, 14);
    expect(signedVolume(m, 1)).toBeCloseTo(8 / 6, 14);
    expect(signedVolume(m)).toBeCloseTo(9 / 6, 14);
  });
  it("empty mesh measures zero", () => {
    const e: SurfaceMesh = { positions: new Float64Array(0), triangles: new Uint32Array(0), conductor: new Uint32Array(0), names: [] };
    expect(surfaceArea(e)).toBe(0);
    expect(signedVolume(e)).toBe(0);
  });
});
