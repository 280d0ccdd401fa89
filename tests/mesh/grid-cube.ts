/**
 * Test fixture: an axis-aligned box [o, o+s] with n×n squares per face, welded, wound
 * counter-clockwise seen from outside (or inward when asked). Built independently of the
 * generator in src/mesh/primitives so that mesh checks are not tested against themselves.
 */
import type { SurfaceMesh } from "../../src/mesh/model.js";

export function gridCube(n: number, o: number[] = [0, 0, 0], s: number[] = [1, 1, 1], name = "cube", inward = false): SurfaceMesh {
  const index = new Map<string, number>();
  const pos: number[] = [];
  const vert = (c: number[]) => {
    const key = c.join(",");
    let v = index.get(key);
    if (v === undefined) { v = pos.length / 3; index.set(key, v); for (let k = 0; k < 3; k++) pos.push(o[k] + (c[k] / n) * s[k]); }
    return v;
  };
  const tri: number[] = [];
  for (let k = 0; k < 3; k++) {
    const a = (k + 1) % 3, b = (k + 2) % 3;
    for (const side of [0, 1]) for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
      const at = (di: number, dj: number) => { const c = [0, 0, 0]; c[k] = side * n; c[a] = i + di; c[b] = j + dj; return vert(c); };
      const q = [at(0, 0), at(1, 0), at(1, 1), at(0, 1)];
      // e_a × e_b = e_k, so this winding faces +k; the side at 0 faces −k.
      if ((side === 1) !== inward) tri.push(q[0], q[1], q[2], q[0], q[2], q[3]); else tri.push(q[0], q[2], q[1], q[0], q[3], q[2]);
    }
  }
  return { positions: new Float64Array(pos), triangles: new Uint32Array(tri), conductor: new Uint32Array(tri.length / 3), names: [name] };
}
