import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import type { RawMesh } from "../../src/io/raw.js";

export const fixture = (name: string): string => fileURLToPath(new URL(`../fixtures/${name}`, import.meta.url));
export const fixtureBytes = (name: string): Uint8Array => new Uint8Array(readFileSync(fixture(name)));

/** Total area of the triangles of group g (all groups when g is undefined), in file units squared. */
export function rawArea(m: RawMesh, g?: number): number {
  let s = 0;
  const p = m.positions, t = m.triangles;
  for (let k = 0; k < t.length / 3; k++) {
    if (g !== undefined && m.group[k] !== g) continue;
    const a = 3 * t[3 * k], b = 3 * t[3 * k + 1], c = 3 * t[3 * k + 2];
    const ux = p[b] - p[a], uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2];
    const vx = p[c] - p[a], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
    s += 0.5 * Math.hypot(uy * vz - uz * vy, uz * vx - ux * vz, ux * vy - uy * vx);
  }
  return s;
}

/** Surface area of the unit right tetrahedron (0,0,0),(1,0,0),(0,1,0),(0,0,1): three right
 *  triangles of area 1/2 and an equilateral one of side √2, area (√3/4)·2 (elementary geometry). */
export const UNIT_TET_AREA = 1.5 + Math.sqrt(3) / 2;
