/**
 * Shapes are built around the origin with their own axis along z, then placed.
 * The axis change is a cyclic permutation of coordinates (determinant +1), so it keeps
 * the outward orientation of every triangle.
 */
export type Axis = "x" | "y" | "z";

/** Largest mesh a generator will allocate; beyond it the request is refused, not attempted. */
export const MAX_TRIANGLES = 2 ** 25;

export function checkTriangleBudget(count: number, what: string): void {
  if (!(count <= MAX_TRIANGLES)) throw new RangeError(`${what} would give ${count} triangles, more than the limit of ${MAX_TRIANGLES}`);
}

/** In place: local z -> world `axis`, then translate by `center`; metres. */
export function placeShape(positions: Float64Array, axis: Axis = "z", center?: readonly number[]): void {
  const cx = center?.[0] ?? 0, cy = center?.[1] ?? 0, cz = center?.[2] ?? 0;
  for (let i = 0; i < positions.length; i += 3) {
    let x = positions[i], y = positions[i + 1], z = positions[i + 2];
    if (axis === "x") { const t = x; x = z; z = y; y = t; }      // (x,y,z) -> (z,x,y)
    else if (axis === "y") { const t = x; x = y; y = z; z = t; } // (x,y,z) -> (y,z,x)
    positions[i] = x + cx; positions[i + 1] = y + cy; positions[i + 2] = z + cz;
  }
}

/** Quad (i, j) of an na x nb grid takes the diagonal that points toward the nearer grid corner, so the pattern is mirror-symmetric about both centre lines. */
export function diagonalTowardCorner(i: number, j: number, na: number, nb: number): boolean {
  return (2 * i + 1 < na) === (2 * j + 1 < nb);
}
