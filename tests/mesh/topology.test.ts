import { describe, it, expect } from "vitest";
import fc from "fast-check";
import type { SurfaceMesh } from "../../src/mesh/model.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { buildEdgeTable, conductorTopology, orientSurfaces, conductorOrientation } from "../../src/mesh/topology.js";
import { gridCube } from "./grid-cube.js";


function invert(m: SurfaceMesh): SurfaceMesh {
  const t = new Uint32Array(m.triangles);
  for (let i = 0; i < t.length; i += 3) { const s = t[i + 1]; t[i + 1] = t[i + 2]; t[i + 2] = s; }
  return { ...m, triangles: t };
}

/** Unit square sheet in z = 0 with n×n cells, two triangles each. */
function sheet(n: number): SurfaceMesh {
  const pos: number[] = [], tri: number[] = [];
  for (let j = 0; j <= n; j++) for (let i = 0; i <= n; i++) pos.push(i / n, j / n, 0);
  const v = (i: number, j: number) => j * (n + 1) + i;
  for (let j = 0; j < n; j++) for (let i = 0; i < n; i++) tri.push(v(i, j), v(i + 1, j), v(i + 1, j + 1), v(i, j), v(i + 1, j + 1), v(i, j + 1));
  return { positions: new Float64Array(pos), triangles: new Uint32Array(tri), conductor: new Uint32Array(tri.length / 3), names: ["sheet"] };
}

/** Same triangle up to a cyclic shift of its corners (same winding). */
function sameWinding(a: Uint32Array, b: Uint32Array, t: number): boolean {
  const x = [a[3 * t], a[3 * t + 1], a[3 * t + 2]], y = [b[3 * t], b[3 * t + 1], b[3 * t + 2]];
  return [0, 1, 2].some((r) => x.every((v, i) => v === y[(i + r) % 3]));
}

describe("edge table and closedness", () => {
  it("a 12-triangle cube is closed with 18 edges (Euler: E = 3F/2 for a closed triangulated surface)", () => {
    const m = gridCube(1);
    const t = buildEdgeTable(m);
    expect(t.edgeCount).toBe(18);
    const [c] = conductorTopology(m, t);
    expect(c).toEqual({ edges: 18, closed: true, boundaryEdges: 0, nonManifoldEdges: 0, inconsistentEdges: 0 });
  });

  it("an open n×n square sheet has n boundary edges on each of its 4 sides and is not closed", () => {
    for (const n of [1, 3, 7]) {
      const [c] = conductorTopology(sheet(n));
      expect(c.closed).toBe(false);
      expect(c.boundaryEdges).toBe(4 * n);
      expect(c.nonManifoldEdges).toBe(0);
      // Edges of a grid of n×n cells split once each: 2n(n+1) grid lines plus n² diagonals.
      expect(c.edges).toBe(2 * n * (n + 1) + n * n);
    }
  });

  it("three triangles on one edge make it non-manifold", () => {
    const m: SurfaceMesh = {
      positions: new Float64Array([0, 0, 0, 1, 0, 0, 0, 1, 0, 0, -1, 0, 0, 0, 1]),
      triangles: new Uint32Array([0, 1, 2, 1, 0, 3, 0, 1, 4]),
      conductor: new Uint32Array(3), names: ["fin"],
    };
    const [c] = conductorTopology(m);
    expect(c.nonManifoldEdges).toBe(1);
    expect(c.boundaryEdges).toBe(6);
    expect(c.closed).toBe(false);
    expect(conductorOrientation(orientSurfaces(m), 1)).toEqual(["non-manifold"]);
  });

  it("edges of different conductors never close each other", () => {
    const s = sheet(2);
    const pos = s.positions;
    // Two halves of one sheet assigned to two conductors share the middle edges.
    const cond = new Uint32Array(s.triangles.length / 3);
    for (let t = 0; t < cond.length; t++) cond[t] = pos[3 * s.triangles[3 * t]] < 0.5 && pos[3 * s.triangles[3 * t + 1]] <= 0.5 && pos[3 * s.triangles[3 * t + 2]] <= 0.5 ? 0 : 1;
    const m: SurfaceMesh = { ...s, conductor: cond, names: ["left", "right"] };
    const [l, r] = conductorTopology(m);
    expect(l.boundaryEdges + r.boundaryEdges).toBe(8 + 2 * 2);
  });
});

