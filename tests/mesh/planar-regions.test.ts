import { describe, it, expect } from "vitest";
import { planarRegions } from "../../src/mesh/planar-regions.js";
import { sphereMesh, boxMesh, cylinderMesh } from "../../src/mesh/primitives/index.js";
import { roundedPrism } from "./rounded-prism.js";

describe("planarRegions", () => {
  it("finds the flat sides and caps of a CAD-style rounded prism and leaves the fillet facets curved", () => {
    for (const float32 of [false, true]) {
      const { mesh, arcFacet } = roundedPrism(5e-3, 3e-3, 1e-3, 6, 4e-3, float32);
      const regions = planarRegions(mesh);
      const nt = mesh.triangles.length / 3;
      for (let t = 0; t < nt; t++) {
        expect(regions.flat[regions.region[t]], `triangle ${t} (${arcFacet[t] ? "fillet" : "flat"}) float32=${float32}`).toBe(arcFacet[t] ? 0 : 1);
      }
      // 4 sides + 2 caps flat; every fillet quad (two slivers) one region of its own.
      let flat = 0;
      for (let r = 0; r < regions.count; r++) flat += regions.flat[r];
      expect(flat).toBe(6);
      expect(regions.count).toBe(6 + 4 * 6);
    }
  });

  it("calls no facet of a sphere or a cylinder's side flat, and every face of a box flat", () => {
    const s = planarRegions(sphereMesh({ radius: 1, level: 3 }));
    expect(Array.from(s.flat).every((f) => f === 0)).toBe(true);
    expect(s.count).toBe(sphereMesh({ radius: 1, level: 3 }).triangles.length / 3);
    const c = cylinderMesh({ radius: 1, height: 3, divisions: 32 });
    const rc = planarRegions(c);
    // The caps are flat (bounded by 90-degree creases); the side strips are facets.
    let flatArea = 0;
    for (let r = 0; r < rc.count; r++) if (rc.flat[r]) flatArea += rc.area[r];
    const capArea = 2 * 32 * 0.5 * Math.sin((2 * Math.PI) / 32);
    expect(flatArea).toBeCloseTo(capArea, 10);
    const b = planarRegions(boxMesh({ size: [1, 2, 3], divisions: 4 }));
    expect(b.count).toBe(6);
    expect(Array.from(b.flat)).toEqual([1, 1, 1, 1, 1, 1]);
  });

  it("puts every vertex of a region on its plane", () => {
    const { mesh } = roundedPrism(5e-3, 3e-3, 1e-3, 6, 4e-3, true);
    const g = planarRegions(mesh);
    for (let t = 0; t < mesh.triangles.length / 3; t++) {
      const r = g.region[t];
      for (let j = 0; j < 3; j++) {
        const v = 3 * mesh.triangles[3 * t + j];
        const d = g.normal[3 * r] * mesh.positions[v] + g.normal[3 * r + 1] * mesh.positions[v + 1] + g.normal[3 * r + 2] * mesh.positions[v + 2] - g.offset[r];
        expect(Math.abs(d)).toBeLessThan(5e-9);
      }
    }
  });
});
