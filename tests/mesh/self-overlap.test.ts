import { describe, it, expect } from "vitest";
import type { SurfaceMesh } from "../../src/mesh/model.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { sphereMesh, boxMesh, plateMesh } from "../../src/mesh/primitives/index.js";
import { selfOverlaps, repeatedTriangles, coplanarOverlap } from "../../src/mesh/self-overlap.js";

/** The mesh with triangle t appended again, its corners in the order `order` (a permutation of 0, 1, 2). */
function withRepeat(m: SurfaceMesh, t: number, order = [0, 1, 2]): SurfaceMesh {
  const tri = new Uint32Array(m.triangles.length + 3);
  tri.set(m.triangles);
  for (let j = 0; j < 3; j++) tri[m.triangles.length + j] = m.triangles[3 * t + order[j]];
  const cond = new Uint32Array(m.conductor.length + 1);
  cond.set(m.conductor);
  cond[m.conductor.length] = m.conductor[t];
  return { ...m, triangles: tri, conductor: cond };
}

function tri2(coords: number[][]): { positions: Float64Array; triangles: Uint32Array } {
  return { positions: new Float64Array(coords.flat()), triangles: new Uint32Array([0, 1, 2, 3, 4, 5]) };
}

describe("selfOverlaps", () => {
  const sphere = sphereMesh({ radius: 1e-3, level: 2 });

  it("finds nothing on valid closed and open surfaces (sphere, box, plate)", () => {
    expect(selfOverlaps(sphere)).toEqual([]);
    expect(selfOverlaps(boxMesh({ size: [1e-3, 2e-3, 3e-3], divisions: 4 }))).toEqual([]);
    expect(selfOverlaps(plateMesh({ size: [1e-3, 1e-3], divisions: 8 }))).toEqual([]);
  });

  it("finds a repeated face in either winding and names the pair and its centroid", () => {
    for (const order of [[0, 1, 2], [2, 1, 0], [1, 2, 0]]) {
      const m = withRepeat(sphere, 17, order);
      const [f] = selfOverlaps(m);
      expect(f.conductor).toBe(0);
      expect(f.repeated).toBe(1);
      expect(f.overlapping).toBe(0);
      expect(f.triangles).toEqual([17, sphere.conductor.length]);
      const p = m.positions, tr = m.triangles;
      for (let k = 0; k < 3; k++) expect(f.position[k]).toBeCloseTo((p[3 * tr[51] + k] + p[3 * tr[52] + k] + p[3 * tr[53] + k]) / 3, 15);
    }
  });

  it("counts repeats per conductor and keeps conductors apart (the same face in two conductors is the proximity check's business)", () => {
    const two = concatMeshes([sphere, { ...sphere, names: ["b"] }]);
    const n = sphere.conductor.length;
    // Conductor b repeats conductor a's vertex numbers: no repeat within a conductor.
    const shared: SurfaceMesh = { ...two, triangles: Uint32Array.from([...sphere.triangles, ...sphere.triangles]) };
    expect(repeatedTriangles(shared.triangles, shared.conductor).every((x) => x < 0)).toBe(true);
    const m = withRepeat(withRepeat(withRepeat(two, n + 3), n + 3), 5);
    const found = selfOverlaps(m);
    expect(found.map((f) => [f.conductor, f.repeated])).toEqual([[0, 1], [1, 2]]);
  });

  it("finds coplanar overlaps that share no vertex numbers (a face duplicated with its own vertices, a quad split the other way)", () => {
    // The plate's first cell again, split along the other diagonal, with vertices of its own.
    const plate = plateMesh({ size: [1, 1], divisions: 4 });
    const p = plate.positions, tr = plate.triangles;
    const cell = [tr[0], tr[1], tr[2], tr[5]].map((v) => [p[3 * v], p[3 * v + 1], p[3 * v + 2]]);
    const extra: SurfaceMesh = {
      positions: new Float64Array([...cell[0], ...cell[1], ...cell[3], ...cell[1], ...cell[2], ...cell[3]]),
      triangles: new Uint32Array([0, 1, 2, 3, 4, 5]), conductor: new Uint32Array(2), names: ["x"],
    };
    const joined = concatMeshes([plate, extra]);
    const m = { ...joined, conductor: new Uint32Array(joined.conductor.length), names: ["plate"] };
    const [f] = selfOverlaps(m);
    expect(f.repeated).toBe(0);
    expect(f.overlapping).toBeGreaterThanOrEqual(2);
    expect(f.truncated).toBe(false);
  });

  it("stops at its pair budget on a surface covering itself everywhere, and says so", () => {
    // 400 copies of one triangle, each shifted by a hair: every pair overlaps (79,800 pairs).
    const n = 400, pos = new Float64Array(9 * n), tri = new Uint32Array(3 * n);
    for (let t = 0; t < n; t++) {
      const s = t * 1e-5;
      pos.set([s, 0, 0, 1 + s, 0, 0, s, 1, 0], 9 * t);
      tri.set([3 * t, 3 * t + 1, 3 * t + 2], 3 * t);
    }
    const fan = { positions: pos, triangles: tri, conductor: new Uint32Array(n), names: ["fan"] };
    const [f] = selfOverlaps(fan, { pairBudget: 10_000 });
    expect(f.truncated).toBe(true);
    expect(f.overlapping).toBeGreaterThan(5_000);
    expect(f.overlapping).toBeLessThanOrEqual(10_000);
    const [all] = selfOverlaps(fan);
    expect(all.truncated).toBe(false);
    expect(all.overlapping).toBe((n * (n - 1)) / 2);
  });
});

