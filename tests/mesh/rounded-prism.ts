import type { SurfaceMesh } from "../../src/mesh/model.js";

/**
 * A prism over a rounded rectangle (half-sides a, b, corner radius r, k facets per quarter
 * arc), length L along z, tessellated the way CAD exporters do: every side face one quad
 * split into two slivers, each cap a fan from its first profile point. `float32` rounds the
 * coordinates as an STL file would. `inset` (radians) starts and ends each arc that far in from
 * the tangent points, so the flat sides meet the arcs at a crease instead of tangentially.
 */
export function roundedPrism(a: number, b: number, r: number, k: number, L: number, float32 = false, inset = 0): { mesh: SurfaceMesh; arcFacet: boolean[] } {
  const prof: [number, number][] = [];
  const arc: boolean[] = [];
  const corners: [number, number, number][] = [[a - r, b - r, 0], [-(a - r), b - r, Math.PI / 2], [-(a - r), -(b - r), Math.PI], [a - r, -(b - r), 1.5 * Math.PI]];
  for (const [cx, cy, th0] of corners) {
    for (let i = 0; i <= k; i++) {
      const th = th0 + inset + (i * (Math.PI / 2 - 2 * inset)) / k;
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

