import { describe, it, expect } from "vitest";
import fc from "fast-check";
import type { SurfaceMesh } from "../../src/mesh/model.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { closestPointTriangle } from "../../src/geometry/closest-point.js";
import { triangleTriangleDistance } from "../../src/mesh/triangle-distance.js";
import { conductorProximity, nearestTriangle, windingNumber, conductorTriangles, resolveOverlaps } from "../../src/mesh/proximity.js";
import { buildBoxTree, triangleBoxes } from "../../src/mesh/bvh.js";
import { gridCube } from "./grid-cube.js";
import { coord } from "../geometry/triangle-samples.js";

describe("conductorProximity", () => {
  const two = (o: number[], s = 1) => {
    const m = concatMeshes([gridCube(2, [0, 0, 0], [1, 1, 1], "a"), gridCube(2, o, [s, s, s], "b")]);
    return m;
  };

  it("reports overlapping cubes as intersecting", () => {
    const f = conductorProximity(two([0.5, 0.3, 0.4]));
    expect(f).toHaveLength(1);
    expect(f[0].kind).toBe("intersect");
    expect([f[0].a, f[0].b]).toEqual([0, 1]);
    // The point lies on both surfaces: on the boundary of each unit box.
    const [x, y, z] = f[0].position;
    expect(x >= 0.5 - 1e-12 && x <= 1 + 1e-12 && y >= 0.3 - 1e-12 && y <= 1 + 1e-12 && z >= 0.4 - 1e-12 && z <= 1 + 1e-12).toBe(true);
  });

  it("reports cubes face to face as touching, also as solids", () => {
    const f = conductorProximity(two([1, 0.25, 0.25], 0.5));
    resolveOverlaps(two([1, 0.25, 0.25], 0.5), f, [true, true]);
    expect(f).toHaveLength(1);
    expect(f[0].kind).toBe("touch");
    expect(f[0].distance).toBe(0);
    expect(f[0].position[0]).toBeCloseTo(1, 12);
  });

  it("treats gaps below the weld scale (1e-6 of the mesh diagonal) as touching", () => {
    // Diagonal of the two-cube mesh is about 2.45, so 1e-6 of it is 2.4e-6; the panel-based tolerance would be 7e-7.
    const f = conductorProximity(two([1 + 1.5e-6, 0, 0]));
    expect(f.map((x) => x.kind)).toEqual(["touch"]);
    expect(f[0].distance).toBeCloseTo(1.5e-6, 12);
    expect(conductorProximity(two([1 + 5e-6, 0, 0])).map((x) => x.kind)).toEqual(["gap"]);
  });

  it("warns on a gap below the panel size with the exact gap and place", () => {
    const f = conductorProximity(two([1.05, 0, 0]));
    expect(f).toHaveLength(1);
    expect(f[0].kind).toBe("gap");
    expect(f[0].distance).toBeCloseTo(0.05, 12);
    expect(f[0].position[0]).toBeCloseTo(1.025, 12);
    expect(f[0].panelSize).toBeCloseTo(Math.SQRT2 / 2, 12);
  });

  it("finds nothing between cubes far apart, or a gap wider than the panels", () => {
    expect(conductorProximity(two([5, 0, 0]))).toEqual([]);
    expect(conductorProximity(two([1.8, 0, 0]))).toEqual([]);
  });

  it("keeps one finding per pair and ignores triangles of the same conductor", () => {
    const m = concatMeshes([gridCube(2, [0, 0, 0], [1, 1, 1], "a"), gridCube(2, [1.05, 0, 0], [1, 1, 1], "b"), gridCube(2, [0, 0, 0.5], [1, 1, 1], "c")]);
    // a and c share parts of their side faces and no triangle pair crosses: a contact, for the surfaces alone.
    const f = conductorProximity(m);
    expect(f.map((x) => `${x.a}-${x.b}:${x.kind}`).sort()).toEqual(["0-1:gap", "0-2:touch", "1-2:gap"]);
    // As closed outward solids, their shared faces face the same way: the solids overlap.
    resolveOverlaps(m, f, [true, true, true]);
    expect(f.map((x) => `${x.a}-${x.b}:${x.kind}`).sort()).toEqual(["0-1:gap", "0-2:intersect", "1-2:gap"]);
  });
});

