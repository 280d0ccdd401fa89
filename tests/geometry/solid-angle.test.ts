import { describe, it, expect } from "vitest";
import { solidAngle, windingNumber } from "../../src/geometry/solid-angle.js";
import { icosphere } from "../bem/icosphere.js";

/** Unit cube [0, 1]³, 12 triangles counter-clockwise seen from outside. */
function cube(): { positions: Float64Array; triangles: Uint32Array } {
  const positions = new Float64Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0, 0, 0, 1, 1, 0, 1, 1, 1, 1, 0, 1, 1]);
  const triangles = new Uint32Array([
    0, 2, 1, 0, 3, 2, // z = 0, normal −z
    4, 5, 6, 4, 6, 7, // z = 1, normal +z
    0, 1, 5, 0, 5, 4, // y = 0, normal −y
    3, 7, 6, 3, 6, 2, // y = 1, normal +y
    0, 4, 7, 0, 7, 3, // x = 0, normal −x
    1, 2, 6, 1, 6, 5, // x = 1, normal +x
  ]);
  return { positions, triangles };
}

const all = (n: number) => Uint32Array.from({ length: n }, (_, i) => i);

describe("solidAngle (Van Oosterom & Strackee 1983)", () => {
  const octant = new Float64Array([1, 0, 0, 0, 1, 0, 0, 0, 1]);

  it("the octant face triangle seen from the origin subtends one eighth of the sphere, π/2", () => {
    // Normal (b − a) × (c − a) ∝ (1, 1, 1) points away from the origin: the origin is behind, Ω > 0.
    expect(solidAngle(octant, 0, 3, 6, 0, 0, 0)).toBeCloseTo(Math.PI / 2, 15);
    // Scaled out to radius 7: the same octant.
    const far = octant.map((x) => 7 * x);
    expect(solidAngle(far, 0, 3, 6, 0, 0, 0)).toBeCloseTo(Math.PI / 2, 14);
  });

  it("changes sign with the orientation and with the side the point is on", () => {
    expect(solidAngle(octant, 0, 6, 3, 0, 0, 0)).toBeCloseTo(-Math.PI / 2, 15);
    // Mirror point through the plane x + y + z = 1: (2/3, 2/3, 2/3) sees the front, by symmetry −π/2.
    expect(solidAngle(octant, 0, 3, 6, 2 / 3, 2 / 3, 2 / 3)).toBeCloseTo(-Math.PI / 2, 14);
  });

  it("a cube face seen from the centre subtends 4π/6, each of its two triangles 2π/6", () => {
    const { positions, triangles } = cube();
    for (let t = 0; t < 12; t++) {
      const w = solidAngle(positions, 3 * triangles[3 * t], 3 * triangles[3 * t + 1], 3 * triangles[3 * t + 2], 0.5, 0.5, 0.5);
      expect(w).toBeCloseTo(Math.PI / 3, 14);
    }
  });

  it("far away it tends to the projected area over r² (A·cosθ/r²)", () => {
    // Right triangle of area ½ in z = 0, normal +z; the point 1000 below the plane sees its back.
    const p = new Float64Array([0, 0, 0, 1, 0, 0, 0, 1, 0]);
    const r = 1000;
    expect(solidAngle(p, 0, 3, 6, 1 / 3, 1 / 3, -r) / (0.5 / (r * r))).toBeCloseTo(1, 6);
  });

  it("in the triangle's plane: ±2π inside by the sign of a zero, 0 with a plane tolerance", () => {
    const p = new Float64Array([0, 0, 0, 1, 0, 0, 0, 1, 0]);
    expect(Math.abs(solidAngle(p, 0, 3, 6, 0.25, 0.25, 0))).toBeCloseTo(2 * Math.PI, 14);
    expect(solidAngle(p, 0, 3, 6, 0.25, 0.25, 0, 1e-12)).toBe(0);
    expect(solidAngle(p, 0, 3, 6, 3, 3, 0)).toBe(0);
    // Off the plane the tolerance changes nothing.
    expect(solidAngle(p, 0, 3, 6, 0.25, 0.25, -0.1, 1e-12)).toBe(solidAngle(p, 0, 3, 6, 0.25, 0.25, -0.1));
  });

  it("is the formula sigmesh inlined before, bit for bit (the triple product's middle term either way round)", () => {
    let seed = 12345;
    const rnd = () => { seed = (seed * 1103515245 + 12345) % 2147483648; return seed / 2147483648 - 0.5; };
    const p = new Float64Array(9);
    for (let n = 0; n < 2000; n++) {
      for (let k = 0; k < 9; k++) p[k] = rnd();
      const x = rnd(), y = rnd(), z = rnd();
      const ax = p[0] - x, ay = p[1] - y, az = p[2] - z, bx = p[3] - x, by = p[4] - y, bz = p[5] - z, cx = p[6] - x, cy = p[7] - y, cz = p[8] - z;
      const la = Math.sqrt(ax * ax + ay * ay + az * az), lb = Math.sqrt(bx * bx + by * by + bz * bz), lc = Math.sqrt(cx * cx + cy * cy + cz * cz);
      const num = ax * (by * cz - bz * cy) + ay * (bz * cx - bx * cz) + az * (bx * cy - by * cx);
      const den = la * lb * lc + (ax * bx + ay * by + az * bz) * lc + (ax * cx + ay * cy + az * cz) * lb + (bx * cx + by * cy + bz * cz) * la;
      expect(solidAngle(p, 0, 3, 6, x, y, z)).toBe(2 * Math.atan2(num, den));
    }
  });
});

