/**
 * Ground plane and symmetry planes against closed forms and against the free-space solver on
 * the full (mirrored) model. Each check names its source.
 */
import { describe, it, expect, afterAll } from "vitest";
import { sphereMesh, boxMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes, type SurfaceMesh } from "../../src/mesh/model.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { probeExtraction } from "../../src/extract/probe.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

const FOUR_PI_EPS0 = 4 * Math.PI * EPSILON_0;
afterAll(() => closeSharedPool());

/**
 * Sphere of radius a, centre at height h above a grounded plane, cosh α = h/a (Smythe, Static and
 * Dynamic Electricity, 3rd ed., §5.08, bispherical coordinates): C = 4π ε0 a sinh α Σ_{n≥1} csch(nα).
 */
function spherePlane(a: number, h: number): number {
  const al = Math.acosh(h / a);
  let s = 0;
  for (let n = 1; n < 400; n++) s += 1 / Math.sinh(n * al);
  return FOUR_PI_EPS0 * a * Math.sinh(al) * s;
}

/** Two equal spheres, centre distance d, cosh β = d/(2a) (Smythe §5.08): C11 and C12. */
function spherePair(a: number, d: number): { c11: number; c12: number } {
  const b = Math.acosh(d / (2 * a));
  let s11 = 0, s12 = 0;
  for (let n = 0; n < 400; n++) s11 += 1 / Math.sinh((2 * n + 1) * b);
  for (let n = 1; n < 400; n++) s12 += 1 / Math.sinh(2 * n * b);
  return { c11: FOUR_PI_EPS0 * a * Math.sinh(b) * s11, c12: -FOUR_PI_EPS0 * a * Math.sinh(b) * s12 };
}

function moved(m: SurfaceMesh, name: string, f: (p: Float64Array) => void): SurfaceMesh {
  const positions = m.positions.slice();
  f(positions);
  return { ...m, positions, names: [name] };
}

/** The mesh reflected in z = 0, windings reversed so it stays outward. */
function mirrorZ(m: SurfaceMesh, name: string): SurfaceMesh {
  const r = moved(m, name, (p) => { for (let i = 2; i < p.length; i += 3) p[i] = -p[i]; });
  const t = r.triangles.slice();
  for (let i = 0; i < t.length; i += 3) { const x = t[i + 1]; t[i + 1] = t[i + 2]; t[i + 2] = x; }
  return { ...r, triangles: t };
}

/** Triangles of m whose centroid satisfies keep (a half or quarter of a symmetric mesh). */
function part(m: SurfaceMesh, keep: (x: number, y: number, z: number) => boolean): SurfaceMesh {
  const tri: number[] = [];
  const p = m.positions;
  for (let t = 0; t < m.conductor.length; t++) {
    const a = 3 * m.triangles[3 * t], b = 3 * m.triangles[3 * t + 1], c = 3 * m.triangles[3 * t + 2];
    if (keep((p[a] + p[b] + p[c]) / 3, (p[a + 1] + p[b + 1] + p[c + 1]) / 3, (p[a + 2] + p[b + 2] + p[c + 2]) / 3)) {
      tri.push(m.triangles[3 * t], m.triangles[3 * t + 1], m.triangles[3 * t + 2]);
    }
  }
  return { ...m, triangles: Uint32Array.from(tri), conductor: new Uint32Array(tri.length / 3) };
}

const ground = { axis: "z" as const, offset: 0 };

