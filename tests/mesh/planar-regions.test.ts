import { describe, it, expect } from "vitest";
import { planarRegions } from "../../src/mesh/planar-regions.js";
import { sphereMesh, boxMesh, cylinderMesh } from "../../src/mesh/primitives/index.js";
import type { SurfaceMesh } from "../../src/mesh/model.js";

/**
 * A prism over a rounded rectangle (half-sides a, b, corner radius r, k facets per quarter
 * arc), length L along z, tessellated the way CAD exporters do: every side face one quad
 * split into two slivers, each cap a fan from its first profile point. `float32` rounds the
 * coordinates as an STL file would.
 */
function roundedPrism(a: number, b: number, r: number, k: number, L: number, float32 = false): { mesh: SurfaceMesh; arcFacet: boolean[] } {
  const prof: [number, number][] = [];
  const arc: boolean[] = [];
  const corners: [number, number, number][] = [[a - r, b - r, 0], [-(a - r), b - r, Math.PI / 2], [-(a - r), -(b - r), Math.PI], [a - r, -(b - r), 1.5 * Math.PI]];
  for (const [cx, cy, th0] of corners) {
    for (let i = 0; i <= k; i++) {
      const th = th0 + (i * Math.PI) / 2 / k;
      prof.push([cx + r * Math.cos(th), cy + r * Math.sin(th)]);
      arc.push(i < k); // segment from point i to i+1 is on the arc; the last one leads to the flat side
    }
  }
  const n = prof.length;
  const pos: number[] = [];
  // Placed 100 mm from the origin, as a part in an assembly, so that float32 rounding matters.
  for (const z of [0, L]) for (const [x, y] of prof) pos.push(0.1 + x, 0.05 + y, z);
  const tri: number[] = [];
  const arcFacet: boolean[] = [];
  for (let i = 0; i < n; i++) {
    const j = (i + 1) % n;
    tri.push(i, j, n + j, i, n + j, n + i);
    arcFacet.push(arc[i], arc[i]);
  }
  for (let i = 1; i < n - 1; i++) { tri.push(0, i + 1, i); arcFacet.push(false); }
  for (let i = 1; i < n - 1; i++) { tri.push(n, n + i, n + i + 1); arcFacet.push(false); }
  const positions = float32 ? Float64Array.from(Float32Array.from(pos)) : Float64Array.from(pos);
  return { mesh: { positions, triangles: Uint32Array.from(tri), conductor: new Uint32Array(tri.length / 3), names: ["prism"] }, arcFacet };
}

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