describe("orientSurfaces", () => {
  it("leaves an outward cube alone and measures its volume (s³)", () => {
    const m = gridCube(2, [1, 2, 3], [2, 3, 4]);
    const r = orientSurfaces(m);
    expect(r.components).toHaveLength(1);
    expect(r.components[0].status).toBe("outward");
    expect(r.components[0].flippedTriangles).toBe(0);
    expect(r.components[0].signedVolume).toBeCloseTo(24, 12);
    expect(Array.from(r.mesh.triangles)).toEqual(Array.from(m.triangles));
  });

  it("flips an inverted cube and reports it, on a copy", () => {
    const good = gridCube(2);
    const bad = invert(good);
    const before = Array.from(bad.triangles);
    const r = orientSurfaces(bad);
    expect(r.components[0].status).toBe("inward-flipped");
    expect(r.components[0].flippedTriangles).toBe(48);
    expect(r.components[0].signedVolume).toBeCloseTo(1, 12);
    expect(Array.from(bad.triangles)).toEqual(before);
    for (let t = 0; t < 48; t++) expect(sameWinding(r.mesh.triangles, good.triangles, t)).toBe(true);
    expect(conductorOrientation(r, 1)).toEqual(["inward-flipped"]);
  });

  it("repairs any subset of reversed triangles on a closed surface (property)", () => {
    const good = gridCube(3);
    const nt = good.triangles.length / 3;
    fc.assert(fc.property(fc.uniqueArray(fc.nat(nt - 1), { minLength: 1, maxLength: nt }), (flipSet) => {
      const t = new Uint32Array(good.triangles);
      for (const k of flipSet) { const s = t[3 * k + 1]; t[3 * k + 1] = t[3 * k + 2]; t[3 * k + 2] = s; }
      const m = { ...good, triangles: t };
      const r = orientSurfaces(m);
      for (let k = 0; k < nt; k++) if (!sameWinding(r.mesh.triangles, good.triangles, k)) return false;
      const top = conductorTopology(m)[0];
      return r.components[0].flippedTriangles === flipSet.length && (flipSet.length === nt ? r.components[0].status === "inward-flipped" : r.components[0].status === "repaired") && (flipSet.length === nt || top.inconsistentEdges > 0);
    }), { numRuns: 60 });
  });

  it("finds a Möbius strip non-orientable and leaves it as given", () => {
    const k = 12, pos: number[] = [], tri: number[] = [];
    for (let i = 0; i < k; i++) {
      const u = (2 * Math.PI * i) / k;
      for (const w of [-0.2, 0.2]) {
        const r = 1 + w * Math.cos(u / 2);
        pos.push(r * Math.cos(u), r * Math.sin(u), w * Math.sin(u / 2));
      }
    }
    for (let i = 0; i < k; i++) {
      const a = 2 * i, b = 2 * i + 1;
      // The last quad joins the strip back on itself with a half twist.
      const c = i === k - 1 ? 1 : 2 * (i + 1), d = i === k - 1 ? 0 : 2 * (i + 1) + 1;
      tri.push(a, c, d, a, d, b);
    }
    const m: SurfaceMesh = { positions: new Float64Array(pos), triangles: new Uint32Array(tri), conductor: new Uint32Array(tri.length / 3), names: ["moebius"] };
    const top = conductorTopology(m)[0];
    expect(top.boundaryEdges).toBe(2 * k);
    expect(top.inconsistentEdges).toBeGreaterThan(0);
    const r = orientSurfaces(m);
    expect(r.components[0].status).toBe("non-orientable");
    expect(r.components[0].flippedTriangles).toBe(0);
    expect(conductorOrientation(r, 1)).toEqual(["inconsistent"]);
  });

  it("makes an open sheet consistent with its majority winding", () => {
    const s = sheet(4);
    const t = new Uint32Array(s.triangles);
    const s1 = t[4]; t[4] = t[5]; t[5] = s1;
    const r = orientSurfaces({ ...s, triangles: t });
    expect(r.components[0].status).toBe("open");
    expect(r.components[0].flippedTriangles).toBe(1);
    for (let k = 0; k < t.length / 3; k++) expect(sameWinding(r.mesh.triangles, s.triangles, k)).toBe(true);
  });

  it("orients a cavity wall into the cavity (a hollow conductor's inner surface)", () => {
    const outer = gridCube(2, [0, 0, 0], [4, 4, 4], "shell");
    const inner = gridCube(2, [1, 1, 1], [2, 2, 2], "shell");
    const joined = concatMeshes([outer, inner]);
    const m = { ...joined, conductor: new Uint32Array(joined.conductor.length), names: ["shell"] };
    const r = orientSurfaces(m);
    expect(r.components).toHaveLength(2);
    const [o, i] = r.components;
    expect(o.status).toBe("outward");
    expect(o.signedVolume).toBeCloseTo(64, 10);
    expect(i.enclosedBy).toBe(1);
    expect(i.signedVolume).toBeCloseTo(-8, 10);
    // Net enclosed material volume of the shell: 64 - 8.
    expect(o.signedVolume + i.signedVolume).toBeCloseTo(56, 10);
  });
});