describe("sphere above a grounded plane", () => {
  const a = 1, h = 2;

  it("the series equals C11 − C12 of the sphere pair at ±V in free space (image identity, Smythe §5.08)", () => {
    const pair = spherePair(a, 2 * h);
    expect(Math.abs(spherePlane(a, h) / (pair.c11 - pair.c12) - 1)).toBeLessThan(1e-13);
  });

  it("extraction with --refine 1 from 320 panels lands within 1e-3 of the series, inside its own error estimate", async () => {
    const r = await extractMesh(sphereMesh({ radius: a, level: 2, center: [0, 0, h] }), { groundPlane: ground, refine: 1 });
    const exact = spherePlane(a, h);
    const err = Math.abs(r.maxwell[0] / exact - 1);
    expect(err).toBeLessThan(1e-3);
    expect(r.accuracy!.richardson.relativeError).toBeGreaterThanOrEqual(err);
    expect(r.reference).toBe("ground plane");
    // The capacitance to ground is the mutual matrix's diagonal.
    expect(r.mutual[0]).toBe(r.maxwell[0]);
  });

  it("equals the free-space solve of the sphere and its mirror at ±1 V on the same mesh (to 1e-7)", async () => {
    const up = { ...sphereMesh({ radius: a, level: 2, center: [0, 0, h] }), names: ["up"] };
    const img = await extractMesh(up, { groundPlane: ground });
    const pair = await extractMesh(concatMeshes([up, mirrorZ(up, "down")]), {});
    const c = pair.maxwell[0] - pair.maxwell[1];
    expect(Math.abs(img.maxwell[0] / c - 1)).toBeLessThan(1e-7);
  });

  it("force on the sphere at 1 V equals the virtual work ½V² dC/dh of the series (attraction, within 2 %)", async () => {
    const r = await extractMesh(sphereMesh({ radius: a, level: 3, center: [0, 0, h] }), { groundPlane: ground });
    const dh = 1e-4;
    const dCdh = (spherePlane(a, h + dh) - spherePlane(a, h - dh)) / (2 * dh);
    const expected = 0.5 * dCdh; // V = 1 V; negative: pulled toward the plane
    expect(expected).toBeLessThan(0);
    expect(Math.abs(r.conductors[0].force[2] / expected - 1)).toBeLessThan(2e-2);
    expect(Math.abs(r.conductors[0].force[0])).toBeLessThan(1e-6 * Math.abs(expected));
  });

  it("probes include the images: 0 V on the plane, the working potential on the sphere", async () => {
    const r = await extractMesh(sphereMesh({ radius: a, level: 3, center: [0, 0, h] }), { groundPlane: ground });
    const pr = probeExtraction(r, Float64Array.from([0, 0, 0, 1.5, -0.5, 0, 0, 0, h + 0.2, 0, 0, h - 0.99]));
    expect(Math.abs(pr.potential[0])).toBeLessThan(1e-12);
    expect(Math.abs(pr.potential[1])).toBeLessThan(1e-12);
    // Inside the conductor the potential is the conductor's (to the discretisation error of 1280 panels).
    expect(Math.abs(pr.potential[2] - 1)).toBeLessThan(5e-3);
    expect(Math.abs(pr.potential[3] - 1)).toBeLessThan(2e-2);
  });

  it("a conductor below or touching the plane is refused with its name and the side", async () => {
    const low = { ...sphereMesh({ radius: a, level: 1, center: [0, 0, 0.5] }), names: ["ball"] };
    await expect(extractMesh(low, { groundPlane: ground })).rejects.toThrow(/conductor ball crosses the ground plane z = 0 m/);
    const two = concatMeshes([{ ...sphereMesh({ radius: a, level: 1, center: [0, 0, 3] }), names: ["top"] },
      { ...sphereMesh({ radius: a, level: 1, center: [0, 0, -3] }), names: ["bottom"] }]);
    await expect(extractMesh(two, { groundPlane: ground })).rejects.toThrow(/conductor bottom crosses .*strictly above/);
  });
});

