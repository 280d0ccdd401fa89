// STEP, IGES and BREP through the CAD kernel: formats, declared units, parts as conductors,
// CAD faces and the reference surface, and what loading does with them.
import { describe, it, expect } from "vitest";
import { mkdtempSync, writeFileSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { loadMeshFile, parseMeshBytes } from "../../src/io/load.js";
import { detectFormat } from "../../src/io/format.js";
import { stepLengthUnits, igesLengthUnit } from "../../src/io/cad-units.js";
import { cadKernelLoaded } from "../../src/io/cad-kernel.js";
import { readCad } from "../../src/io/cad.js";
import { InputError } from "../../src/errors.js";
import { conductorAreas, type SurfaceMesh, type ReferenceSurface } from "../../src/mesh/model.js";
import { fixture, fixtureBytes } from "./helpers.js";

const mm = { unit: "mm" as const };
const cad = (name: string) => fixture(`cad/${name}`);
const text = (name: string) => readFileSync(cad(name), "latin1");
const err = (f: () => unknown): InputError => {
  try { f(); } catch (e) { if (e instanceof InputError) return e; throw e; }
  throw new Error("expected an InputError");
};

/** Area of each face of a reference surface. */
function referenceFaceAreas(r: ReferenceSurface): Float64Array {
  const out = new Float64Array(r.faceCount), p = r.positions, t = r.triangles;
  for (let k = 0; k < r.face.length; k++) {
    const a = 3 * t[3 * k], b = 3 * t[3 * k + 1], c = 3 * t[3 * k + 2];
    const ux = p[b] - p[a], uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2], vx = p[c] - p[a], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
    out[r.face[k]] += 0.5 * Math.hypot(uy * vz - uz * vy, uz * vx - ux * vz, ux * vy - uy * vx);
  }
  return out;
}

/** Enclosed volume by the divergence theorem (positive when the triangles face outward). */
function volume(m: SurfaceMesh): number {
  let v = 0;
  const p = m.positions, t = m.triangles;
  for (let k = 0; k < t.length; k += 3) {
    const a = 3 * t[k], b = 3 * t[k + 1], c = 3 * t[k + 2];
    v += (p[a] * (p[b + 1] * p[c + 2] - p[b + 2] * p[c + 1]) - p[a + 1] * (p[b] * p[c + 2] - p[b + 2] * p[c]) + p[a + 2] * (p[b] * p[c + 1] - p[b + 1] * p[c])) / 6;
  }
  return v;
}

