/**
 * Dielectric bodies with symmetry planes against the same model meshed whole (same panels
 * mirrored, so agreement is to solver precision): a cube coated by a cube cut by even planes,
 * and a pair of coated spheres split by an odd plane (the differential pair of coated wires).
 */
import { describe, it, expect, afterAll } from "vitest";
import { sphereMesh, boxMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes, type SurfaceMesh } from "../../src/mesh/model.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { reflectSurface } from "../../src/bem/images.js";
import { probeExtraction } from "../../src/extract/probe.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

afterAll(() => closeSharedPool());
const rel = (a: number, b: number) => Math.abs(a / b - 1);

/** Triangles of m whose centroid satisfies keep. */
function part(m: SurfaceMesh, keep: (x: number, y: number, z: number) => boolean): SurfaceMesh {
  const tri: number[] = [], p = m.positions;
  for (let t = 0; t < m.conductor.length; t++) {
    const a = 3 * m.triangles[3 * t], b = 3 * m.triangles[3 * t + 1], c = 3 * m.triangles[3 * t + 2];
    if (keep((p[a] + p[b] + p[c]) / 3, (p[a + 1] + p[b + 1] + p[c + 1]) / 3, (p[a + 2] + p[b + 2] + p[c + 2]) / 3)) tri.push(m.triangles[3 * t], m.triangles[3 * t + 1], m.triangles[3 * t + 2]);
  }
  return { ...m, triangles: Uint32Array.from(tri), conductor: new Uint32Array(tri.length / 3) };
}

describe("dielectric bodies with symmetry planes", () => {
  const cube = { ...boxMesh({ size: [1, 1, 1], divisions: 4 }), names: ["cube"] };
  const coat = boxMesh({ size: [2, 2, 2], divisions: 4 });

  it("a coated cube by half and by a quarter (conductor and coat cut by even planes) equals the whole model", async () => {
    const opts = { solver: "direct" as const, potentials: [1] };
    const full = await extractMesh(cube, { ...opts, dielectrics: [{ name: "coat", mesh: coat, permittivity: 4 }] });
    const half = await extractMesh(part(cube, (x) => x > 0), { ...opts, symmetry: [{ axis: "x", offset: 0 }],
      dielectrics: [{ name: "coat", mesh: part(coat, (x) => x > 0), permittivity: 4 }] });
    const quarter = await extractMesh(part(cube, (x, y) => x > 0 && y > 0), { ...opts, symmetry: [{ axis: "x", offset: 0 }, { axis: "y", offset: 0 }],
      dielectrics: [{ name: "coat", mesh: part(coat, (x, y) => x > 0 && y > 0), permittivity: 4 }] });
    expect(rel(half.maxwell[0], full.maxwell[0])).toBeLessThan(1e-6);
    expect(rel(quarter.maxwell[0], full.maxwell[0])).toBeLessThan(1e-6);
    // The coat raises C well above the bare cube's (so the interface rows and their images matter).
    const bare = await extractMesh(cube, opts);
    expect(full.maxwell[0] / bare.maxwell[0]).toBeGreaterThan(1.3);
    expect(half.dielectric!.interfacePanels).toBe(full.dielectric!.interfacePanels / 2);
    expect(rel(half.conductors[0].peakField, full.conductors[0].peakField)).toBeLessThan(1e-5);
    expect(half.conductors[0].medium).toBe("coat");
    // Probes see the images of the polarisation charge too.
    const pts = Float64Array.from([1.5, 0.3, 0.2, -1.5, 0.3, 0.2, 0.4, 1.3, 0.1]);
    const pf = probeExtraction(full, pts), ph = probeExtraction(half, pts);
    for (let i = 0; i < 3; i++) expect(rel(ph.potential[i], pf.potential[i])).toBeLessThan(1e-5);
  });

  it("a coated sphere pair split by an odd plane equals C11 − C12 of the whole pair, an even plane the tied pair, images both the whole matrix", async () => {
    const ball = { ...sphereMesh({ radius: 1, level: 2, center: [2, 0, 0] }), names: ["p"] };
    const shell = sphereMesh({ radius: 1.4, level: 1, center: [2, 0, 0] });
    const mirror = (m: SurfaceMesh, name: string) => { const r = reflectSurface(m.positions, m.triangles, 1, [0, 0, 0]); return { ...m, ...r, names: [name] }; };
    const opts = { solver: "direct" as const };
    const full = await extractMesh(concatMeshes([ball, mirror(ball, "n")]), { ...opts,
      dielectrics: [{ name: "coat p", mesh: shell, permittivity: 3 }, { name: "coat n", mesh: mirror(shell, "coat n"), permittivity: 3 }] });
    const odd = await extractMesh(ball, { ...opts, symmetry: [{ axis: "x", offset: 0, images: "odd" }], dielectrics: [{ name: "coat p", mesh: shell, permittivity: 3 }] });
    const even = await extractMesh(ball, { ...opts, symmetry: [{ axis: "x", offset: 0 }], dielectrics: [{ name: "coat p", mesh: shell, permittivity: 3 }] });
    const [c11, c12] = [full.maxwell[0], full.maxwell[1]];
    expect(rel(odd.maxwell[0], c11 - c12)).toBeLessThan(1e-6);
    expect(rel(even.maxwell[0], 2 * (c11 + c12))).toBeLessThan(1e-6);
    // Images both: the whole pair's matrix and its working point (p at 1 V, its mirror at 0 V) from the half.
    const both = await extractMesh(ball, { ...opts, potentials: [1, 0], symmetry: [{ axis: "x", offset: 0, images: "both" }], dielectrics: [{ name: "coat p", mesh: shell, permittivity: 3 }] });
    expect(both.names).toEqual(["p", "p~x"]);
    for (let i = 0; i < 4; i++) expect(rel(both.maxwell[i], full.maxwell[i])).toBeLessThan(1e-6);
    expect(rel(both.conductors[1].peakField, full.conductors[1].peakField)).toBeLessThan(1e-5);
    expect(rel(both.conductors[1].force[0], full.conductors[1].force[0])).toBeLessThan(1e-5);
    expect(both.conductors[1].medium).toBe("coat p");
    const pts = Float64Array.from([0, 0.5, 0.2, -3.6, 0.1, 0, 2, 1.7, 0.3]);
    const pf = probeExtraction(full, pts), pb = probeExtraction(both, pts);
    for (let i = 0; i < 3; i++) expect(rel(pb.potential[i], pf.potential[i])).toBeLessThan(1e-5);
  });

  it("a body reaching across a symmetry plane is refused by name", async () => {
    await expect(extractMesh(part(cube, (x) => x > 0), { symmetry: [{ axis: "x", offset: 0 }],
      dielectrics: [{ name: "coat", mesh: coat, permittivity: 4 }] })).rejects.toThrow(/dielectric coat reaches across the symmetry plane x = 0 m/);
  });
});
