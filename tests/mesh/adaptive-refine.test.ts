import { describe, it, expect } from "vitest";
import { refineMarked, withLongestRefinementEdges, type LocalRefinement } from "../../src/mesh/adaptive-refine.js";
import { refineUniform } from "../../src/mesh/refine.js";
import { boxMesh, plateMesh, sphereMesh } from "../../src/mesh/primitives/index.js";
import { surfaceArea } from "../../src/mesh/measure.js";
import { concatMeshes, type SurfaceMesh } from "../../src/mesh/model.js";
import { conductorTopology } from "../../src/mesh/topology.js";
import { topology, euler } from "./edge-census.js";

/** Deterministic uniform numbers in [0, 1) (mulberry32). */
function random(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const nt = (m: SurfaceMesh): number => m.triangles.length / 3;

function area(m: SurfaceMesh, t: number): number {
  const n = normal(m, t);
  return 0.5 * Math.hypot(n[0], n[1], n[2]);
}

/** (b - a) x (c - a) of triangle t. */
function normal(m: SurfaceMesh, t: number): number[] {
  const p = m.positions, [a, b, c] = [0, 1, 2].map((j) => 3 * m.triangles[3 * t + j]);
  const u = [p[b] - p[a], p[b + 1] - p[a + 1], p[b + 2] - p[a + 2]];
  const w = [p[c] - p[a], p[c + 1] - p[a + 1], p[c + 2] - p[a + 2]];
  return [u[1] * w[2] - u[2] * w[1], u[2] * w[0] - u[0] * w[2], u[0] * w[1] - u[1] * w[0]];
}

function minAngle(m: SurfaceMesh): number {
  const p = m.positions;
  let worst = Math.PI;
  for (let t = 0; t < nt(m); t++) {
    for (let j = 0; j < 3; j++) {
      const a = 3 * m.triangles[3 * t + j], b = 3 * m.triangles[3 * t + ((j + 1) % 3)], c = 3 * m.triangles[3 * t + ((j + 2) % 3)];
      const u = [p[b] - p[a], p[b + 1] - p[a + 1], p[b + 2] - p[a + 2]];
      const w = [p[c] - p[a], p[c + 1] - p[a + 1], p[c + 2] - p[a + 2]];
      const cos = (u[0] * w[0] + u[1] * w[1] + u[2] * w[2]) / (Math.hypot(u[0], u[1], u[2]) * Math.hypot(w[0], w[1], w[2]));
      worst = Math.min(worst, Math.acos(Math.min(1, cos)));
    }
  }
  return worst;
}

const key = (p: Float64Array, v: number): string => `${p[3 * v]},${p[3 * v + 1]},${p[3 * v + 2]}`;

/**
 * Checks of one flat refinement step against its input, independent of the code under test:
 * children tile their parent (areas sum to it, normals agree), the area is kept, old vertices
 * are unchanged, and no vertex sits at the straight midpoint of an edge (on a flat mesh the new
 * points are those midpoints, so a hanging vertex would sit exactly there).
 */
function checkFlatStep(before: SurfaceMesh, r: LocalRefinement): void {
  const m = r.mesh;
  expect(r.parent.length).toBe(nt(m));
  expect(m.positions.subarray(0, before.positions.length)).toEqual(before.positions);
  const sum = new Float64Array(nt(before));
  const children = new Uint32Array(nt(before));
  let unordered = 0, wrongConductor = 0, worstCos = 1;
  for (let t = 0; t < nt(m); t++) {
    const q = r.parent[t];
    if (t > 0 && q < r.parent[t - 1]) unordered++;
    sum[q] += area(m, t);
    children[q]++;
    if (m.conductor[t] !== before.conductor[q]) wrongConductor++;
    const n = normal(m, t), N = normal(before, q);
    worstCos = Math.min(worstCos, (n[0] * N[0] + n[1] * N[1] + n[2] * N[2]) / (Math.hypot(...n) * Math.hypot(...N)));
  }
  expect(unordered).toBe(0);
  expect(wrongConductor).toBe(0);
  expect(worstCos).toBeGreaterThan(1 - 1e-12);
  let split = 0, worstArea = 0, badCount = 0;
  for (let q = 0; q < nt(before); q++) {
    worstArea = Math.max(worstArea, Math.abs(sum[q] / area(before, q) - 1));
    if (children[q] < 1 || children[q] > 4) badCount++;
    if (children[q] > 1) split++;
  }
  expect(worstArea).toBeLessThan(1e-12);
  expect(badCount).toBe(0);
  expect(r.refined).toBe(split);
  expect(Math.abs(surfaceArea(m) / surfaceArea(before) - 1)).toBeLessThan(1e-12);
  expect(r.displacement).toBe(0);
  const vertices = new Set<string>();
  for (let v = 0; v < m.positions.length / 3; v++) vertices.add(key(m.positions, v));
  const mid = new Float64Array(3);
  let hanging = 0;
  for (let h = 0; h < m.triangles.length; h++) {
    const a = 3 * m.triangles[h], b = 3 * m.triangles[h - (h % 3) + ((h % 3) + 1) % 3];
    for (let k = 0; k < 3; k++) mid[k] = 0.5 * (m.positions[a + k] + m.positions[b + k]);
    if (vertices.has(key(mid, 0))) hanging++;
  }
  expect(hanging).toBe(0);
}

/** Triangles whose centroid lies within `radius` of `centre`. */
function markBall(m: SurfaceMesh, centre: number[], radius: number): Uint8Array {
  const marked = new Uint8Array(nt(m));
  const p = m.positions;
  for (let t = 0; t < nt(m); t++) {
    let d2 = 0;
    for (let k = 0; k < 3; k++) {
      const c = (p[3 * m.triangles[3 * t] + k] + p[3 * m.triangles[3 * t + 1] + k] + p[3 * m.triangles[3 * t + 2] + k]) / 3 - centre[k];
      d2 += c * c;
    }
    if (d2 < radius * radius) marked[t] = 1;
  }
  return marked;
}

function markRandom(m: SurfaceMesh, fraction: number, next: () => number): Uint8Array {
  const marked = new Uint8Array(nt(m));
  for (let t = 0; t < marked.length; t++) if (next() < fraction) marked[t] = 1;
  return marked;
}

/**
 * A plate of half-sides hx, hy about the origin in the xy plane stays one disk-like sheet whose
 * boundary is one loop through its rim's vertices: a hanging vertex inside would open edges.
 */
function expectSheet(m: SurfaceMesh, hx: number, hy: number): void {
  let rim = 0;
  for (let v = 0; v < m.positions.length / 3; v++) {
    const x = m.positions[3 * v], y = m.positions[3 * v + 1];
    if (Math.abs(Math.abs(x) - hx) < 1e-12 || Math.abs(Math.abs(y) - hy) < 1e-12) rim++;
  }
  const top = topology(m);
  expect(top).toMatchObject({ nonManifold: 0, misoriented: 0, unused: 0, boundary: rim });
  expect(euler(m)).toBe(1);
}

describe("refineMarked: conformity", () => {
  it("keeps a closed box closed, manifold and consistently oriented under random and clustered marking", () => {
    let m = withLongestRefinementEdges(boxMesh({ size: [1, 2, 0.5], divisions: 2 }));
    const next = random(7);
    for (let round = 0; round < 10; round++) {
      const marked = round < 5 ? markRandom(m, 0.15, next) : markBall(m, [0.5, 1, 0.25], 0.6 * 0.8 ** (round - 5));
      const r = refineMarked(m, marked);
      checkFlatStep(m, r);
      // Every marked triangle was split; the closure may split others, never fewer.
      let markedCount = 0;
      const children = new Uint32Array(marked.length);
      for (const q of r.parent) children[q]++;
      for (let t = 0; t < marked.length; t++) if (marked[t]) { markedCount++; expect(children[t]).toBe(4); }
      expect(r.refined).toBeGreaterThanOrEqual(markedCount);
      m = r.mesh;
      const top = topology(m);
      expect(top.boundary).toBe(0);
      expect(top.nonManifold).toBe(0);
      expect(top.misoriented).toBe(0);
      expect(top.unused).toBe(0);
      expect(euler(m)).toBe(2);
      expect(conductorTopology(m)[0]).toMatchObject({ closed: true, inconsistentEdges: 0 });
    }
    expect(nt(m)).toBeGreaterThan(4 * 48);
  });

  it("keeps an open plate's boundary on its rim (no hanging vertex inside)", () => {
    let m = withLongestRefinementEdges(plateMesh({ size: [2, 1], divisions: [4, 2] }));
    const rim = topology(m).boundary;
    const next = random(11);
    for (let round = 0; round < 8; round++) {
      const marked = round % 2 === 0 ? markRandom(m, 0.2, next) : markBall(m, [1, 0.5, 0], 0.5);
      const r = refineMarked(m, marked);
      checkFlatStep(m, r);
      m = r.mesh;
      expectSheet(m, 1, 0.5);
      expect(conductorTopology(m)[0].inconsistentEdges).toBe(0);
    }
    expect(topology(m).boundary).toBeGreaterThan(rim);
  });

  it("splits a seam between two conductors that share its vertices once for both", () => {
    // One plate, its left half relabelled as a second conductor: the seam edges are shared vertex pairs.
    const plate = withLongestRefinementEdges(plateMesh({ size: [2, 2], divisions: 4 }));
    const conductor = new Uint32Array(nt(plate));
    const p = plate.positions;
    for (let t = 0; t < nt(plate); t++) {
      const cx = (p[3 * plate.triangles[3 * t]] + p[3 * plate.triangles[3 * t + 1]] + p[3 * plate.triangles[3 * t + 2]]) / 3;
      if (cx < 0) conductor[t] = 1;
    }
    let m: SurfaceMesh = { ...plate, conductor, names: ["right", "left"] };
    for (let round = 0; round < 4; round++) {
      // Mark only right-hand triangles beside the seam: the closure must reach across it.
      const marked = markBall(m, [0.05, 0, 0], 0.5);
      for (let t = 0; t < marked.length; t++) if (m.conductor[t] === 1) marked[t] = 0;
      const r = refineMarked(m, marked);
      checkFlatStep(m, r);
      m = r.mesh;
      expectSheet(m, 1, 1);
    }
    expect(m.names).toEqual(["right", "left"]);
    // The closure crossed the seam: the unmarked left-hand conductor was split too.
    let left = 0;
    for (let t = 0; t < nt(m); t++) if (m.conductor[t] === 1) left++;
    expect(left).toBeGreaterThan(16);
  });

  it("splits two bodies in one mesh independently", () => {
    const a = boxMesh({ size: [1, 1, 1], divisions: 2 });
    const b = { ...boxMesh({ size: [1, 1, 1], divisions: 2, center: [3, 0, 0] }), names: ["b"] };
    let m = withLongestRefinementEdges(concatMeshes([a, b]));
    for (let round = 0; round < 4; round++) {
      const r = refineMarked(m, markBall(m, [0.5, 0.5, 0.5], 0.7));
      checkFlatStep(m, r);
      m = r.mesh;
    }
    const tops = conductorTopology(m);
    expect(tops.map((c) => c.closed)).toEqual([true, true]);
    // The far box was never touched.
    let far = 0;
    for (let t = 0; t < nt(m); t++) if (m.conductor[t] === 1) far++;
    expect(far).toBe(48);
  });
});

describe("refineMarked: all or nothing marked", () => {
  it("marking every triangle splits each into 4 (bisec3), nested on flat shapes", () => {
    const m = withLongestRefinementEdges(boxMesh({ size: [1, 1, 2], divisions: [2, 3, 1] }));
    const r = refineMarked(m, new Uint8Array(nt(m)).fill(1));
    expect(nt(r.mesh)).toBe(4 * nt(m));
    expect(r.refined).toBe(nt(m));
    for (let t = 0; t < nt(m); t++) for (let k = 0; k < 4; k++) expect(r.parent[4 * t + k]).toBe(t);
    checkFlatStep(m, r);
    // One new vertex per edge, as in uniform refinement.
    expect(r.mesh.positions.length / 3).toBe(m.positions.length / 3 + topology(m).edges);
  });

  it("places the same new points as uniform refinement, with and without a reference surface", () => {
    for (const s of [sphereMesh({ radius: 1, level: 1 }), { ...sphereMesh({ radius: 1, level: 1 }), faces: undefined, reference: undefined }]) {
      const m = withLongestRefinementEdges(s);
      const r = refineMarked(m, new Uint8Array(nt(m)).fill(1));
      expect(Array.from(r.mesh.positions)).toEqual(Array.from(refineUniform(m).positions));
      expect(r.mesh.reference).toBe(s.reference);
      expect(r.mesh.faces === undefined).toBe(s.faces === undefined);
      expect(r.displacement).toBeGreaterThan(0.01);
    }
  });

  it("marking nothing returns the mesh unchanged", () => {
    const m = withLongestRefinementEdges(boxMesh({ size: [1, 1, 1], divisions: 2 }));
    const r = refineMarked(m, new Uint8Array(nt(m)));
    expect(r.mesh).toBe(m);
    expect(r.refined).toBe(0);
    expect(r.displacement).toBe(0);
    expect(Array.from(r.parent)).toEqual(Array.from({ length: nt(m) }, (_, t) => t));
  });

  it("rejects a marker array of the wrong length", () => {
    const m = boxMesh({ size: [1, 1, 1], divisions: 1 });
    expect(() => refineMarked(m, new Uint8Array(3))).toThrow(/3 marks for 12 triangles/);
  });
});

describe("withLongestRefinementEdges", () => {
  it("rotates each triangle so its longest edge comes first, keeping orientation", () => {
    const m = plateMesh({ size: [3, 1], divisions: [2, 3] });
    const r = withLongestRefinementEdges(m);
    const p = r.positions;
    const len = (t: number, j: number) => {
      const a = 3 * r.triangles[3 * t + j], b = 3 * r.triangles[3 * t + ((j + 1) % 3)];
      return Math.hypot(p[b] - p[a], p[b + 1] - p[a + 1], p[b + 2] - p[a + 2]);
    };
    for (let t = 0; t < nt(m); t++) {
      expect(len(t, 0)).toBeGreaterThanOrEqual(Math.max(len(t, 1), len(t, 2)));
      normal(r, t).forEach((x, k) => expect(x).toBeCloseTo(normal(m, t)[k], 14));
      expect([...r.triangles.subarray(3 * t, 3 * t + 3)].sort()).toEqual([...m.triangles.subarray(3 * t, 3 * t + 3)].sort());
    }
  });
});

describe("refineMarked: shape regularity and growth", () => {
  // Descendants of a triangle under newest-vertex bisection fall into at most four similarity
  // classes (Sewell, Mitchell; surveyed by Mitchell 2016); with the longest edge refined first, each class's
  // angles are angles of longest-edge bisections of the triangle, which are at least half its
  // smallest angle (Rosenberg & Stenger 1975). See the comment of src/mesh/adaptive-refine.ts.
  it("refining 12 times toward a box corner keeps right isosceles triangles and grows linearly", () => {
    let m = withLongestRefinementEdges(boxMesh({ size: [1, 1, 1], divisions: 2 }));
    const start = minAngle(m);
    expect(start).toBeCloseTo(Math.PI / 4, 12);
    const counts = [nt(m)];
    for (let round = 0; round < 12; round++) {
      m = refineMarked(m, markBall(m, [0.5, 0.5, 0.5], 0.5 * 2 ** -round)).mesh;
      counts.push(nt(m));
    }
    // Every triangle of a box split this way stays a right isosceles triangle: one of the four classes.
    expect(minAngle(m)).toBeCloseTo(Math.PI / 4, 9);
    const steps = counts.slice(1).map((c, k) => c - counts[k]);
    // Linear: the later rounds add about as many triangles as the early ones (geometric growth
    // would multiply the step by ~2 every round: 2^11 from the first to the last).
    for (const s of steps) { expect(s).toBeGreaterThan(0); expect(s).toBeLessThan(3 * steps[0]); }
    expect(counts[12]).toBeLessThan(counts[0] + 12 * 3 * steps[0]);
  });

  it("keeps the smallest angle of an irregular flat mesh above half its initial value", () => {
    // A plate with jittered interior vertices: triangles of many shapes.
    const plate = plateMesh({ size: [1, 1], divisions: 6 });
    const p = plate.positions.slice();
    const next = random(3);
    for (let v = 0; v < p.length / 3; v++) {
      if (Math.abs(Math.abs(p[3 * v]) - 0.5) < 1e-12 || Math.abs(Math.abs(p[3 * v + 1]) - 0.5) < 1e-12) continue;
      p[3 * v] += (next() - 0.5) * 0.09;
      p[3 * v + 1] += (next() - 0.5) * 0.09;
    }
    let m = withLongestRefinementEdges({ ...plate, positions: p });
    const start = minAngle(m);
    expect(start).toBeLessThan(0.6); // irregular: well under the 45 degrees of the unjittered grid
    let smallest = start;
    for (let round = 0; round < 12; round++) {
      const r = refineMarked(m, round % 3 === 2 ? markRandom(m, 0.3, next) : markBall(m, [0.5, -0.5, 0], 0.6 * 2 ** -round));
      checkFlatStep(m, r);
      m = r.mesh;
      smallest = Math.min(smallest, minAngle(m));
    }
    expect(smallest).toBeGreaterThanOrEqual(start / 2);
  });
});

describe("refineMarked: curved surfaces", () => {
  it("puts new points on the sphere with its reference, and near it (PN, h^4) without", () => {
    const ballRefine = (s: SurfaceMesh) => {
      let m = withLongestRefinementEdges(s);
      let worst = 0, moved = 0;
      for (let round = 0; round < 3; round++) {
        const before = m;
        const r = refineMarked(m, markBall(m, [0, 0, 1], 0.8));
        m = r.mesh;
        expect(r.refined).toBeGreaterThan(0);
        expect(r.refined).toBeLessThan(nt(before));
        const p = m.positions, nv = before.positions.length / 3;
        for (let v = nv; v < p.length / 3; v++) worst = Math.max(worst, Math.abs(Math.hypot(p[3 * v], p[3 * v + 1], p[3 * v + 2]) - 1));
        moved = Math.max(moved, r.displacement);
        expect(topology(m)).toMatchObject({ boundary: 0, nonManifold: 0, misoriented: 0, unused: 0 });
      }
      return { m, worst, moved };
    };
    // Level 3: its reference (level 5, PN-lifted) is within ~1e-7 of the sphere; level 2's only ~1e-6.
    const s = sphereMesh({ radius: 1, level: 3 });
    // The straight midpoint of the shortest edge of the coarse mesh misses the sphere by
    // 1 - cos(theta/2) for an edge of angle theta; every first-round edge misses by at least that.
    let straight = Infinity;
    for (let h = 0; h < s.triangles.length; h++) {
      const a = 3 * s.triangles[h], b = 3 * s.triangles[h - (h % 3) + ((h % 3) + 1) % 3], p = s.positions;
      straight = Math.min(straight, 1 - Math.hypot(p[a] + p[b], p[a + 1] + p[b + 1], p[a + 2] + p[b + 2]) / 2);
    }
    expect(straight).toBeGreaterThan(1e-3);
    const withRef = ballRefine(s);
    expect(withRef.m.reference).toBe(s.reference);
    expect(withRef.m.faces!.length).toBe(nt(withRef.m));
    expect(withRef.worst).toBeLessThan(1e-6);
    // Without the reference: PN edge curves from the mesh's own normals, off the sphere by O(h^4)
    // (measured 2.0e-5 here, against 2.4e-3 to 3.4e-3 for the coarse edges' straight midpoints), and not nested.
    const bare = ballRefine({ ...s, faces: undefined, reference: undefined });
    expect(bare.m.faces).toBeUndefined();
    expect(bare.worst).toBeGreaterThan(10 * withRef.worst);
    expect(bare.worst).toBeLessThan(straight / 50);
    expect(bare.moved).toBeGreaterThan(1e-3);
  });
});
