import { describe, it, expect, afterAll } from "vitest";
import { remeshFlatPatches } from "../../src/mesh/remesh.js";
import { planarRegions } from "../../src/mesh/planar-regions.js";
import { conductorTopology } from "../../src/mesh/topology.js";
import { conductorAreas, concatMeshes, type SurfaceMesh } from "../../src/mesh/model.js";
import { triangleAspect } from "../../src/mesh/quality.js";
import { tetrahedronVolume6 } from "../../src/geometry/triangle.js";
import { boxMesh, sphereMesh, cylinderMesh } from "../../src/mesh/primitives/index.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { closeSharedPool } from "../../src/linalg/pool.js";
import { roundedPrism, sliverBox } from "./cad-style.js";

afterAll(() => closeSharedPool());

function volume(m: SurfaceMesh): number {
  let v = 0;
  for (let t = 0; t < m.triangles.length / 3; t++) v += tetrahedronVolume6(m.positions, 3 * m.triangles[3 * t], 3 * m.triangles[3 * t + 1], 3 * m.triangles[3 * t + 2], 0, 0, 0);
  return v / 6;
}

function worstAspect(m: SurfaceMesh): number {
  let w = 0;
  for (let t = 0; t < m.triangles.length / 3; t++) w = Math.max(w, triangleAspect(m.positions, m.triangles, t));
  return w;
}

/** Every property a remeshed mesh must keep (see src/mesh/remesh.ts). */
function expectFaithful(before: SurfaceMesh, after: SurfaceMesh): void {
  const topo = conductorTopology(after);
  for (const c of topo) {
    expect(c.closed).toBe(true);
    expect(c.inconsistentEdges).toBe(0);
    expect(c.nonManifoldEdges).toBe(0);
  }
  const a0 = conductorAreas(before), a1 = conductorAreas(after);
  for (let c = 0; c < a0.length; c++) expect(Math.abs(a1[c] - a0[c])).toBeLessThan(1e-12 * a0[c]);
  // Same orientation: the same enclosed volume with the same sign.
  expect(Math.abs(volume(after) - volume(before))).toBeLessThan(1e-9 * Math.abs(volume(before)));
  // Every input vertex kept, at its exact coordinates, and still used.
  const nv = before.positions.length / 3;
  expect(Array.from(after.positions.subarray(0, 3 * nv))).toEqual(Array.from(before.positions));
  const used = new Uint8Array(nv);
  for (const v of after.triangles) if (v < nv) used[v] = 1;
  expect(used.every((u) => u === 1)).toBe(true);
  // Every new point on the plane of a region of the input that it lies in.
  const regions = planarRegions(before);
  let scale = 0;
  for (const x of before.positions) scale = Math.max(scale, Math.abs(x));
  for (let v = nv; v < after.positions.length / 3; v++) {
    let best = Infinity;
    for (let r = 0; r < regions.count; r++) {
      const d = regions.normal[3 * r] * after.positions[3 * v] + regions.normal[3 * r + 1] * after.positions[3 * v + 1] + regions.normal[3 * r + 2] * after.positions[3 * v + 2] - regions.offset[r];
      best = Math.min(best, Math.abs(d));
    }
    expect(best).toBeLessThan(1e-12 * scale);
  }
}