describe("conductorProximity against all pairs", () => {
  it("finds the same conductor pairs and minimum gaps as a brute-force scan (property)", () => {
    const out = new Float64Array(6);
    const tri = fc.tuple(coord, coord, coord, fc.array(fc.integer({ min: -60, max: 60 }).map((k) => k / 100), { minLength: 9, maxLength: 9 }), fc.nat(3));
    fc.assert(fc.property(fc.array(tri, { minLength: 2, maxLength: 60 }), (items) => {
      const n = items.length;
      const p = new Float64Array(9 * n), t = new Uint32Array(3 * n), c = new Uint32Array(n);
      items.forEach(([x, y, z, d, k], i) => {
        for (let v = 0; v < 3; v++) { p[9 * i + 3 * v] = x + d[3 * v]; p[9 * i + 3 * v + 1] = y + d[3 * v + 1]; p[9 * i + 3 * v + 2] = z + d[3 * v + 2]; t[3 * i + v] = 3 * i + v; }
        c[i] = k;
      });
      const mesh: SurfaceMesh = { positions: p, triangles: t, conductor: c, names: ["a", "b", "c", "d"] };
      const h = (i: number) => Math.max(...[0, 1, 2].map((v) => { const a = 3 * t[3 * i + v], b = 3 * t[3 * i + ((v + 1) % 3)]; return Math.hypot(p[b] - p[a], p[b + 1] - p[a + 1], p[b + 2] - p[a + 2]); }));
      const best = new Map<string, number>();
      for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) {
        if (c[i] === c[j]) continue;
        const d = triangleTriangleDistance(p, t, i, j, out);
        if (!(d < Math.max(h(i), h(j)))) continue;
        const key = `${Math.min(c[i], c[j])}-${Math.max(c[i], c[j])}`;
        best.set(key, Math.min(best.get(key) ?? Infinity, d));
      }
      const got = conductorProximity(mesh);
      expect(got.map((f) => `${f.a}-${f.b}`).sort()).toEqual([...best.keys()].sort());
      for (const f of got) {
        const want = best.get(`${f.a}-${f.b}`)!;
        if (f.kind === "gap") expect(f.distance).toBeCloseTo(want, 12);
        else expect(want).toBeLessThanOrEqual(1e-5);
      }
    }), { numRuns: 150 });
  });
});

describe("nearestTriangle", () => {
  it("matches brute force on a cube", () => {
    const m = gridCube(3, [0, 0, 0], [1, 2, 3], "c");
    const tree = buildBoxTree(triangleBoxes(m.positions, m.triangles));
    const cp = new Float64Array(3);
    fc.assert(fc.property(coord, coord, coord, (x, y, z) => {
      const r = nearestTriangle(tree, m.positions, m.triangles, x, y, z);
      let best = Infinity;
      const p = m.positions, t = m.triangles;
      for (let i = 0; i < t.length / 3; i++) {
        const a = 3 * t[3 * i], b = 3 * t[3 * i + 1], c = 3 * t[3 * i + 2];
        best = Math.min(best, closestPointTriangle(cp, x, y, z, p[a], p[a + 1], p[a + 2], p[b], p[b + 1], p[b + 2], p[c], p[c + 1], p[c + 2]));
      }
      expect(r.distance).toBeCloseTo(Math.sqrt(best), 12);
    }), { numRuns: 100 });
  });
});

describe("windingNumber", () => {
  it("is 1 inside a closed outward box, 0 outside, 1/2 on a face", () => {
    const m = gridCube(3, [0, 0, 0], [1, 2, 3], "c");
    const g = conductorTriangles(m);
    fc.assert(fc.property(coord, coord, coord, (x, y, z) => {
      const inside = x > 0 && x < 1 && y > 0 && y < 2 && z > 0 && z < 3;
      const onSurface = !inside && x >= 0 && x <= 1 && y >= 0 && y <= 2 && z >= 0 && z <= 3;
      if (onSurface) return true;
      return Math.abs(windingNumber(m, g, 0, x, y, z) - (inside ? 1 : 0)) < 1e-9;
    }), { numRuns: 300 });
    expect(windingNumber(m, g, 0, 0.3, 0.7, 3)).toBeCloseTo(0.5, 9);
    expect(windingNumber(m, g, 0, 1 / 3, 2 / 3, 3)).toBeCloseTo(0.5, 9);
  });
});
