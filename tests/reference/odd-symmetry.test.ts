/**
 * Odd (antisymmetric) symmetry planes and the even + odd ("both") unfolding, against the
 * free-space solver on the full, explicitly mirrored model (same panels, so agreement is to
 * solver precision) and against the two-sphere series of Smythe (Static and Dynamic
 * Electricity, 3rd ed., §5.08).
 */
import { describe, it, expect, afterAll } from "vitest";
import { sphereMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes, type SurfaceMesh } from "../../src/mesh/model.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { unfoldMatrix } from "../../src/extract/symmetry-unfold.js";
import { reflectSurface } from "../../src/bem/images.js";
import { probeExtraction } from "../../src/extract/probe.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

const FOUR_PI_EPS0 = 4 * Math.PI * EPSILON_0;
afterAll(() => closeSharedPool());

/** Two equal spheres, centre distance d, cosh β = d/(2a) (Smythe §5.08): C11 and C12. */
function spherePair(a: number, d: number): { c11: number; c12: number } {
  const b = Math.acosh(d / (2 * a));
  let s11 = 0, s12 = 0;
  for (let n = 0; n < 400; n++) s11 += 1 / Math.sinh((2 * n + 1) * b);
  for (let n = 1; n < 400; n++) s12 += 1 / Math.sinh(2 * n * b);
  return { c11: FOUR_PI_EPS0 * a * Math.sinh(b) * s11, c12: -FOUR_PI_EPS0 * a * Math.sinh(b) * s12 };
}

/** m reflected in the planes x = 0 (bit 1) and y = 0 (bit 2), renamed. */
function mirrored(m: SurfaceMesh, mask: number, name: string): SurfaceMesh {
  const r = reflectSurface(m.positions, m.triangles, mask, [0, 0, 0]);
  return { ...m, positions: r.positions, triangles: r.triangles, names: [name] };
}

const rel = (a: number, b: number) => Math.abs(a / b - 1);
const a = 1, d = 3;
const right = { ...sphereMesh({ radius: a, level: 2, center: [d / 2, 0, 0] }), names: ["p"] };
const left = mirrored(right, 1, "n");
const X = { axis: "x" as const, offset: 0 };

describe("odd symmetry plane", () => {
  it("half model with an odd plane equals C11 − C12 of the full pair solve (to 1e-7), and the series (2 %)", async () => {
    const full = await extractMesh(concatMeshes([right, left]), {});
    const half = await extractMesh(right, { symmetry: [{ ...X, images: "odd" }] });
    expect(rel(half.maxwell[0], full.maxwell[0] - full.maxwell[1])).toBeLessThan(1e-7);
    const s = spherePair(a, d);
    expect(rel(half.maxwell[0], s.c11 - s.c12)).toBeLessThan(2e-2);
    // An odd mirror is another body: no even copy is summed in, the area is the sphere's own.
    expect(rel(half.conductors[0].area, full.conductors[0].area)).toBeLessThan(1e-12);
    expect(half.symmetry[0].images).toBe("odd");
  });

  it("force on the sphere at +1 V with its odd mirror at −1 V is the full model's (attraction toward the plane)", async () => {
    const full = await extractMesh(concatMeshes([right, left]), { potentials: [1, -1] });
    const half = await extractMesh(right, { symmetry: [{ ...X, images: "odd" }], potentials: [1] });
    expect(half.conductors[0].force[0]).toBeLessThan(0);
    expect(rel(half.conductors[0].force[0], full.conductors[0].force[0])).toBeLessThan(1e-6);
    // Energy of the full model: ½ Σ QV over both spheres.
    expect(rel(half.energy, full.energy)).toBeLessThan(1e-7);
    expect(rel(half.conductors[0].peakField, full.conductors[0].peakField)).toBeLessThan(1e-6);
  });

  it("the compressed solver takes the odd kernel too (agrees with dense to the compression tolerance)", async () => {
    const fine = { ...sphereMesh({ radius: a, level: 3, center: [d / 2, 0, 0] }), names: ["p"] };
    const dense = await extractMesh(fine, { symmetry: [{ ...X, images: "odd" }], solver: "direct" });
    const comp = await extractMesh(fine, { symmetry: [{ ...X, images: "odd" }], solver: "compressed" });
    expect(comp.solver.solver).toBe("compressed");
    expect(rel(comp.maxwell[0], dense.maxwell[0])).toBeLessThan(1e-4);
  });

  it("a conductor touching or crossing an odd plane is refused, naming it and the 0 V plane", async () => {
    const touching = { ...sphereMesh({ radius: a, level: 1, center: [a, 0, 0] }), names: ["ball"] };
    await expect(extractMesh(touching, { symmetry: [{ ...X, images: "odd" }] })).rejects.toThrow(/conductor ball touches the odd symmetry plane x = 0 m.*odd plane is at 0 V/);
    await expect(extractMesh(touching, { symmetry: [{ ...X, images: "both" }] })).rejects.toThrow(/conductor ball touches the symmetry plane with both images x = 0 m/);
  });

  it("bad images and mirrored values are refused by the plane", async () => {
    await expect(extractMesh(right, { symmetry: [{ ...X, images: "twin" as never }] })).rejects.toThrow(/symmetry plane x = 0 m: images must be even, odd or both/);
    await expect(extractMesh(right, { symmetry: [{ ...X, images: "odd", mirrored: "opposite" }] })).rejects.toThrow(/needs images "both"/);
  });
});

