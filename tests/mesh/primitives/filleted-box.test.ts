// Box with filleted edges: the points at distance r from the inner box of sides a-2r, b-2r, c-2r.
// Area by Steiner's formula for the parallel body of a box (common practice):
//   A = 2[(a-2r)(b-2r) + (b-2r)(c-2r) + (c-2r)(a-2r)] + 2 pi r [(a-2r) + (b-2r) + (c-2r)] + 4 pi r^2.
import { describe, it, expect } from "vitest";
import { filletedBoxMesh, generateShape, boxMesh } from "../../../src/mesh/primitives/index.js";
import { surfaceArea } from "../../../src/mesh/measure.js";
import { boundingBox } from "../../../src/mesh/model.js";
import { InputError } from "../../../src/errors.js";
import { expectClosed, expectFaithful, type AnalyticSurface } from "./faithful.js";

function filletArea(size: number[], r: number): number {
  const [a, b, c] = size.map((l) => l - 2 * r);
  return 2 * (a * b + b * c + c * a) + 2 * Math.PI * r * (a + b + c) + 4 * Math.PI * r * r;
}

/** The rounded box as the test defines it: nearest point of the inner box, distance r. */
function roundedBox(size: number[], r: number, center = [0, 0, 0]): AnalyticSurface {
  const half = size.map((l) => l / 2 - r);
  const offset = (x: number, y: number, z: number): number[] => [x, y, z].map((v, a) => {
    const u = v - center[a];
    return u - Math.min(half[a], Math.max(-half[a], u));
  });
  return {
    classify: (x, y, z) => offset(x, y, z).map((d, a) => (d > 1e-9 * r ? "+" + "xyz"[a] : d < -1e-9 * r ? "-" + "xyz"[a] : "")).join(""),
    distance: (_f, x, y, z) => Math.hypot(...offset(x, y, z)) - r,
    normal: (_f, x, y, z) => { const d = offset(x, y, z), l = Math.hypot(...d); return [d[0] / l, d[1] / l, d[2] / l]; },
    flat: (f) => f.length === 2,
  };
}

