// Test-side mesh checks, written independently of src/mesh/refine.ts's edge table (a plain Map of vertex pairs).
import type { SurfaceMesh } from "../../src/mesh/model.js";

export interface Topology {
  /** Edges used by exactly one triangle. */
  boundary: number;
  /** Edges used by more than two triangles. */
  nonManifold: number;
  /** Interior edges run in the same direction by both triangles (orientation flip). */
  misoriented: number;
  edges: number;
  /** Smallest triangle area / (longest edge)^2 over the mesh (0 means degenerate; equilateral is sqrt(3)/4). */
  minShape: number;
  /** Vertices used by no triangle. */
  unused: number;
}

export function topology(mesh: SurfaceMesh): Topology {
  const tr = mesh.triangles, p = mesh.positions;
  const uses = new Map<string, number[]>();
  for (let t = 0; t < tr.length / 3; t++) {
    for (let j = 0; j < 3; j++) {
      const a = tr[3 * t + j], b = tr[3 * t + ((j + 1) % 3)];
      const key = a < b ? `${a},${b}` : `${b},${a}`;
      const list = uses.get(key) ?? [];
      list.push(a < b ? 1 : -1);
      uses.set(key, list);
    }
  }
  let boundary = 0, nonManifold = 0, misoriented = 0;
  for (const list of uses.values()) {
    if (list.length === 1) boundary++;
    else if (list.length > 2) nonManifold++;
    else if (list[0] === list[1]) misoriented++;
  }
  let minShape = Infinity;
  const used = new Uint8Array(p.length / 3);
  for (let t = 0; t < tr.length / 3; t++) {
    const v = [tr[3 * t], tr[3 * t + 1], tr[3 * t + 2]];
    for (const i of v) used[i] = 1;
    const q = v.map((i) => [p[3 * i], p[3 * i + 1], p[3 * i + 2]]);
    const e = (i: number, j: number) => Math.hypot(q[j][0] - q[i][0], q[j][1] - q[i][1], q[j][2] - q[i][2]);
    const u = [q[1][0] - q[0][0], q[1][1] - q[0][1], q[1][2] - q[0][2]];
    const w = [q[2][0] - q[0][0], q[2][1] - q[0][1], q[2][2] - q[0][2]];
    const area = 0.5 * Math.hypot(u[1] * w[2] - u[2] * w[1], u[2] * w[0] - u[0] * w[2], u[0] * w[1] - u[1] * w[0]);
    const longest = Math.max(e(0, 1), e(1, 2), e(2, 0));
    minShape = Math.min(minShape, area / (longest * longest));
  }
  let unused = 0;
  for (const u of used) if (!u) unused++;
  return { boundary, nonManifold, misoriented, edges: uses.size, minShape, unused };
}

/** Euler characteristic V - E + F. */
export function euler(mesh: SurfaceMesh): number {
  return mesh.positions.length / 3 - topology(mesh).edges + mesh.triangles.length / 3;
}