describe("even and odd solves rebuild the full model (images both)", () => {
  it("one plane: the half mesh gives the full pair's 2×2 Maxwell matrix (to 1e-7), mirror named p~x", async () => {
    const full = await extractMesh(concatMeshes([right, { ...left, names: ["p~x"] }]), { potentials: [1, -1] });
    const r = await extractMesh(right, { symmetry: [{ ...X, images: "both", mirrored: "opposite" }] });
    expect(r.names).toEqual(["p", "p~x"]);
    expect(r.k).toBe(2);
    for (let i = 0; i < 4; i++) expect(rel(r.maxwell[i], full.maxwell[i])).toBeLessThan(1e-7);
    const s = spherePair(a, d);
    expect(rel(r.maxwell[0], s.c11)).toBeLessThan(2e-2);
    expect(rel(r.maxwell[1], s.c12)).toBeLessThan(3e-2);
    // Working point: the mirror at the opposite potential; charges, energy and fields as the full model's.
    expect(Array.from(r.potentials)).toEqual([1, -1]);
    expect(rel(r.conductors[1].charge, full.conductors[1].charge)).toBeLessThan(1e-7);
    expect(rel(r.energy, full.energy)).toBeLessThan(1e-7);
    expect(rel(r.conductors[1].peakField, full.conductors[1].peakField)).toBeLessThan(1e-6);
    expect(rel(r.conductors[1].force[0], full.conductors[1].force[0])).toBeLessThan(1e-6);
    expect(r.mesh.conductor.length).toBe(2 * right.conductor.length);
    // Probes on the unfolded model: 0 V on the plane at the ±1 V working point, and the full model's potential elsewhere.
    const pts = Float64Array.from([0, 0.4, 0.3, -0.2, 1.7, 0, 1.5, 0, 0]);
    const pr = probeExtraction(r, pts), pf = probeExtraction(full, pts);
    expect(Math.abs(pr.potential[0])).toBeLessThan(1e-12);
    expect(rel(pr.potential[1], pf.potential[1])).toBeLessThan(1e-7);
    expect(Math.abs(pr.potential[2] - 1)).toBeLessThan(2e-2);
  });

  it("the unfolding formula is the character sum: Ce, Co → [[(Ce+Co)/2, (Ce−Co)/2], ...]", () => {
    const C = unfoldMatrix([Float64Array.of(3), Float64Array.of(1)], 1, 2);
    expect(Array.from(C)).toEqual([2, 1, 1, 2]);
  });

  it("a quarter model mixing even (x) and odd (y) planes equals the four-sphere full solve", async () => {
    const q = { ...sphereMesh({ radius: a, level: 2, center: [1.5, 1.2, 0] }), names: ["q"] };
    const all = concatMeshes([q, mirrored(q, 1, "qx"), mirrored(q, 2, "qy"), mirrored(q, 3, "qxy")]);
    const full = await extractMesh(all, {});
    // Even in x ties q and qx; odd in y puts qy, qxy at the opposite potential.
    const row = (i: number) => full.maxwell[4 * i] + full.maxwell[4 * i + 1] - full.maxwell[4 * i + 2] - full.maxwell[4 * i + 3];
    const mixed = await extractMesh(q, { symmetry: [{ axis: "x", offset: 0 }, { axis: "y", offset: 0, images: "odd" }] });
    expect(rel(mixed.maxwell[0], row(0) + row(1))).toBeLessThan(1e-7);
    expect(rel(mixed.conductors[0].area, 2 * full.conductors[0].area)).toBeLessThan(1e-12);
    // Both planes unfolded: the whole 4×4 matrix from one quarter, mirrors named by their axes.
    const both = await extractMesh(q, { symmetry: [{ axis: "x", offset: 0, images: "both" }, { axis: "y", offset: 0, images: "both" }] });
    expect(both.names).toEqual(["q", "q~x", "q~y", "q~xy"]);
    for (let i = 0; i < 16; i++) expect(rel(both.maxwell[i], full.maxwell[i])).toBeLessThan(1e-7);
  });
});
