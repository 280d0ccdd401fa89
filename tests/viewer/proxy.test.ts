// The viewer's motion proxy (viewer/src/proxy.ts): vertex clustering after Rossignac & Borrel
// (1993). Checked against what follows from the construction itself: exact reproduction
// when every vertex has its own cell, a bound on how far a clustered vertex can sit from
// the surface, winding kept, no duplicate triangles, and the planned size.
import { describe, it, expect } from "vitest";
import { clusterProxy, proxyPlan } from "../../viewer/src/proxy.js";
import { sphereMesh, boxMesh } from "../../src/mesh/primitives/index.js";

function asViewer(mesh: { positions: Float64Array | number[]; triangles: Uint32Array }) {
  const positions = Float32Array.from(mesh.positions);
  const panels = Uint32Array.from({ length: mesh.triangles.length / 3 }, (_, i) => i);
  return { positions, triangles: mesh.triangles, panels };
}

function normal(P: ArrayLike<number>, a: number, b: number, c: number): [number, number, number] {
  const ux = P[3 * b] - P[3 * a], uy = P[3 * b + 1] - P[3 * a + 1], uz = P[3 * b + 2] - P[3 * a + 2];
  const vx = P[3 * c] - P[3 * a], vy = P[3 * c + 1] - P[3 * a + 1], vz = P[3 * c + 2] - P[3 * a + 2];
  return [uy * vz - uz * vy, uz * vx - ux * vz, ux * vy - uy * vx];
}

describe("clusterProxy", () => {
  const R = 1;
  const sphere = asViewer(sphereMesh({ radius: R, level: 5, center: [0, 0, 0], name: "s" }));
  const corner = [-2, -2, -2];

  it("reproduces the mesh exactly when every vertex has a cell of its own", () => {
    // Level-5 icosphere edges are about 0.03 R; cells of 1e-4 R hold one vertex each.
    const px = clusterProxy(sphere.positions, sphere.triangles, sphere.panels, 1e-4, corner);
    expect(px.source.length).toBe(sphere.panels.length);
    let mismatches = 0;
    for (let i = 0; i < px.source.length; i++) {
      const p = px.source[i];
      for (let j = 0; j < 3; j++) {
        const q = px.triangles[3 * i + j], v = sphere.triangles[3 * p + j];
        for (let d = 0; d < 3; d++) if (px.positions[3 * q + d] !== sphere.positions[3 * v + d]) mismatches++;
      }
    }
    expect(mismatches).toBe(0);
  });

  it("coarsens a sphere, keeps its vertices within a cell diagonal of the surface and inside it, and keeps the winding", () => {
    const h = 0.15;
    const px = clusterProxy(sphere.positions, sphere.triangles, sphere.panels, h, corner);
    const nt = px.source.length;
    expect(nt).toBeGreaterThan(200);
    expect(nt).toBeLessThan(sphere.panels.length / 5);
    // A cluster vertex is the mean of surface vertices in one cube: inside the ball (convexity)
    // and within the cube's diagonal of a member vertex, which lies on the polyhedron.
    const inner = R * Math.cos(Math.PI / 5 / 32); // the icosphere's faces sit at least this far out (edge ≈ 0.031 R)
    for (let q = 0; q < px.positions.length / 3; q++) {
      const r = Math.hypot(px.positions[3 * q], px.positions[3 * q + 1], px.positions[3 * q + 2]);
      expect(r).toBeLessThanOrEqual(R * (1 + 1e-6));
      expect(r).toBeGreaterThanOrEqual(inner - Math.sqrt(3) * h);
    }
    // Outward winding is kept: every proxy triangle faces away from the centre.
    for (let i = 0; i < nt; i++) {
      const [a, b, c] = [px.triangles[3 * i], px.triangles[3 * i + 1], px.triangles[3 * i + 2]];
      const n = normal(px.positions, a, b, c);
      const cx = (px.positions[3 * a] + px.positions[3 * b] + px.positions[3 * c]) / 3;
      const cy = (px.positions[3 * a + 1] + px.positions[3 * b + 1] + px.positions[3 * c + 1]) / 3;
      const cz = (px.positions[3 * a + 2] + px.positions[3 * b + 2] + px.positions[3 * c + 2]) / 3;
      expect(n[0] * cx + n[1] * cy + n[2] * cz).toBeGreaterThan(0);
    }
    // Sources are distinct panels of the input.
    expect(new Set(px.source).size).toBe(nt);
    for (const s of px.source) expect(s).toBeLessThan(sphere.panels.length);
  });

  it("draws a collapsed thin slab once per side: opposite windings kept, no repeated triangle", () => {
    const slab = asViewer(boxMesh({ size: [1, 1, 0.01], divisions: [12, 12, 1], center: [0, 0, 0], name: "slab" }));
    const px = clusterProxy(slab.positions, slab.triangles, slab.panels, 0.25, [-0.5, -0.5, -0.5]);
    const seen = new Set<string>();
    let up = 0, down = 0;
    for (let i = 0; i < px.source.length; i++) {
      const t = [px.triangles[3 * i], px.triangles[3 * i + 1], px.triangles[3 * i + 2]];
      const r = t.indexOf(Math.min(...t));
      const key = [t[r], t[(r + 1) % 3], t[(r + 2) % 3]].join(",");
      expect(seen.has(key)).toBe(false);
      seen.add(key);
      const n = normal(px.positions, t[0], t[1], t[2]);
      if (n[2] > 0) up++; else if (n[2] < 0) down++;
    }
    expect(up).toBeGreaterThan(0);
    expect(down).toBeGreaterThan(0);
  });

  it("clusters only the panels it is given", () => {
    const half = sphere.panels.filter((p) => sphere.positions[3 * sphere.triangles[3 * p] + 2] > 0);
    const px = clusterProxy(sphere.positions, sphere.triangles, half, 0.15, corner);
    for (const s of px.source) expect(sphere.positions[3 * sphere.triangles[3 * half[s]] + 2]).toBeGreaterThan(0);
  });
});

describe("proxyPlan", () => {
  it("sizes one grid for the target, finer for a small conductor, none for a conductor of few panels", () => {
    const big = asViewer(sphereMesh({ radius: 1, level: 6, center: [0, 0, 0], name: "big" }));
    const target = 8000;
    const plan = proxyPlan([big.panels.length, 100000, 500], [4 * Math.PI, 1e-4, 1e-3], [2, 0.01, 0.1], target);
    expect(plan.cells[2]).toBe(0);
    expect(plan.cells[1]).toBeGreaterThan(0);
    expect(plan.cells[1]).toBeLessThanOrEqual(0.01 / 12);
    expect(plan.cells[0]).toBeGreaterThan(plan.cells[1]);
    const px = clusterProxy(big.positions, big.triangles, big.panels, plan.cells[0], [-2, -2, -2]);
    expect(px.source.length).toBeGreaterThan(target / 2);
    expect(px.source.length).toBeLessThan(2 * target);
  });
});
