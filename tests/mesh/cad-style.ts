/**
 * Meshes tessellated the way CAD exporters do (each flat face a fan of slivers from one
 * boundary point), built in code for the planar-region and remeshing tests.
 */
import type { SurfaceMesh } from "../../src/mesh/model.js";

/**
 * A prism over a rounded rectangle (half-sides a, b, corner radius r, k facets per quarter
 * arc), length L along z, tessellated the way CAD exporters do: every side face one quad
 * split into two slivers, each cap a fan from its first profile point. `float32` rounds the
 * coordinates as an STL file would. `arcFacet` tells which triangles are fillet facets. `inset`
 * (radians) starts and ends each arc that far in from the tangent points, so the flat sides meet
 * the arcs at a crease instead of tangentially.
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

/**
 * A box [0, sx] × [0, sy] × [0, sz] (shifted by `at`) whose every edge carries the points at
 * `fractions` of its length, shared by the two faces that meet there, and whose every face is
 * cut into triangles over its boundary points only, ear by ear from its first corner (fans of
 * long slivers, as a CAD export of a box with split edges). Outward, counter-clockwise.
 */
export function sliverBox(size: [number, number, number], fractions: number[], at: [number, number, number] = [0, 0, 0], name = "box"): SurfaceMesh {
  const pos: number[] = [];
  const ids = new Map<string, number>();
  const vertex = (q: number[]) => {
    const key = q.map((x) => x.toPrecision(15)).join(",");
    let v = ids.get(key);
    if (v === undefined) { v = pos.length / 3; ids.set(key, v); pos.push(q[0] + at[0], q[1] + at[1], q[2] + at[2]); }
    return v;
  };
  const tri: number[] = [];
  const f = [0, ...fractions, 1];
  for (let k = 0; k < 3; k++) {
    const i = (k + 1) % 3, j = (k + 2) % 3;
    for (const side of [0, 1]) {
      // The loop in (i, j) counter-clockwise seen from outside: +k outward for side 1.
      const corners: [number, number][] = side === 1 ? [[0, 0], [1, 0], [1, 1], [0, 1]] : [[0, 0], [0, 1], [1, 1], [1, 0]];
      const loop: number[] = [];
      for (let c = 0; c < 4; c++) {
        const [u0, v0] = corners[c], [u1, v1] = corners[(c + 1) % 4];
        for (let m = 0; m + 1 < f.length; m++) {
          // The same coordinates along the edge whichever way a face runs along it.
          const s = u1 + v1 > u0 + v0 ? f[m] : 1 - f[f.length - 1 - m];
          const q = [0, 0, 0];
          q[i] = (u0 + s * (u1 - u0)) * size[i];
          q[j] = (v0 + s * (v1 - v0)) * size[j];
          q[k] = side * size[k];
          loop.push(vertex(q));
        }
      }
      // Ear clipping of the convex loop: the first ear of nonzero area that leaves a ring with area.
      const ring = loop.slice();
      const tol = 1e-12 * (size[0] + size[1] + size[2]) ** 2;
      const twiceArea = (a: number, b: number, c: number) => {
        const ux = pos[3 * b] - pos[3 * a], uy = pos[3 * b + 1] - pos[3 * a + 1], uz = pos[3 * b + 2] - pos[3 * a + 2];
        const vx = pos[3 * c] - pos[3 * a], vy = pos[3 * c + 1] - pos[3 * a + 1], vz = pos[3 * c + 2] - pos[3 * a + 2];
        return Math.hypot(uy * vz - uz * vy, uz * vx - ux * vz, ux * vy - uy * vx);
      };
      const flat = (r: number[]) => r.every((_, q) => twiceArea(r[(q + r.length - 1) % r.length], r[q], r[(q + 1) % r.length]) <= tol);
      while (ring.length > 3) {
        let m = 0;
        for (; m < ring.length; m++) {
          if (twiceArea(ring[(m + ring.length - 1) % ring.length], ring[m], ring[(m + 1) % ring.length]) <= tol) continue;
          if (!flat(ring.filter((_, q) => q !== m))) break;
        }
        tri.push(ring[(m + ring.length - 1) % ring.length], ring[m], ring[(m + 1) % ring.length]);
        ring.splice(m, 1);
      }
      tri.push(ring[0], ring[1], ring[2]);
    }
  }
  return { positions: Float64Array.from(pos), triangles: Uint32Array.from(tri), conductor: new Uint32Array(tri.length / 3), names: [name] };
}
