// The CAD faces and reference surface through the mesh operations: placement (normals by the
// inverse transpose), concatenation with faceless meshes (NO_FACE), one conductor's submesh.
import { describe, it, expect } from "vitest";
import { loadMeshFile } from "../../src/io/load.js";
import { placeMesh } from "../../src/io/placement.js";
import { concatMeshes, conductorSubmesh, NO_FACE, type ReferenceSurface, type SurfaceMesh } from "../../src/mesh/model.js";
import { fixture } from "./helpers.js";

const sphere = (): SurfaceMesh => loadMeshFile(fixture("cad/sphere.step"), { unit: "mm" }).mesh;
const R = 5e-3;

describe("reference surface under placement", () => {
  it("rotation, translation and a mirror: points and normals stay those of the moved sphere, triangles still face out", () => {
    const m = sphere();
    const placed = placeMesh(m, { scale: [-1, 1, 1], rotate: { axis: [1, 2, 3], degrees: 37 }, translate: [4, -2, 7] }, 1e-3);
    const ref = placed.reference as ReferenceSurface;
    const c = [4e-3, -2e-3, 7e-3];
    let worst = 0, orient = 0;
    for (let v = 0; v < ref.positions.length; v += 3) {
      const d = [0, 1, 2].map((k) => ref.positions[v + k] - c[k]);
      const l = Math.hypot(d[0], d[1], d[2]);
      expect(Math.abs(l - R)).toBeLessThan(1e-12);
      worst = Math.max(worst, Math.hypot(ref.normals[v] - d[0] / l, ref.normals[v + 1] - d[1] / l, ref.normals[v + 2] - d[2] / l));
    }
    expect(worst).toBeLessThan(1e-9);
    // Reference triangles keep facing along their vertex normals (winding reversed with the mirror).
    const P = ref.positions, T = ref.triangles;
    for (let t = 0; t < T.length; t += 3) {
      const a = 3 * T[t], b = 3 * T[t + 1], cc = 3 * T[t + 2];
      const u = [P[b] - P[a], P[b + 1] - P[a + 1], P[b + 2] - P[a + 2]], w = [P[cc] - P[a], P[cc + 1] - P[a + 1], P[cc + 2] - P[a + 2]];
      const n = [u[1] * w[2] - u[2] * w[1], u[2] * w[0] - u[0] * w[2], u[0] * w[1] - u[1] * w[0]];
      if (n[0] * ref.normals[a] + n[1] * ref.normals[a + 1] + n[2] * ref.normals[a + 2] < 0) orient++;
    }
    expect(orient).toBe(0);
  });
  it("a non-uniform scale: the sphere becomes an ellipsoid and the normals follow its gradient (x/a², y/b², z/c²)", () => {
    const s = [2, 1, 0.5];
    const ref = placeMesh(sphere(), { scale: s as [number, number, number], translate: [0, 0, 0] }).reference as ReferenceSurface;
    let worst = 0;
    for (let v = 0; v < ref.positions.length; v += 3) {
      const g = [0, 1, 2].map((k) => ref.positions[v + k] / (s[k] * s[k] * R * R));
      const l = Math.hypot(g[0], g[1], g[2]);
      worst = Math.max(worst, Math.hypot(ref.normals[v] - g[0] / l, ref.normals[v + 1] - g[1] / l, ref.normals[v + 2] - g[2] / l));
    }
    expect(worst).toBeLessThan(1e-9);
  });
});

describe("reference surface through concatenation and submeshes", () => {
  it("a CAD mesh joined with a faceless one: faces offset, the faceless triangles NO_FACE; a submesh keeps only its faces", () => {
    const cube = loadMeshFile(fixture("cad/Cube 10x10.igs"), { unit: "mm" }).mesh;
    const stl = loadMeshFile(fixture("two_solids.stl"), { unit: "mm" }).mesh;
    const s = sphere();
    const all = concatMeshes([cube, stl, s]);
    const nc = cube.triangles.length / 3, ns = stl.triangles.length / 3;
    const faces = all.faces as Uint32Array, ref = all.reference as ReferenceSurface;
    expect(ref.faceCount).toBe(7);
    expect(Array.from(faces.subarray(0, nc))).toEqual(Array.from(cube.faces as Uint32Array));
    expect(faces.subarray(nc, nc + ns).every((f) => f === NO_FACE)).toBe(true);
    expect(faces.subarray(nc + ns).every((f) => f === 6)).toBe(true);
    expect(ref.triangles.length).toBe((cube.reference as ReferenceSurface).triangles.length + (s.reference as ReferenceSurface).triangles.length);
    // The sphere's reference triangles index its own (offset) vertices.
    const base = (cube.reference as ReferenceSurface).positions.length / 3;
    const k0 = (cube.reference as ReferenceSurface).face.length;
    expect(ref.triangles[3 * k0]).toBe((s.reference as ReferenceSurface).triangles[0] + base);
    const sub = conductorSubmesh(all, all.names.length - 1);
    expect(sub.reference?.faceCount).toBe(1);
    expect(sub.faces?.every((f) => f === 0)).toBe(true);
    expect(sub.reference?.triangles.length).toBe((s.reference as ReferenceSurface).triangles.length);
    const plain = conductorSubmesh(all, 1);
    expect(plain.faces?.every((f) => f === NO_FACE)).toBe(true);
    expect(plain.reference?.faceCount).toBe(0);
  });
});