describe("coplanarOverlap", () => {
  const overlap = (coords: number[][]) => { const m = tri2(coords); return coplanarOverlap(m.positions, m.triangles, 0, 1); };

  it("is false for neighbours meeting along an edge or at a corner, and for parallel planes apart", () => {
    expect(overlap([[0, 0, 0], [1, 0, 0], [0, 1, 0], [1, 0, 0], [1, 1, 0], [0, 1, 0]])).toBe(false);
    expect(overlap([[0, 0, 0], [1, 0, 0], [0, 1, 0], [1, 0, 0], [2, 0, 0], [1, 1, 0]])).toBe(false);
    expect(overlap([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1e-3], [1, 0, 1e-3], [0, 1, 1e-3]])).toBe(false);
    // Folded about the shared edge (a ridge), not flat.
    expect(overlap([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 0], [1, 0, 0], [0, 0.5, 0.5]])).toBe(false);
  });

  it("is true for a triangle inside another, folded back onto it across an edge, or crossing it in its plane", () => {
    expect(overlap([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0.5, 0, 0], [0.5, 0.5, 0], [0, 0.5, 0]])).toBe(true);
    expect(overlap([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 0], [1, 0, 0], [0.3, 0.3, 0]])).toBe(true);
    expect(overlap([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0.5, -0.2, 0], [0.5, 0.8, 0], [2, 0.3, 0]])).toBe(true);
    // Facing the other way, tilted out of the axis planes.
    const r = (x: number, y: number) => [x, (y) / Math.SQRT2, (y) / Math.SQRT2];
    expect(overlap([r(0, 0), r(1, 0), r(0, 1), r(0, 1), r(1, 0), r(0.1, 0.1)])).toBe(true);
  });
});

describe("selfOverlaps at size", () => {
  it("finds 200,000 copies of one face by the hash (ten million are measured in the closing note, not here)", () => {
    const n = 200_000;
    const m: SurfaceMesh = { positions: new Float64Array([0, 0, 0, 1, 0, 0, 0, 1, 0]), triangles: new Uint32Array(3 * n), conductor: new Uint32Array(n), names: ["many"] };
    for (let t = 0; t < n; t++) m.triangles.set(t % 2 ? [0, 1, 2] : [2, 1, 0], 3 * t);
    const [f] = selfOverlaps(m);
    expect(f.repeated).toBe(n - 1);
    expect(f.overlapping).toBe(0);
  });
});
