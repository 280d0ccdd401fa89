import { describe, it, expect } from "vitest";
import fc from "fast-check";
import type { SurfaceMesh } from "../../src/mesh/model.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { closestPointTriangle, closestPointsSegments, triangleTriangleDistance, trianglesIntersect, conductorProximity, nearestTriangle, windingNumber, conductorTriangles, resolveOverlaps } from "../../src/mesh/proximity.js";
import { buildBoxTree, triangleBoxes } from "../../src/mesh/bvh.js";
import { gridCube } from "./grid-cube.js";


/** Points of a triangle on a barycentric grid of step 1/k. */
function samples(c: number[], k: number): number[][] {
  const out: number[][] = [];
  for (let i = 0; i <= k; i++) for (let j = 0; j <= k - i; j++) {
    const u = i / k, v = j / k, w = 1 - u - v;
    out.push([0, 1, 2].map((a) => w * c[a] + u * c[3 + a] + v * c[6 + a]));
  }
  return out;
}

function diameter(c: number[]): number {
  let d = 0;
  for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) d = Math.max(d, Math.hypot(c[3 * i] - c[3 * j], c[3 * i + 1] - c[3 * j + 1], c[3 * i + 2] - c[3 * j + 2]));
  return d;
}

const coord = fc.integer({ min: -400, max: 400 }).map((k) => k / 100);
const tri9 = fc.array(coord, { minLength: 9, maxLength: 9 });

describe("closest points (Ericson 5.1.5, 5.1.9)", () => {
  it("point–triangle distance matches dense sampling", () => {
    const out = new Float64Array(3);
    fc.assert(fc.property(tri9, coord, coord, coord, (c, x, y, z) => {
      const d = Math.sqrt(closestPointTriangle(out, x, y, z, c[0], c[1], c[2], c[3], c[4], c[5], c[6], c[7], c[8]));
      let best = Infinity;
      for (const s of samples(c, 60)) best = Math.min(best, Math.hypot(s[0] - x, s[1] - y, s[2] - z));
      // Sampling overestimates by at most the grid spacing; the exact value is never above it.
      expect(d).toBeLessThanOrEqual(best + 1e-12);
      expect(best - d).toBeLessThanOrEqual(diameter(c) / 60 + 1e-12);
      expect(Math.hypot(out[0] - x, out[1] - y, out[2] - z)).toBeCloseTo(d, 12);
    }), { numRuns: 150 });
  });

  it("segment–segment distance matches dense sampling, parallel and crossing cases included", () => {
    const out = new Float64Array(6);
    const d = Math.sqrt(closestPointsSegments(out, 0, 0, 0, 1, 0, 0, 0.5, 1, 0, 2, 1, 0));
    expect(d).toBeCloseTo(1, 14);
    expect(Math.sqrt(closestPointsSegments(out, -1, 0, 0, 1, 0, 0, 0, -1, 2, 0, 1, 2))).toBeCloseTo(2, 14);
    fc.assert(fc.property(fc.array(coord, { minLength: 12, maxLength: 12 }), (c) => {
      const e = Math.sqrt(closestPointsSegments(out, c[0], c[1], c[2], c[3], c[4], c[5], c[6], c[7], c[8], c[9], c[10], c[11]));
      let best = Infinity;
      const k = 300;
      for (let i = 0; i <= k; i++) for (let j = 0; j <= k; j += 1) {
        const s = i / k, t = j / k;
        const dx = c[0] + s * (c[3] - c[0]) - c[6] - t * (c[9] - c[6]);
        const dy = c[1] + s * (c[4] - c[1]) - c[7] - t * (c[10] - c[7]);
        const dz = c[2] + s * (c[5] - c[2]) - c[8] - t * (c[11] - c[8]);
        best = Math.min(best, Math.hypot(dx, dy, dz));
      }
      const len = Math.hypot(c[3] - c[0], c[4] - c[1], c[5] - c[2]) + Math.hypot(c[9] - c[6], c[10] - c[7], c[11] - c[8]);
      expect(e).toBeLessThanOrEqual(best + 1e-12);
      expect(best - e).toBeLessThanOrEqual(len / k + 1e-12);
    }), { numRuns: 40 });
  });
});

function pairMesh(a: number[], b: number[]): { p: Float64Array; t: Uint32Array } {
  return { p: new Float64Array([...a, ...b]), t: new Uint32Array([0, 1, 2, 3, 4, 5]) };
}