describe("CAD formats and units", () => {
  it("the kernel is not loaded until a CAD file is read", () => {
    loadMeshFile(fixture("two_solids.stl"), mm);
    expect(cadKernelLoaded()).toBe(false);
  });
  it("extensions and content: STEP, IGES, BREP", () => {
    const b = (n: string) => fixtureBytes(`cad/${n}`);
    expect(detectFormat("a.STP", b("cube-mm.step"))).toBe("step");
    expect(detectFormat("a.igs", b("Cube 10x10.igs"))).toBe("iges");
    expect(detectFormat("a.brp", b("as1_pe_203.brep"))).toBe("brep");
    expect(detectFormat("noext", b("cube-mm.step"))).toBe("step");
    expect(detectFormat("noext", b("Cube 10x10.igs"))).toBe("iges");
    expect(detectFormat("noext", b("as1_pe_203.brep"))).toBe("brep");
  });
  it("declared units: SI with prefix, conversion-based inch, IGES flag", () => {
    expect(stepLengthUnits(text("cube-m.step")).map((u) => u.name)).toEqual(["metre"]);
    expect(stepLengthUnits(text("cube-mm.step"))).toEqual([{ name: "millimetre", metres: 1e-3 }]);
    // The inch file also has a millimetre LENGTH_UNIT: the inch's conversion factor, not a context's unit.
    expect(stepLengthUnits(text("cube-in.step"))).toEqual([{ name: "inch", metres: 0.0254 }]);
    expect(igesLengthUnit(text("Cube 10x10.igs"))).toEqual({ name: "millimetre", metres: 1e-3 });
  });
  it("the same 1 m cube in m, mm and in: same positions, area 6 m², outward, the declared unit wins over --unit", () => {
    const loads = ["cube-m.step", "cube-mm.step", "cube-in.step"].map((f) => loadMeshFile(cad(f), { unit: "in" }));
    for (const r of loads) {
      expect(r.mesh.names).toEqual(["Cube"]);
      expect(conductorAreas(r.mesh)[0]).toBeCloseTo(6, 9);
      expect(volume(r.mesh)).toBeCloseTo(1, 9);
      expect(r.warnings.map((w) => w.message).join("\n")).toMatch(/declared by the file and used/);
    }
    expect(loads[2].warnings[0].message).toMatch(/length unit inch/);
  });
  it("CAD files that declare one of our units report in it unless --unit is given", async () => {
    const { loadScene } = await import("../../src/io/inputs.js");
    const inch = loadScene(cad("cube-in.step"));
    expect([inch.unit, inch.unitAssumed]).toEqual(["in", false]);
    expect(conductorAreas(inch.mesh)[0]).toBeCloseTo(6, 9);
    expect(loadScene(cad("cube-in.step"), { unit: "mm" }).unit).toBe("mm");
    // Mixed declared units, or a BREP (none): the default stays, and is said to be assumed.
    const mixed = loadScene([cad("cube-in.step"), cad("cube-mm.step")]);
    expect([mixed.unit, mixed.unitAssumed]).toEqual(["mm", true]);
  });
  it("BREP declares no unit: --unit applies", () => {
    const a = loadMeshFile(cad("as1_pe_203.brep"), { unit: "mm" }), b = loadMeshFile(cad("as1_pe_203.brep"), { unit: "in" });
    expect(conductorAreas(b.mesh)[0] / conductorAreas(a.mesh)[0]).toBeCloseTo(25.4 ** 2, 6);
    expect(a.warnings[0].message).toMatch(/BREP declares no length unit: read in mm/);
  });
});

