/**
 * Test fixtures for point and triangle measures: dense barycentric samples of a triangle (a
 * brute-force reference for closest points and distances), its diameter (the bound on the
 * sampling error), and fast-check generators for coordinates on a 0.01 grid.
 */
import fc from "fast-check";

/** Points of a triangle on a barycentric grid of step 1/k. */
export function samples(c: number[], k: number): number[][] {
  const out: number[][] = [];
  for (let i = 0; i <= k; i++) for (let j = 0; j <= k - i; j++) {
    const u = i / k, v = j / k, w = 1 - u - v;
    out.push([0, 1, 2].map((a) => w * c[a] + u * c[3 + a] + v * c[6 + a]));
  }
  return out;
}

export function diameter(c: number[]): number {
  let d = 0;
  for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) d = Math.max(d, Math.hypot(c[3 * i] - c[3 * j], c[3 * i + 1] - c[3 * j + 1], c[3 * i + 2] - c[3 * j + 2]));
  return d;
}

export const coord = fc.integer({ min: -400, max: 400 }).map((k) => k / 100);
export const tri9 = fc.array(coord, { minLength: 9, maxLength: 9 });

/** Two triangles (9 coordinates each) as a two-triangle mesh: positions and triangles. */
export function pairMesh(a: number[], b: number[]): { p: Float64Array; t: Uint32Array } {
  return { p: new Float64Array([...a, ...b]), t: new Uint32Array([0, 1, 2, 3, 4, 5]) };
}
