import { describe, it, expect } from "vitest";
import type { SurfaceMesh } from "../../src/mesh/model.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { checkMesh, checkMeshParallel, PARALLEL_MIN_TRIANGLES } from "../../src/mesh/check.js";
import { closeSharedPool } from "../../src/linalg/pool.js";
import { formatCheckSummary } from "../../src/report/check-summary.js";
import { gridCube } from "./grid-cube.js";


function plate(n: number, z: number, name: string): SurfaceMesh {
  const pos: number[] = [], tri: number[] = [];
  for (let j = 0; j <= n; j++) for (let i = 0; i <= n; i++) pos.push(i / n, j / n, z);
  const v = (i: number, j: number) => j * (n + 1) + i;
  for (let j = 0; j < n; j++) for (let i = 0; i < n; i++) tri.push(v(i, j), v(i + 1, j), v(i + 1, j + 1), v(i, j), v(i + 1, j + 1), v(i, j + 1));
  return { positions: new Float64Array(pos), triangles: new Uint32Array(tri), conductor: new Uint32Array(tri.length / 3), names: [name] };
}

const mm = 1e-3;

describe("checkMesh", () => {
  it("reports a closed outward cube: area 6a², box, volume a³ (closed forms)", () => {
    const r = checkMesh(gridCube(3, [0, 0, 0], [2 * mm, 2 * mm, 2 * mm], "cube"));
    expect(r.failed).toBe(false);
    expect(r.pairs).toEqual([]);
    const [c] = r.conductors;
    expect(c.name).toBe("cube");
    expect(c.triangles).toBe(108);
    expect(c.area).toBeCloseTo(6 * 4e-6, 18);
    expect(c.bbox).toEqual([0, 0, 0, 2 * mm, 2 * mm, 2 * mm]);
    expect(c.closed).toBe(true);
    expect(c.boundaryEdges).toBe(0);
    expect(c.nonManifoldEdges).toBe(0);
    expect(c.orientation).toBe("outward");
    expect(c.volume).toBeCloseTo(8e-9, 20);
    expect(c.edgeLength.min).toBeCloseTo((2 / 3) * mm, 15);
    expect(c.edgeLength.max).toBeCloseTo((2 / 3) * Math.SQRT2 * mm, 15);
    expect(c.worstAspect).toBeCloseTo((1 + Math.SQRT2) / 2, 12);
  });

  it("reports an inward cube as flipped", () => {
    const r = checkMesh(gridCube(2, [0, 0, 0], [1, 1, 1], "inv", true));
    expect(r.conductors[0].orientation).toBe("inward-flipped");
    expect(r.conductors[0].flippedTriangles).toBe(48);
    expect(r.conductors[0].volume).toBeCloseTo(1, 12);
    expect(r.failed).toBe(false);
  });

  it("accepts open plates and reports their boundary", () => {
    const r = checkMesh(concatMeshes([plate(4, 0, "bottom"), plate(4, 0.5, "top")]));
    expect(r.conductors.map((c) => [c.closed, c.boundaryEdges, c.orientation, c.volume])).toEqual([[false, 16, "open", null], [false, 16, "open", null]]);
    expect(r.pairs).toEqual([]);
    expect(r.failed).toBe(false);
  });

  it("warns on plates closer than their panel size", () => {
    const r = checkMesh(concatMeshes([plate(4, 0, "bottom"), plate(4, 0.1, "top")]));
    expect(r.pairs).toHaveLength(1);
    expect(r.pairs[0]).toMatchObject({ kind: "gap", severity: "warning", a: "bottom", b: "top" });
    expect(r.pairs[0].distance).toBeCloseTo(0.1, 12);
    expect(r.failed).toBe(false);
  });

  it("fails on overlapping, touching and nested conductors, not on a gap or distance", () => {
    const a = gridCube(2, [0, 0, 0], [1, 1, 1], "a");
    const kinds = (m: SurfaceMesh) => checkMesh(m).pairs.map((p) => `${p.a}/${p.b}:${p.kind}:${p.severity}`);
    expect(kinds(concatMeshes([a, gridCube(2, [0.5, 0.5, 0.5], [1, 1, 1], "b")]))).toEqual(["a/b:intersect:error"]);
    expect(kinds(concatMeshes([a, gridCube(2, [1, 0, 0], [1, 1, 1], "b")]))).toEqual(["a/b:touch:error"]);
    // The touch is found whichever way the second cube was wound in the file.
    expect(kinds(concatMeshes([a, gridCube(2, [1, 0, 0], [1, 1, 1], "b", true)]))).toEqual(["a/b:touch:error"]);
    expect(kinds(concatMeshes([a, gridCube(2, [1.05, 0, 0], [1, 1, 1], "b")]))).toEqual(["a/b:gap:warning"]);
    expect(kinds(concatMeshes([a, gridCube(2, [3, 0, 0], [1, 1, 1], "b")]))).toEqual([]);
    expect(kinds(concatMeshes([gridCube(2, [0.25, 0.25, 0.25], [0.5, 0.5, 0.5], "small"), gridCube(4, [-1, -1, -1], [3, 3, 3], "big")]))).toEqual(["small/big:inside:warning"]);
    expect(checkMesh(concatMeshes([a, gridCube(2, [1, 0, 0], [1, 1, 1], "b")])).failed).toBe(true);
  });

  it("calls a plate spanning a box inside it and touching its walls a contact", () => {
    const r = checkMesh(concatMeshes([plate(4, 0.3, "plate"), gridCube(2, [0, 0, 0], [1, 1, 1], "box")]));
    expect(r.pairs.map((p) => `${p.a}/${p.b}:${p.kind}`)).toEqual(["plate/box:touch"]);
    // Resting on the box's top face it only touches.
    const s = checkMesh(concatMeshes([plate(4, 1, "plate"), gridCube(2, [0, 0, 0], [1, 1, 1], "box")]));
    expect(s.pairs.map((p) => `${p.a}/${p.b}:${p.kind}`)).toEqual(["plate/box:touch"]);
  });

  it("does not call a wire in the bore of a hollow conductor inside it", () => {
    const outer = gridCube(8, [0, 0, 0], [6, 6, 6], "tube");
    const bore = gridCube(8, [1, 1, 1], [4, 4, 4], "tube");
    const shellRaw = concatMeshes([outer, bore]);
    const shell: SurfaceMesh = { ...shellRaw, conductor: new Uint32Array(shellRaw.conductor.length), names: ["tube"] };
    const r = checkMesh(concatMeshes([shell, gridCube(2, [2.5, 2.5, 2.5], [1, 1, 1], "wire")]));
    expect(r.pairs).toEqual([]);
    expect(r.conductors[0].components).toBe(2);
    expect(r.conductors[0].volume).toBeCloseTo(216 - 64, 9);
  });

  it("summarises in the user's unit and states it", () => {
    const r = checkMesh(concatMeshes([gridCube(1, [0, 0, 0], [mm, mm, mm], "a"), gridCube(1, [0.5 * mm, 0.5 * mm, 0.5 * mm], [mm, mm, mm], "b")]));
    const text = formatCheckSummary(r, { unit: "mm", unitAssumed: true });
    expect(text).toContain("unit: mm (assumed; set with --unit)");
    expect(text).toMatch(/FAILED: conductors a and b intersect at \([-0-9.e]+, [-0-9.e]+, [-0-9.e]+\) mm/);
    expect(text).toMatch(/^a +12 +6\.000 /m);
  });
});

describe("checkMeshParallel", () => {
  it("gives the same report as checkMesh above the parallel threshold", async () => {
    const m = concatMeshes([gridCube(66, [0, 0, 0], [1, 1, 1], "a"), gridCube(66, [1.001, 0, 0], [1, 1, 1], "b")]);
    expect(m.triangles.length / 3).toBeGreaterThanOrEqual(PARALLEL_MIN_TRIANGLES);
    const par = await checkMeshParallel(m);
    await closeSharedPool();
    const seq = checkMesh(m);
    expect(par).toEqual(seq);
    expect(seq.pairs.map((p) => p.kind)).toEqual(["gap"]);
  });
});
