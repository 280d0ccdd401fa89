import { describe, it, expect } from "vitest";
import { tetrahedronVolume6, triangleArea, triangleAreaVector, triangleCentroid, triangleNormal } from "../../src/geometry/triangle.js";

describe("triangle measures (closed forms)", () => {
  it("right triangle with legs 2 and 3 in the xy-plane: area 3, normal +z, area vector (0, 0, 6)", () => {
    const p = new Float64Array([0, 0, 0, 2, 0, 0, 0, 3, 0]);
    expect(triangleArea(p, 0, 3, 6)).toBe(3);
    expect(Array.from(triangleAreaVector(new Float64Array(3), 0, p, 0, 3, 6))).toEqual([0, 0, 6]);
    const n = new Float64Array(3);
    expect(triangleNormal(n, 0, p, 0, 3, 6)).toBe(6);
    expect(Array.from(n)).toEqual([0, 0, 1]);
    // Swapping two corners turns the normal over.
    triangleNormal(n, 0, p, 0, 6, 3);
    expect(Array.from(n)).toEqual([0, 0, -1]);
  });

  it("equilateral triangle of side s: area √3/4·s², normal along (1, 1, 1)/√3, centroid at the mean", () => {
    const s = Math.SQRT2 * 2.5; // corners 2.5·e_x, 2.5·e_y, 2.5·e_z are s apart
    const p = new Float64Array([2.5, 0, 0, 0, 2.5, 0, 0, 0, 2.5]);
    expect(triangleArea(p, 0, 3, 6)).toBeCloseTo((Math.sqrt(3) / 4) * s * s, 14);
    const n = new Float64Array(3);
    triangleNormal(n, 0, p, 0, 3, 6);
    for (const x of n) expect(x).toBeCloseTo(1 / Math.sqrt(3), 15);
    const g = triangleCentroid(new Float64Array(3), 0, p, 0, 3, 6);
    for (const x of g) expect(x).toBeCloseTo(2.5 / 3, 15);
  });

  it("indexed and packed layouts and output offsets agree", () => {
    const positions = new Float64Array([9, 9, 9, 1, 2, 3, 4, 6, 5, 7, 1, 8]);
    const packed = new Float64Array([0, 0, 1, 2, 3, 4, 6, 5, 7, 1, 8]); // same corners from offset 2
    const out = new Float64Array(8).fill(-1);
    triangleAreaVector(out, 5, positions, 3, 6, 9);
    const ref = triangleAreaVector(new Float64Array(3), 0, packed, 2, 5, 8);
    expect(Array.from(out.subarray(5))).toEqual(Array.from(ref));
    expect(Array.from(out.subarray(0, 5))).toEqual([-1, -1, -1, -1, -1]);
    expect(triangleArea(positions, 3, 6, 9)).toBe(triangleArea(packed, 2, 5, 8));
    // |area vector| is twice the area.
    expect(0.5 * Math.hypot(ref[0], ref[1], ref[2])).toBeCloseTo(triangleArea(packed, 2, 5, 8), 14);
  });

  it("a degenerate triangle has zero area and a zero normal", () => {
    const p = new Float64Array([0, 0, 0, 1, 1, 1, 2, 2, 2]);
    const n = new Float64Array([7, 7, 7]);
    expect(triangleNormal(n, 0, p, 0, 3, 6)).toBe(0);
    expect(Array.from(n)).toEqual([0, 0, 0]);
    expect(triangleArea(p, 0, 3, 6)).toBe(0);
  });
});

describe("tetrahedronVolume6", () => {
  it("unit right tetrahedron: 6·(1/6) = 1 with the apex behind, −1 in front, and a closed surface gives 6V about any apex", () => {
    const p = new Float64Array([1, 0, 0, 0, 1, 0, 0, 0, 1]);
    expect(tetrahedronVolume6(p, 0, 3, 6, 0, 0, 0)).toBe(1);
    expect(tetrahedronVolume6(p, 0, 6, 3, 0, 0, 0)).toBe(-1);
    expect(tetrahedronVolume6(p, 0, 3, 6, 1, 1, 1)).toBeCloseTo(-2, 15); // (1,1,1) is in front, at distance 2/√3
    // Unit cube as 12 outward triangles: 6 × volume 1 from inside, outside or on a corner.
    const q = new Float64Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0, 0, 0, 1, 1, 0, 1, 1, 1, 1, 0, 1, 1]);
    const tr = [0, 2, 1, 0, 3, 2, 4, 5, 6, 4, 6, 7, 0, 1, 5, 0, 5, 4, 3, 7, 6, 3, 6, 2, 0, 4, 7, 0, 7, 3, 1, 2, 6, 1, 6, 5];
    for (const [x, y, z] of [[0.5, 0.5, 0.5], [3, -2, 7], [0, 0, 0]]) {
      let s = 0;
      for (let t = 0; t < 12; t++) s += tetrahedronVolume6(q, 3 * tr[3 * t], 3 * tr[3 * t + 1], 3 * tr[3 * t + 2], x, y, z);
      expect(s).toBeCloseTo(6, 12);
    }
  });
});