describe("triangle–triangle distance", () => {
  it("matches brute-force sampling of both triangles", () => {
    const out = new Float64Array(6);
    fc.assert(fc.property(tri9, tri9, (a, b) => {
      const { p, t } = pairMesh(a, b);
      const d = triangleTriangleDistance(p, t, 0, 1, out);
      const k = 24;
      const sa = samples(a, k), sb = samples(b, k);
      let best = Infinity;
      for (const x of sa) for (const y of sb) best = Math.min(best, Math.hypot(x[0] - y[0], x[1] - y[1], x[2] - y[2]));
      expect(d).toBeLessThanOrEqual(best + 1e-12);
      expect(best - d).toBeLessThanOrEqual((diameter(a) + diameter(b)) / k + 1e-12);
      // The reported points realise the distance.
      expect(Math.hypot(out[0] - out[3], out[1] - out[4], out[2] - out[5])).toBeCloseTo(d, 10);
    }), { numRuns: 60 });
  });

  it("is zero where one triangle pierces the other", () => {
    const out = new Float64Array(6);
    const { p, t } = pairMesh([0, 0, 0, 2, 0, 0, 0, 2, 0], [0.5, 0.5, -1, 0.6, 0.5, 1, 0.5, 0.7, 1]);
    expect(triangleTriangleDistance(p, t, 0, 1, out)).toBe(0);
    expect(out[2]).toBeCloseTo(0, 14);
  });
});

describe("triangle–triangle intersection (Möller 1997)", () => {
  const cases: Array<[string, number[], number[], boolean]> = [
    ["piercing", [0, 0, 0, 2, 0, 0, 0, 2, 0], [0.5, 0.5, -1, 0.6, 0.5, 1, 0.5, 0.7, 1], true],
    ["parallel planes apart", [0, 0, 0, 1, 0, 0, 0, 1, 0], [0, 0, 0.1, 1, 0, 0.1, 0, 1, 0.1], false],
    ["coplanar overlapping", [0, 0, 0, 2, 0, 0, 0, 2, 0], [0.5, 0.5, 0, 3, 0.5, 0, 0.5, 3, 0], true],
    ["coplanar one inside the other", [0, 0, 0, 4, 0, 0, 0, 4, 0], [0.5, 0.5, 0, 1, 0.5, 0, 0.5, 1, 0], true],
    ["coplanar disjoint", [0, 0, 0, 1, 0, 0, 0, 1, 0], [2, 2, 0, 3, 2, 0, 2, 3, 0], false],
    ["sharing a vertex", [0, 0, 0, 1, 0, 0, 0, 1, 0], [0, 0, 0, -1, 0, 1, 0, -1, 1], true],
    ["planes cross but triangles miss", [0, 0, 0, 1, 0, 0, 0, 1, 0], [2, 2, -1, 2, 3, 1, 3, 2, 1], false],
    ["edge touching a face", [0, 0, 0, 2, 0, 0, 0, 2, 0], [0.2, 0.2, 0, 1, 0.2, 0, 0.5, 0.5, 1], true],
  ];
  for (const [name, a, b, want] of cases) {
    it(name, () => {
      const { p, t } = pairMesh(a, b);
      expect(trianglesIntersect(p, t, 0, 1)).toBe(want);
      expect(trianglesIntersect(p, t, 1, 0)).toBe(want);
    });
  }

  it("agrees with the exact distance on random pairs away from contact", () => {
    const out = new Float64Array(6);
    let hits = 0;
    fc.assert(fc.property(tri9, tri9, (a, b) => {
      const { p, t } = pairMesh(a, b);
      const d = triangleTriangleDistance(p, t, 0, 1, out);
      const x = trianglesIntersect(p, t, 0, 1);
      if (d === 0) { hits++; return x; }
      if (d > 1e-6) return !x;
      return true;
    }), { numRuns: 2000 });
    expect(hits).toBeGreaterThan(10);
    // Pairs built near each other, so that many of them intersect or nearly touch.
    let near = 0, misses = 0;
    fc.assert(fc.property(tri9, fc.array(fc.integer({ min: -100, max: 100 }).map((k) => k / 100), { minLength: 9, maxLength: 9 }), (a, dv) => {
      const b = a.map((x, i) => x + dv[i]);
      const { p, t } = pairMesh(a, b);
      const d = triangleTriangleDistance(p, t, 0, 1, out);
      const x = trianglesIntersect(p, t, 0, 1);
      if (d === 0) { near++; return x; }
      if (d > 1e-6) { misses++; return !x; }
      return true;
    }), { numRuns: 2000 });
    expect(near).toBeGreaterThan(50);
    expect(misses).toBeGreaterThan(300);
  });
});

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