describe("remeshFlatPatches", () => {
  it("remeshes a CAD-style rounded prism (float32 coordinates) into well-shaped panels, watertight and on the same surface", () => {
    const { mesh } = roundedPrism(5e-3, 3e-3, 1e-3, 6, 4e-3, true);
    const { mesh: out, summary } = remeshFlatPatches(mesh);
    expect(summary.patches).toBe(2); // the two fanned caps; their split edges carry the rest along
    expect(summary.worstAspectBefore).toBeGreaterThan(100);
    expect(summary.worstAspectAfter).toBeLessThan(4);
    expect(worstAspect(out)).toBeLessThan(4);
    expect(summary.trianglesAfter).toBe(out.triangles.length / 3);
    expect(summary.trianglesAfter).toBeLessThan(3000);
    expectFaithful(mesh, out);
  });

  it("remeshes a CAD-style box with slivers, grading toward its edges", () => {
    const mesh = sliverBox([1e-2, 1e-2, 1e-2], [0.02, 0.05, 0.1, 0.3, 0.7, 0.9, 0.95], [0.1, 0.2, 0.3]);
    const { mesh: out, summary } = remeshFlatPatches(mesh);
    expect(summary.patches).toBe(6);
    expect(summary.worstAspectBefore).toBeGreaterThan(1000);
    expect(summary.worstAspectAfter).toBeLessThan(4);
    expectFaithful(mesh, out);
    // Smaller panels near the edges than in the middle of a face.
    const p = out.positions, tr = out.triangles;
    let nearEdge = 0, nNear = 0, middle = 0, nMiddle = 0;
    for (let t = 0; t < tr.length / 3; t++) {
      const a = 3 * tr[3 * t], b = 3 * tr[3 * t + 1], c = 3 * tr[3 * t + 2];
      const cz = (p[a + 2] + p[b + 2] + p[c + 2]) / 3 - 0.3;
      if (Math.abs(cz - 1e-2) > 1e-9) continue; // the top face
      const cx = (p[a] + p[b] + p[c]) / 3 - 0.1, cy = (p[a + 1] + p[b + 1] + p[c + 1]) / 3 - 0.2;
      const d = Math.min(cx, cy, 1e-2 - cx, 1e-2 - cy);
      const len = Math.hypot(p[b] - p[a], p[b + 1] - p[a + 1]);
      if (d < 1e-3) { nearEdge += len; nNear++; } else if (d > 3e-3) { middle += len; nMiddle++; }
    }
    expect(nNear).toBeGreaterThan(0);
    expect(nMiddle).toBeGreaterThan(0);
    expect(nearEdge / nNear).toBeLessThan(0.7 * (middle / nMiddle));
  });

  it("keeps a hole a hole: an open square sheet with a square hole, fanned in slivers from the hole's corners", () => {
    const k = 40, pos: number[] = [], tri: number[] = [];
    const ids = new Map<string, number>();
    const vertex = (x: number, y: number) => {
      const key = `${x.toFixed(9)},${y.toFixed(9)}`;
      let v = ids.get(key);
      if (v === undefined) { v = pos.length / 3; ids.set(key, v); pos.push(x * 1e-3, y * 1e-3, 2e-3); }
      return v;
    };
    const C = [[0, 0], [10, 0], [10, 10], [0, 10]], D = [[4, 4], [6, 4], [6, 6], [4, 6]];
    for (let s = 0; s < 4; s++) {
      const [ax, ay] = C[s], [bx, by] = C[(s + 1) % 4];
      const O = Array.from({ length: k + 1 }, (_, i) => vertex(ax + (i / k) * (bx - ax), ay + (i / k) * (by - ay)));
      const d0 = vertex(D[s][0], D[s][1]), d1 = vertex(D[(s + 1) % 4][0], D[(s + 1) % 4][1]);
      for (let i = 0; i < k / 2; i++) tri.push(O[i], O[i + 1], d0);
      tri.push(O[k / 2], d1, d0);
      for (let i = k / 2; i < k; i++) tri.push(O[i], O[i + 1], d1);
    }
    const sheet: SurfaceMesh = { positions: Float64Array.from(pos), triangles: Uint32Array.from(tri), conductor: new Uint32Array(tri.length / 3), names: ["sheet"] };
    const { mesh: out, summary } = remeshFlatPatches(sheet);
    expect(summary.patches).toBe(1);
    expect(summary.worstAspectAfter).toBeLessThan(4);
    const topo = conductorTopology(out)[0];
    expect(topo.inconsistentEdges).toBe(0);
    expect(topo.nonManifoldEdges).toBe(0);
    expect(Math.abs(conductorAreas(out)[0] - 96e-6)).toBeLessThan(1e-12 * 96e-6 + 1e-18);
    for (let t = 0; t < out.triangles.length / 3; t++) {
      const a = 3 * out.triangles[3 * t], b = 3 * out.triangles[3 * t + 1], c = 3 * out.triangles[3 * t + 2];
      const x = (out.positions[a] + out.positions[b] + out.positions[c]) / 3e-3, y = (out.positions[a + 1] + out.positions[b + 1] + out.positions[c + 1]) / 3e-3;
      expect(x > 4 && x < 6 && y > 4 && y < 6).toBe(false);
      expect(out.positions[a + 2]).toBe(2e-3);
      // Facing +z, as the sheet did.
      const ux = out.positions[b] - out.positions[a], uy = out.positions[b + 1] - out.positions[a + 1];
      const vx = out.positions[c] - out.positions[a], vy = out.positions[c + 1] - out.positions[a + 1];
      expect(ux * vy - uy * vx).toBeGreaterThan(0);
    }
  });

  it("makes panels no larger than the gap where another conductor faces a patch", () => {
    const a = sliverBox([1e-2, 1e-2, 1e-2], [0.1, 0.5], [0, 0, 0], "a");
    const b = sliverBox([1e-2, 1e-2, 1e-2], [0.1, 0.5], [1.05e-2, 0, 0], "b"); // 0.5 mm away along x
    const { mesh: out } = remeshFlatPatches(concatMeshes([a, b]));
    // Mean edge length in the middle of a's face toward b (x = 10 mm) and of its far face (x = 0).
    const mean = (x0: number) => {
      let sum = 0, n = 0;
      const p = out.positions, tr = out.triangles;
      for (let t = 0; t < tr.length / 3; t++) {
        if (out.conductor[t] !== 0) continue;
        const i = 3 * tr[3 * t], j = 3 * tr[3 * t + 1], k = 3 * tr[3 * t + 2];
        if (![i, j, k].every((v) => Math.abs(p[v] - x0) < 1e-12)) continue;
        const cy = (p[i + 1] + p[j + 1] + p[k + 1]) / 3, cz = (p[i + 2] + p[j + 2] + p[k + 2]) / 3;
        if (Math.abs(cy - 5e-3) > 2e-3 || Math.abs(cz - 5e-3) > 2e-3) continue;
        sum += Math.hypot(p[j + 1] - p[i + 1], p[j + 2] - p[i + 2]); n++;
      }
      return sum / n;
    };
    const near = mean(1e-2), far = mean(0);
    expect(near).toBeLessThan(0.8e-3);
    expect(near).toBeLessThan(0.4 * far);
    expectFaithful(concatMeshes([a, b]), out);
  });

  it("remeshes a tetrahedron's faces to a small panel size, the slanted one too (points split from its edges are off their lines by rounding)", () => {
    const tet: SurfaceMesh = {
      positions: Float64Array.from([0, 0, 0, 1e-3, 0, 0, 0, 1e-3, 0, 0, 0, 1e-3]),
      triangles: Uint32Array.from([0, 2, 1, 0, 1, 3, 0, 3, 2, 1, 2, 3]),
      conductor: new Uint32Array(4), names: ["tet"],
    };
    const { mesh: out, summary } = remeshFlatPatches(tet, { panelSize: 0.2e-3 });
    expect(summary.patches).toBe(4);
    expect(summary.worstAspectAfter).toBeLessThan(4);
    expectFaithful(tet, out);
  });

  it("leaves good meshes as they are: the same object, byte for byte", () => {
    const box = boxMesh({ size: [1, 2, 3], divisions: 6, grading: 3 });
    const sphere = sphereMesh({ radius: 1, level: 3 });
    const cylinder = cylinderMesh({ radius: 1, height: 3, divisions: 32 });
    const two = concatMeshes([box, { ...sphere, positions: sphere.positions.map((x, i) => (i % 3 === 0 ? x + 5 : x)) }]);
    for (const m of [box, sphere, cylinder, two]) {
      const copy = Float64Array.from(m.positions), tri = Uint32Array.from(m.triangles);
      const r = remeshFlatPatches(m);
      expect(r.mesh).toBe(m);
      expect(r.summary.patches).toBe(0);
      expect(r.summary.trianglesAfter).toBe(r.summary.trianglesBefore);
      expect(Array.from(m.positions)).toEqual(Array.from(copy));
      expect(Array.from(m.triangles)).toEqual(Array.from(tri));
    }
  });

  it("keeps the triangles `only` excludes, and does not split their edges", () => {
    const a = sliverBox([1, 1, 1], [0.1, 0.5], [0, 0, 0], "a");
    const b = sliverBox([1, 1, 1], [0.1, 0.5], [3, 0, 0], "b");
    const both = concatMeshes([a, b]);
    const only = new Uint8Array(both.triangles.length / 3);
    only.fill(1, 0, a.triangles.length / 3);
    const { mesh: out, summary } = remeshFlatPatches(both, { only });
    expect(summary.patches).toBe(6);
    expectFaithful(both, out);
    // b's triangles are kept as they were.
    let kept = 0;
    for (let t = 0; t < out.triangles.length / 3; t++) if (out.conductor[t] === 1) kept++;
    expect(kept).toBe(b.triangles.length / 3);
  });

  it("remeshes a good mesh when its panels exceed the user's panel size", () => {
    const box = boxMesh({ size: [1, 1, 1], divisions: 2 });
    const { mesh: out, summary } = remeshFlatPatches(box, { panelSize: 0.2 });
    expect(summary.patches).toBe(6);
    expectFaithful(box, out);
    let longest = 0;
    for (let t = 0; t < out.triangles.length / 3; t++) {
      for (let j = 0; j < 3; j++) {
        const a = 3 * out.triangles[3 * t + j], b = 3 * out.triangles[3 * t + (j + 1) % 3];
        longest = Math.max(longest, Math.hypot(out.positions[b] - out.positions[a], out.positions[b + 1] - out.positions[a + 1], out.positions[b + 2] - out.positions[a + 2]));
      }
    }
    expect(longest).toBeLessThan(1.5 * 0.2);
  });

  it("brings the capacitance of a CAD-style sliver cube close to the unit cube's (Hwang & Mascagni, J. Appl. Phys. 95, 2004: C/(4π ε0 a) = 0.66068)", async () => {
    const fourPiEps0 = 4 * Math.PI * EPSILON_0;
    const cube = sliverBox([1, 1, 1], [0.02, 0.05, 0.1, 0.3, 0.7, 0.9, 0.95]);
    const remeshed = remeshFlatPatches(cube).mesh;
    const [before, after, good] = await Promise.all([cube, remeshed, boxMesh({ size: [1, 1, 1], divisions: 8 })].map((m) => extractMesh(m, { solver: "direct" })));
    const err = (c: number) => Math.abs(c / fourPiEps0 / 0.66068 - 1);
    const eBefore = err(before.maxwell[0]), eAfter = err(after.maxwell[0]), eGood = err(good.maxwell[0]);
    expect(eAfter).toBeLessThan(0.25 * eBefore);
    expect(eAfter).toBeLessThan(5e-3);
    expect(eGood).toBeLessThan(5e-3);
    console.log(`sliver cube: error ${(100 * eBefore).toFixed(2)} % (${cube.triangles.length / 3} panels), remeshed ${(100 * eAfter).toFixed(2)} % (${remeshed.triangles.length / 3}), generated box ${(100 * eGood).toFixed(2)} %`);
  });
});