describe("symmetry planes", () => {
  it("sphere pair by half (plane x = 0): C of the tied pair equals 2(C11 + C12) of the full solve and of the series", async () => {
    const a = 1, d = 3;
    const right = { ...sphereMesh({ radius: a, level: 2, center: [d / 2, 0, 0] }), names: ["right"] };
    const left = moved(right, "left", (p) => { for (let i = 0; i < p.length; i += 3) p[i] = -p[i]; });
    const tl = left.triangles.slice();
    for (let i = 0; i < tl.length; i += 3) { const x = tl[i + 1]; tl[i + 1] = tl[i + 2]; tl[i + 2] = x; }
    const full = await extractMesh(concatMeshes([right, { ...left, triangles: tl }]), {});
    const half = await extractMesh(right, { symmetry: [{ axis: "x", offset: 0 }] });
    // Both spheres at 1 V: the pair's total charge is the sum of the whole Maxwell matrix.
    const tied = full.maxwell[0] + full.maxwell[1] + full.maxwell[2] + full.maxwell[3];
    expect(Math.abs(half.maxwell[0] / tied - 1)).toBeLessThan(1e-7);
    const s = spherePair(a, d);
    expect(Math.abs(half.maxwell[0] / (2 * (s.c11 + s.c12)) - 1)).toBeLessThan(2e-2);
    expect(half.symmetryCopies).toBe(2);
    expect(half.conductors[0].area / full.conductors[0].area).toBeCloseTo(2, 12);
    // Net force of the tied pair: the x components of the two spheres cancel.
    expect(half.conductors[0].force[0]).toBe(0);
  });

  it("a box meshed by half and by a quarter (it meets its planes) gives the full box's C; the cut surfaces count as closed", async () => {
    const box = boxMesh({ size: [1, 1, 1], divisions: 6 });
    const full = await extractMesh(box, {});
    const halfMesh = part(box, (x) => x > 0);
    const half = await extractMesh(halfMesh, { symmetry: [{ axis: "x", offset: 0 }] });
    const quarter = await extractMesh(part(box, (x, y) => x > 0 && y > 0), { symmetry: [{ axis: "x", offset: 0 }, { axis: "y", offset: 0 }] });
    expect(Math.abs(half.maxwell[0] / full.maxwell[0] - 1)).toBeLessThan(1e-7);
    expect(Math.abs(quarter.maxwell[0] / full.maxwell[0] - 1)).toBeLessThan(1e-7);
    expect(half.conductors[0].closed).toBe(true);
    expect(quarter.conductors[0].closed).toBe(true);
    expect(quarter.conductors[0].area).toBeCloseTo(6, 10);
    // Hwang & Mascagni, J. Appl. Phys. 95 (2004): unit cube C/(4π ε0) = 0.66068; 216 panels per face is ~0.5 % low.
    expect(Math.abs(full.maxwell[0] / FOUR_PI_EPS0 / 0.66068 - 1)).toBeLessThan(1e-2);
  });

  it("a half model with its cut face left on drops that face and still matches the full box", async () => {
    const box = boxMesh({ size: [1, 1, 1], divisions: 4 });
    // The face of a box x in [0, 1] lying on x = 0 is the cut face of the full box x in [−1, 1].
    const shifted = moved(box, "bar", (p) => { for (let i = 0; i < p.length; i += 3) p[i] += 0.5; });
    const r = await extractMesh(shifted, { symmetry: [{ axis: "x", offset: 0 }] });
    expect(r.removedInSymmetryPlane).toBe(32);
    expect(r.warnings.some((w) => /symmetry plane were removed/.test(w))).toBe(true);
    const open = await extractMesh(part(shifted, (x) => x > 1e-9), { symmetry: [{ axis: "x", offset: 0 }] });
    expect(r.maxwell[0]).toBe(open.maxwell[0]);
    // The 2×1×1 bar meshed whole (its diagonals run differently, so only to discretisation level).
    const full = await extractMesh(boxMesh({ size: [2, 1, 1], divisions: [8, 4, 4] }), {});
    expect(Math.abs(r.maxwell[0] / full.maxwell[0] - 1)).toBeLessThan(2e-4);
  });

  it("ground plane with a symmetry plane: half a box above the plane equals the full box above it", async () => {
    const box = moved(boxMesh({ size: [1, 1, 1], divisions: 4 }), "box", (p) => { for (let i = 2; i < p.length; i += 3) p[i] += 0.8; });
    const full = await extractMesh(box, { groundPlane: ground });
    const half = await extractMesh(part(box, (x) => x > 0), { groundPlane: ground, symmetry: [{ axis: "x", offset: 0 }] });
    expect(Math.abs(half.maxwell[0] / full.maxwell[0] - 1)).toBeLessThan(1e-7);
    // The half's force: the z part (attraction) doubled, the x part cancelled.
    expect(Math.abs(half.conductors[0].force[2] / full.conductors[0].force[2] - 1)).toBeLessThan(1e-6);
    expect(half.conductors[0].force[0]).toBe(0);
  });
});