describe("CAD parts as conductors", () => {
  it("one part: named by its product, names with spaces kept", () => {
    const renamed = text("cube-mm.step").replace(/PRODUCT\('Cube','Cube'/, "PRODUCT('HV electrode 1','HV electrode 1'");
    const r = parseMeshBytes(new TextEncoder().encode(renamed), "x.step", mm);
    expect(r.mesh.names).toEqual(["HV electrode 1"]);
    expect(parseMeshBytes(new TextEncoder().encode(renamed), "x.step", { ...mm, name: "pin" }).mesh.names).toEqual(["pin"]);
  });
  it("an assembly: one conductor per part, repeated names made unique; groups and merge select and join parts", () => {
    const r = loadMeshFile(cad("dm1-id-214.stp"), mm);
    expect(r.mesh.names).toEqual(["l-bracket", "bolt", "bolt_2", "bolt_3", "nut", "nut_2", "nut_3"]);
    const areas = conductorAreas(r.mesh);
    expect(areas[1]).toBeCloseTo(areas[2], 12);
    const one = loadMeshFile(cad("dm1-id-214.stp"), { ...mm, groups: ["bolt_2"] });
    expect(one.mesh.names).toEqual(["bolt_2"]);
    expect(conductorAreas(one.mesh)[0]).toBeCloseTo(areas[2], 15);
    // A part keeps only its own faces in the reference.
    expect(one.mesh.reference?.faceCount).toBe(new Set(one.mesh.faces).size);
    const merged = loadMeshFile(cad("dm1-id-214.stp"), { ...mm, merge: true });
    expect(merged.mesh.names).toEqual(["dm1-id-214"]);
    expect(conductorAreas(merged.mesh)[0]).toBeCloseTo(areas.reduce((s, a) => s + a, 0), 12);
    // BREP: no names, so stem_1 ... stem_18.
    const brep = loadMeshFile(cad("as1_pe_203.brep"), mm);
    expect(brep.mesh.names.length).toBe(18);
    expect(brep.mesh.names[17]).toBe("as1_pe_203_18");
  });
});

describe("CAD faces and the reference surface", () => {
  it("every panel knows its face; the solve mesh's face areas match the reference's on flat faces", () => {
    const r = loadMeshFile(cad("Cube 10x10.igs"), mm);
    const m = r.mesh;
    expect(m.faces?.length).toBe(m.triangles.length / 3);
    expect(m.reference?.faceCount).toBe(6);
    // 10 mm cube: each face 1e-4 m² in the reference; the solve mesh's panels cover each face once.
    const ref = referenceFaceAreas(m.reference as ReferenceSurface);
    for (const a of ref) expect(a).toBeCloseTo(1e-4, 15);
    const solve = new Float64Array(6);
    for (let t = 0; t < m.triangles.length / 3; t++) {
      const p = m.positions, tr = m.triangles, a = 3 * tr[3 * t], b = 3 * tr[3 * t + 1], c = 3 * tr[3 * t + 2];
      const ux = p[b] - p[a], uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2], vx = p[c] - p[a], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
      solve[(m.faces as Uint32Array)[t]] += 0.5 * Math.hypot(uy * vz - uz * vy, uz * vx - ux * vz, ux * vy - uy * vx);
    }
    for (let f = 0; f < 6; f++) expect(solve[f]).toBeCloseTo(ref[f], 15);
  });
  it("rounded cube: the conductor area converges to the CAD area from below as the panels shrink", () => {
    const coarse = loadMeshFile(cad("rounded-cube.step"), mm);
    const fine = loadMeshFile(cad("rounded-cube.step"), { ...mm, panelSize: 0.5e-3 });
    const exact = referenceFaceAreas(coarse.mesh.reference as ReferenceSurface).reduce((s, a) => s + a, 0);
    const ac = conductorAreas(coarse.mesh)[0], af = conductorAreas(fine.mesh)[0];
    expect(fine.mesh.triangles.length).toBeGreaterThan(coarse.mesh.triangles.length);
    // Inscribed polygons on the curved faces: below the true area, closer when finer.
    expect(ac).toBeLessThan(exact * (1 + 1e-12));
    expect(exact - af).toBeLessThan(exact - ac);
    expect(Math.abs(af / exact - 1)).toBeLessThan(2e-3);
  });
  it("sphere (Gmsh STEP, R = 5 mm): reference points on the sphere, exact normals, PN lift within 1e-6 R", () => {
    const r = loadMeshFile(cad("sphere.step"), mm);
    const R = 5e-3, ref = r.mesh.reference as ReferenceSurface;
    const P = ref.positions, N = ref.normals;
    let off = 0, nerr = 0;
    for (let v = 0; v < P.length; v += 3) {
      const l = Math.hypot(P[v], P[v + 1], P[v + 2]);
      off = Math.max(off, Math.abs(l - R));
      nerr = Math.max(nerr, Math.hypot(N[v] - P[v] / l, N[v + 1] - P[v + 1] / l, N[v + 2] - P[v + 2] / l));
    }
    expect(off).toBeLessThan(1e-12 * R);
    expect(nerr).toBeLessThan(1e-9);
    // Curved PN triangle (Vlachos et al. 2001) of each reference triangle at its centroid.
    const pt = (i: number) => [P[3 * i], P[3 * i + 1], P[3 * i + 2]], nr = (i: number) => [N[3 * i], N[3 * i + 1], N[3 * i + 2]];
    const bij = (Pi: number[], Pj: number[], Ni: number[]) => {
      const w = (Pj[0] - Pi[0]) * Ni[0] + (Pj[1] - Pi[1]) * Ni[1] + (Pj[2] - Pi[2]) * Ni[2];
      return Pi.map((x, k) => (2 * x + Pj[k] - w * Ni[k]) / 3);
    };
    let lift = 0;
    const T = ref.triangles;
    for (let t = 0; t < T.length; t += 3) {
      const [P1, P2, P3] = [pt(T[t]), pt(T[t + 1]), pt(T[t + 2])], [N1, N2, N3] = [nr(T[t]), nr(T[t + 1]), nr(T[t + 2])];
      const bs = [bij(P1, P2, N1), bij(P2, P1, N2), bij(P2, P3, N2), bij(P3, P2, N3), bij(P3, P1, N3), bij(P1, P3, N1)];
      const E = [0, 1, 2].map((k) => bs.reduce((s, q) => s + q[k], 0) / 6), V = [0, 1, 2].map((k) => (P1[k] + P2[k] + P3[k]) / 3);
      const c = [0, 1, 2].map((k) => (P1[k] + P2[k] + P3[k]) / 27 + (3 * 6 * E[k]) / 27 + (6 * (E[k] + (E[k] - V[k]) / 2)) / 27);
      lift = Math.max(lift, Math.abs(Math.hypot(c[0], c[1], c[2]) - R));
    }
    expect(lift).toBeLessThan(1e-6 * R);
  });
});

