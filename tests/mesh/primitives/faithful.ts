// Test-side checks of a generated shape against its analytic surface, written from the
// shape's definition (not from the generator's code): which face each triangle lies on, that
// every vertex of the mesh and of its reference lies on that face, that the reference's
// normals are the exact unit normals there, and that flat faces are flat.
import { expect } from "vitest";
import type { SurfaceMesh } from "../../../src/mesh/model.js";
import { signedVolume } from "../../../src/mesh/measure.js";
import { topology, euler } from "../edge-census.js";

export interface AnalyticSurface {
  /** The analytic face a point strictly inside one triangle (its centroid) lies on or under, by name. */
  classify(x: number, y: number, z: number): string;
  /** Distance of a point from the named face's surface (0 on it); metres. */
  distance(face: string, x: number, y: number, z: number): number;
  /** The exact outward unit normal of the named face at a point on it. */
  normal(face: string, x: number, y: number, z: number): readonly [number, number, number];
  flat(face: string): boolean;
}

export function expectClosed(mesh: SurfaceMesh, genus = 0, minShape = 0.05): void {
  const t = topology(mesh);
  expect(t.boundary).toBe(0);
  expect(t.nonManifold).toBe(0);
  expect(t.misoriented).toBe(0);
  expect(t.unused).toBe(0);
  expect(t.minShape).toBeGreaterThan(minShape);
  // Euler characteristic 2 - 2g of a closed orientable surface of genus g (common practice).
  expect(euler(mesh)).toBe(2 - 2 * genus);
  expect(signedVolume(mesh)).toBeGreaterThan(0);
}

/** Face names of each triangle of a triangulation, by its centroid. */
function classifyAll(p: Float64Array, tr: Uint32Array, s: AnalyticSurface): string[] {
  const out: string[] = [];
  for (let t = 0; t < tr.length; t += 3) {
    const c = [0, 1, 2].map((k) => (p[3 * tr[t] + k] + p[3 * tr[t + 1] + k] + p[3 * tr[t + 2] + k]) / 3);
    out.push(s.classify(c[0], c[1], c[2]));
  }
  return out;
}

/**
 * `faces` and `reference` against the analytic surface: one face number per analytic face
 * (the same numbering in the mesh and its reference), every vertex on its triangle's face within
 * `tol` metres, the reference's normals of unit length and equal to the exact normal to 1e-12,
 * flat faces coplanar. Returns the face names, by face number.
 */
export function expectFaithful(mesh: SurfaceMesh, s: AnalyticSurface, tol: number): string[] {
  const ref = mesh.reference;
  expect(mesh.faces).toBeDefined();
  expect(ref).toBeDefined();
  if (!ref || !mesh.faces) return [];
  const nt = mesh.triangles.length / 3;
  expect(mesh.faces.length).toBe(nt);
  expect(ref.face.length).toBe(ref.triangles.length / 3);
  expect(ref.normals.length).toBe(ref.positions.length);
  const name = new Map<number, string>();
  const number = new Map<string, number>();
  const bind = (f: number, key: string): void => {
    if (!name.has(f)) name.set(f, key);
    if (!number.has(key)) number.set(key, f);
    // One face number per analytic face, and one analytic face per number.
    expect(name.get(f), `face ${f}`).toBe(key);
    expect(number.get(key), key).toBe(f);
  };
  const coarseKeys = classifyAll(mesh.positions, mesh.triangles, s);
  coarseKeys.forEach((k, t) => bind(mesh.faces![t], k));
  const refKeys = classifyAll(ref.positions, ref.triangles, s);
  refKeys.forEach((k, t) => bind(ref.face[t], k));
  expect(ref.faceCount).toBe(name.size);
  for (const f of name.keys()) expect(f).toBeLessThan(ref.faceCount);
  // Every vertex on its triangle's face.
  let worst = 0;
  const onFace = (p: Float64Array, tr: Uint32Array, keys: string[]): void => {
    for (let t = 0; t < keys.length; t++) {
      for (let j = 0; j < 3; j++) {
        const v = 3 * tr[3 * t + j];
        worst = Math.max(worst, Math.abs(s.distance(keys[t], p[v], p[v + 1], p[v + 2])));
      }
    }
  };
  onFace(mesh.positions, mesh.triangles, coarseKeys);
  onFace(ref.positions, ref.triangles, refKeys);
  expect(worst).toBeLessThan(tol);
  // Exact unit normals at the reference's vertices, per face (a vertex on an edge once per face).
  let unit = 0, off = 0;
  for (let t = 0; t < refKeys.length; t++) {
    for (let j = 0; j < 3; j++) {
      const v = 3 * ref.triangles[3 * t + j];
      const n = [ref.normals[v], ref.normals[v + 1], ref.normals[v + 2]];
      const e = s.normal(refKeys[t], ref.positions[v], ref.positions[v + 1], ref.positions[v + 2]);
      unit = Math.max(unit, Math.abs(Math.hypot(n[0], n[1], n[2]) - 1));
      off = Math.max(off, Math.hypot(n[0] - e[0], n[1] - e[1], n[2] - e[2]));
    }
  }
  expect(unit).toBeLessThan(1e-14);
  expect(off).toBeLessThan(1e-12);
  // Flat faces: all vertices in one plane, the plane of the face's normal.
  for (const [f, key] of name) {
    if (!s.flat(key)) continue;
    let origin: number[] | undefined, normal: readonly number[] = [0, 0, 0], spread = 0;
    for (let t = 0; t < nt; t++) {
      if (mesh.faces[t] !== f) continue;
      for (let j = 0; j < 3; j++) {
        const v = 3 * mesh.triangles[3 * t + j];
        const p = [mesh.positions[v], mesh.positions[v + 1], mesh.positions[v + 2]];
        if (!origin) { origin = p; normal = s.normal(key, p[0], p[1], p[2]); }
        spread = Math.max(spread, Math.abs(normal[0] * (p[0] - origin[0]) + normal[1] * (p[1] - origin[1]) + normal[2] * (p[2] - origin[2])));
      }
    }
    expect(spread, key).toBeLessThan(tol);
  }
  return [...name.entries()].sort((a, b) => a[0] - b[0]).map((e) => e[1]);
}