describe("windingNumber (generalised: Σ Ω / 4π)", () => {
  it("closed icosphere: 1 inside, 0 outside, −1 turned inside out", () => {
    const { positions, triangles } = icosphere(2, 1);
    const nt = triangles.length / 3, list = all(nt);
    for (const q of [[0, 0, 0], [0.5, -0.3, 0.2], [0, 0, 0.9]]) expect(windingNumber(positions, triangles, list, 0, nt, q[0], q[1], q[2])).toBeCloseTo(1, 12);
    for (const q of [[2, 0, 0], [0, 0, 1.01], [-5, 7, 3]]) expect(windingNumber(positions, triangles, list, 0, nt, q[0], q[1], q[2])).toBeCloseTo(0, 12);
    const flip = new Uint8Array(nt).fill(1);
    expect(windingNumber(positions, triangles, list, 0, nt, 0.1, 0.2, 0.3, flip)).toBeCloseTo(-1, 12);
  });

  it("closed box: 1 inside, 0 outside, ½ on a face; an open box (one face off) is fractional", () => {
    const { positions, triangles } = cube();
    const list = all(12);
    expect(windingNumber(positions, triangles, list, 0, 12, 0.5, 0.5, 0.5)).toBeCloseTo(1, 14);
    expect(windingNumber(positions, triangles, list, 0, 12, 0.01, 0.98, 0.5)).toBeCloseTo(1, 12);
    expect(windingNumber(positions, triangles, list, 0, 12, 1.5, 0.5, 0.5)).toBeCloseTo(0, 14);
    expect(windingNumber(positions, triangles, list, 0, 12, -0.01, 0.5, 0.5)).toBeCloseTo(0, 12);
    // On the face x = 1 its two triangles are in-plane and count 0; the other five faces give 2π.
    expect(windingNumber(positions, triangles, list, 0, 12, 1, 0.3, 0.6)).toBeCloseTo(0.5, 14);
    // Without the top (triangles 2, 3), the centre sees 5/6 of the sphere.
    const open = Uint32Array.from([0, 1, 4, 5, 6, 7, 8, 9, 10, 11]);
    expect(windingNumber(positions, triangles, open, 0, open.length, 0.5, 0.5, 0.5)).toBeCloseTo(5 / 6, 14);
  });

  it("counts only list[from..to)", () => {
    const { positions, triangles } = cube();
    const list = Uint32Array.from([99, 0, 1, 99]); // the bottom face only: 1/6 from the centre
    expect(windingNumber(positions, triangles, list, 1, 3, 0.5, 0.5, 0.5)).toBeCloseTo(1 / 6, 14);
  });
});