describe("box with filleted edges", () => {
  it("is closed, outward, of bounded aspect ratio, with exact bounds", () => {
    for (const [size, r, g] of [[[10, 10, 4], 1, 1], [[10, 6, 4], 2, 1], [[3, 2, 1], 0.5, 3], [[2, 2, 2], 1, 1], [[4, 2, 2], 1, 1]] as [number[], number, number][]) {
      const m = filletedBoxMesh({ size, fillet: r, panelSize: 0.5, grading: g, center: [1, 2, 3] });
      expectClosed(m, 0, 0.08);
      const b = boundingBox(m.positions);
      for (let a = 0; a < 3; a++) {
        expect(b[a]).toBeCloseTo([1, 2, 3][a] - size[a] / 2, 12);
        expect(b[a + 3]).toBeCloseTo([1, 2, 3][a] + size[a] / 2, 12);
      }
    }
  });

  it("faces: 6 flat, 12 fillets, 8 corner patches, each triangle on its face, exact reference normals", () => {
    const size = [10, 6, 4], r = 1.5, center = [1, -2, 0.5];
    const m = filletedBoxMesh({ size, fillet: r, divisions: 3, center });
    const names = expectFaithful(m, roundedBox(size, r, center), 1e-13);
    expect(names.filter((n) => n.length === 2)).toHaveLength(6);
    expect(names.filter((n) => n.length === 4)).toHaveLength(12);
    expect(names.filter((n) => n.length === 6)).toHaveLength(8);
    // The reference is the same construction at 4x the resolution.
    expect(m.reference!.triangles.length).toBe(16 * m.triangles.length);
  });

  it("half the smallest side leaves no flat face there; all three give a sphere", () => {
    const slab = filletedBoxMesh({ size: [6, 4, 2], fillet: 1, panelSize: 0.4 });
    const names = expectFaithful(slab, roundedBox([6, 4, 2], 1), 1e-13);
    // No z extent left: the x and y faces and the fillets along z are gone (4 + 4 of 26).
    expect(names.filter((n) => n.length === 2)).toEqual(["-z", "+z"]);
    expect(names.filter((n) => !n.includes("z"))).toEqual([]);
    expect(names).toHaveLength(26 - 8);
    const ball = filletedBoxMesh({ size: [2, 2, 2], fillet: 1, divisions: 4 });
    expect(expectFaithful(ball, roundedBox([2, 2, 2], 1), 1e-13)).toHaveLength(8);
    for (let i = 0; i < ball.positions.length; i += 3) expect(Math.hypot(ball.positions[i], ball.positions[i + 1], ball.positions[i + 2])).toBeCloseTo(1, 14);
  });

  it("a flat part far narrower than a panel is spanned by the fillets' panels, every vertex still on the surface", () => {
    const size = [2, 2, 2 + 1e-6], r = 1;
    const m = filletedBoxMesh({ size, fillet: r, panelSize: 0.3 });
    expectClosed(m, 0, 0.2);
    const s = roundedBox(size, r);
    for (let i = 0; i < m.positions.length; i += 3) expect(Math.abs(s.distance("", m.positions[i], m.positions[i + 1], m.positions[i + 2]))).toBeLessThan(1e-15);
    // The same panels as the sphere of radius 1 (a fillet of half every side), 1e-6 apart.
    const ball = filletedBoxMesh({ size: [2, 2, 2], fillet: r, panelSize: 0.3 });
    expect(m.triangles.length).toBe(ball.triangles.length);
    expect(Math.abs(surfaceArea(m) - surfaceArea(ball))).toBeLessThan(1e-5);
  });

  it("area converges to Steiner's formula at second order as the panels shrink", () => {
    const size = [10, 6, 4], r = 1.5, exact = filletArea(size, r);
    // Panel sizes that put 2, 4, 8 steps on each half fillet (pi r / 4).
    const err = [2, 4, 8].map((k) => Math.abs(surfaceArea(filletedBoxMesh({ size, fillet: r, panelSize: (Math.PI * r) / 4 / k })) / exact - 1));
    // Chords under arcs: the error falls by about 4 per halving of the panel size.
    expect(err[0]).toBeLessThan(0.01);
    expect(err[1]).toBeLessThan(err[0] / 3);
    expect(err[2]).toBeLessThan(err[1] / 3);
    expect(err[2]).toBeLessThan(1e-3);
    // The reference is the finer surface: its own area is closer still.
    const m = filletedBoxMesh({ size, fillet: r, panelSize: 1 });
    const ref = m.reference!;
    const refMesh = { positions: ref.positions, triangles: ref.triangles, conductor: new Uint32Array(ref.face.length), names: ["ref"] };
    expect(Math.abs(surfaceArea(refMesh) / exact - 1)).toBeLessThan(err[0] / 10);
  });

  it("through generateShape: a fillet of 0 is the plain box mesh for mesh, more than half the smallest side is refused", () => {
    const plain = boxMesh({ size: [1, 2, 3], divisions: 3 });
    const zero = generateShape("box", { size: [1, 2, 3], divisions: 3, fillet: 0 });
    expect(Array.from(zero.positions)).toEqual(Array.from(plain.positions));
    expect(zero.faces).toBeUndefined();
    const mm = generateShape("box", { size: "10,6,4", fillet: "1.5", panelSize: 1, name: "electrode" }, { metresPerUnit: 1e-3 });
    expect(mm.names).toEqual(["electrode"]);
    expect(Math.abs(surfaceArea(mm) / (filletArea([10, 6, 4], 1.5) * 1e-6) - 1)).toBeLessThan(0.01);
    const describe = (p: string) => "--" + p;
    for (const [params, re] of [
      [{ size: "10,6,4", fillet: 2.5 }, /--fillet must be at most half the smallest side \(2\), got 2\.5/],
      [{ size: "10,6,4", fillet: -1 }, /--fillet must be 0 or more/],
      [{ size: "10,6,4", fillet: "1,2" }, /--fillet takes 1 value/],
    ] as [Record<string, unknown>, RegExp][]) {
      expect(() => generateShape("box", params as never, { describe })).toThrow(InputError);
      expect(() => generateShape("box", params as never, { describe })).toThrow(re);
    }
  });
});