describe("exact normals on planes and quadrics only", () => {
  it("a rounded block's planes, cylinders and sphere are all fitted; a torus keeps averaged normals, with a note", () => {
    expect(loadMeshFile(cad("rounded-cube.step"), mm).warnings.map((w) => w.message).join("\n")).not.toMatch(/neither planes nor quadrics/);
    // A coarser reference than loading makes, to keep the test quick (the fit does not depend on it).
    const t = readCad(fixtureBytes("cad/torus.step"), "torus.step", "step", { reference: { deflection: 0.01, angle: 0.2 } });
    expect(t.approximateFaces).toBe(1);
    expect(t.warnings.join("\n")).toMatch(/1 of 1 CAD faces are neither planes nor quadrics/);
    // The averaged normals are still close to the torus's own: (p - c)/r with c on the core circle (4 mm).
    const ref = t.reference, P = ref.positions, N = ref.normals;
    let worst = 0;
    for (let v = 0; v < P.length; v += 3) {
      const rho = Math.hypot(P[v], P[v + 1]);
      const c = [(4 * P[v]) / rho, (4 * P[v + 1]) / rho, 0];
      const d = [P[v] - c[0], P[v + 1] - c[1], P[v + 2]], l = Math.hypot(d[0], d[1], d[2]);
      worst = Math.max(worst, Math.hypot(N[v] - d[0] / l, N[v + 1] - d[1] / l, N[v + 2] - d[2] / l));
    }
    expect(worst).toBeLessThan(0.1);
  });
});

describe("exact normals on a cylinder meshed on its rims only", () => {
  it("the side face's normals are radial: the plane pair through the two rims is not taken for the surface", () => {
    const r = loadMeshFile(cad("cylinder.step"), mm);
    const ref = r.mesh.reference as ReferenceSurface, P = ref.positions, N = ref.normals;
    let worst = 0, side = 0;
    for (let v = 0; v < P.length; v += 3) {
      if (Math.abs(N[v + 2]) > 0.5) continue; // the end caps
      const l = Math.hypot(P[v], P[v + 1]);
      expect(Math.abs(l - 2e-3)).toBeLessThan(1e-12);
      side++;
      worst = Math.max(worst, Math.hypot(N[v] - P[v] / l, N[v + 1] - P[v + 1] / l, N[v + 2]));
    }
    expect(side).toBeGreaterThan(100);
    expect(worst).toBeLessThan(1e-6);
  });
});

describe("bad CAD input", () => {
  it("truncated, garbage, empty: one InputError naming the file (and the line when the kernel says)", () => {
    const full = fixtureBytes("cad/rounded-cube.step");
    const t = err(() => parseMeshBytes(full.subarray(0, full.length >> 1), "cut.step", mm));
    expect(t.file).toBe("cut.step");
    expect(t.place).toMatch(/^line \d+$/);
    expect(t.fault).toMatch(/not a readable STEP file \(unexpected end of file/);
    expect(err(() => parseMeshBytes(new TextEncoder().encode("hello"), "x.step", mm)).fault).toMatch(/not a readable STEP file/);
    const empty = "ISO-10303-21;\nHEADER;\nFILE_DESCRIPTION((''),'2;1');\nFILE_NAME('e','',(''),(''),'','','');\nFILE_SCHEMA(('AUTOMOTIVE_DESIGN'));\nENDSEC;\nDATA;\nENDSEC;\nEND-ISO-10303-21;\n";
    expect(err(() => parseMeshBytes(new TextEncoder().encode(empty), "e.step", mm)).fault).toMatch(/not a readable STEP file \(the CAD kernel found no shape in it/);
    // An assembly whose parts live in files not given: nothing to mesh.
    const ext = err(() => loadMeshFile(cad("s1_pe_214-external-parts.stp"), mm));
    expect(ext.fault).toMatch(/no part with a solid or surface in the STEP file/);
    expect(err(() => parseMeshBytes(new TextEncoder().encode("garbage"), "x.igs", mm)).fault).toMatch(/IGES/);
  });
});

describe("open CAD bodies", () => {
  it("a solid with a face missing from its shell: a warning naming the part; as a dielectric body it is refused", async () => {
    const open = text("cube-mm.step").replace("CLOSED_SHELL('',(#35,#155,#255,#302,#349,#356))", "CLOSED_SHELL('',(#35,#155,#255,#302,#349))");
    const r = parseMeshBytes(new TextEncoder().encode(open), "open.step", mm);
    expect(r.mesh.triangles.length / 3).toBe(10);
    expect(r.warnings.map((w) => w.message).join("\n")).toMatch(/part "Cube" is not a closed body \(4 open and 0 non-manifold edges\)/);
    const { loadScene } = await import("../../src/io/inputs.js");
    const { extract } = await import("../../src/extract/extract.js");
    const dir = mkdtempSync(join(tmpdir(), "sigmesh-cad-open-"));
    writeFileSync(join(dir, "open.step"), open);
    writeFileSync(join(dir, "s.json"), JSON.stringify({ unit: "mm", conductors: [{ name: "ball", shape: { sphere: { radius: 100, center: [500, 500, 2500] } } }], dielectrics: [{ mesh: "open.step", permittivity: 2 }] }));
    const s = loadScene(join(dir, "s.json"));
    await expect(extract(s, { solver: "direct" })).rejects.toThrow(/not closed/);
  });
});

describe("CAD files in a scene", () => {
  it("a part by name, parts merged into one net, a part as a dielectric body; placement moves the reference", async () => {
    const { loadScene } = await import("../../src/io/inputs.js");
    const dir = mkdtempSync(join(tmpdir(), "sigmesh-cad-"));
    const f = cad("dm1-id-214.stp").replace(/\\/g, "/");
    const scene = {
      unit: "mm",
      conductors: [
        { mesh: f, group: "l-bracket", potential: 1 },
        { name: "fasteners 1", mesh: f, groups: ["bolt", "nut"], place: { translate: [0, 0, 500] } },
      ],
      dielectrics: [{ name: "sleeve", mesh: f, group: "nut_3", permittivity: 3, place: { translate: [0, 500, 0] } }],
    };
    writeFileSync(join(dir, "s.json"), JSON.stringify(scene));
    const s = loadScene(join(dir, "s.json"));
    expect(s.mesh.names).toEqual(["l-bracket", "fasteners 1"]);
    expect(s.dielectrics[0].name).toBe("sleeve");
    const m = s.mesh;
    expect(m.faces?.length).toBe(m.triangles.length / 3);
    const ref = m.reference as ReferenceSurface;
    expect(ref.faceCount).toBe(new Set(m.faces).size);
    // Each panel's corners lie on its reference face, placed with the panel (translated 0.5 m).
    let worst = 0;
    for (let t = 0; t < m.triangles.length / 3; t++) {
      if (m.conductor[t] !== 1) continue;
      const v = m.triangles[3 * t], f0 = (m.faces as Uint32Array)[t];
      let best = Infinity;
      for (let k = 0; k < ref.face.length; k++) {
        if (ref.face[k] !== f0) continue;
        for (let j = 0; j < 3; j++) {
          const w = ref.triangles[3 * k + j];
          best = Math.min(best, Math.hypot(ref.positions[3 * w] - m.positions[3 * v], ref.positions[3 * w + 1] - m.positions[3 * v + 1], ref.positions[3 * w + 2] - m.positions[3 * v + 2]));
        }
      }
      worst = Math.max(worst, best);
      if (t > 400) break;
    }
    // Panel corners on the face's boundary are reference vertices too; interior ones lie within a reference triangle.
    expect(worst).toBeLessThan(5e-3);
  });
});
