import { describe, it, expect } from "vitest";
import { mkdtempSync, writeFileSync, mkdirSync, copyFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { loadMeshFile, loadMeshFiles, parseMeshBytes } from "../../src/io/load.js";
import { detectFormat } from "../../src/io/format.js";
import { InputError } from "../../src/errors.js";
import { conductorAreas } from "../../src/mesh/model.js";
import { fixture, fixtureBytes, UNIT_TET_AREA } from "./helpers.js";

const mm = { unit: "mm" as const };
const enc = (s: string) => new TextEncoder().encode(s);
const err = (f: () => unknown): InputError => {
  try { f(); } catch (e) { if (e instanceof InputError) return e; throw e; }
  throw new Error("expected an InputError");
};

describe("loadMeshFile", () => {
  it("one body: one conductor named after the stem, welded, scaled to metres", () => {
    const r = loadMeshFile(fixture("tetra_solid_header.stl"), mm);
    expect(r.mesh.names).toEqual(["tetra_solid_header"]);
    expect(r.mesh.positions.length).toBe(12); // 12 soup vertices weld to 4
    expect(r.welded).toBe(8);
    // 2.5 mm tetrahedron: area (2.5e-3 m)² × UNIT_TET_AREA.
    expect(conductorAreas(r.mesh)[0]).toBeCloseTo(UNIT_TET_AREA * 6.25e-6, 12);
    expect(r.mesh.triangles.length).toBe(12);
  });
  it("named solids are conductors; name, groups, merge and split options", () => {
    const f = fixture("two_solids.stl");
    expect(loadMeshFile(f, mm).mesh.names).toEqual(["anode", "cathode plate"]);
    expect(loadMeshFile(f, { ...mm, merge: true }).mesh.names).toEqual(["two_solids"]);
    expect(loadMeshFile(f, { ...mm, merge: true, name: "hv" }).mesh.names).toEqual(["hv"]);
    const only = loadMeshFile(f, { ...mm, groups: ["cathode plate"] });
    expect(only.mesh.names).toEqual(["cathode plate"]);
    expect(only.mesh.triangles.length).toBe(6);
    expect(only.mesh.positions.length).toBe(12);
    expect(err(() => loadMeshFile(f, { ...mm, groups: ["nope"] })).message).toMatch(/no group "nope" in the file; it has: "anode", "cathode plate"/);
    const merged = loadMeshFile(f, { ...mm, merge: true, split: false });
    expect(loadMeshFile(f, { ...mm, split: true }).mesh.names).toEqual(["anode", "cathode plate"]);
    expect(merged.mesh.conductor.every((c) => c === 0)).toBe(true);
    expect(err(() => loadMeshFile(f, { ...mm, merge: true, split: true })).fault).toMatch(/split and merge/);
  });
  it("split turns a one-body file's pieces into stem_1, stem_2", () => {
    const r = parseMeshBytes(fixtureBytes("two_solids.stl"), "pads.stl", { ...mm, merge: true });
    expect(r.mesh.names).toEqual(["pads"]);
    const s = loadMeshFile(fixture("two_tets_41_nophys.msh"), { ...mm, merge: false });
    expect(s.mesh.names).toEqual(["surface_1", "surface_3"]);
    const bytes = fixtureBytes("tetra_quirks.stl");
    const text = new TextDecoder().decode(bytes).replace(/ENDSOLID[\s\S]*/, "");
    const shifted = text.replace(/^SOLID/, "").replace(/VERTEX\t(\S+)/g, (_, x) => `VERTEX\t${Number(x) + 5}`);
    const two = parseMeshBytes(enc(text + shifted + "ENDSOLID\n"), "pads.stl", { ...mm, split: true });
    expect(two.mesh.names).toEqual(["pads_1", "pads_2"]);
    expect(Array.from(conductorAreas(two.mesh)).map((a) => a / 1e-6)).toEqual([expect.closeTo(UNIT_TET_AREA, 9), expect.closeTo(UNIT_TET_AREA, 9)]);
  });
  it("option faults are bad input", () => {
    const f = fixture("two_solids.stl");
    expect(err(() => loadMeshFile(f, { unit: "furlong" as never })).fault).toMatch(/unknown length unit "furlong"/);
    expect(err(() => loadMeshFile(f, { ...mm, groups: [] })).fault).toMatch(/groups to keep is empty/);
    expect(err(() => loadMeshFile(f, { ...mm, weldTolerance: -1 })).fault).toMatch(/weld tolerance -1/);
  });
  it("units: inches scale by 25.4 mm exactly", () => {
    const r = loadMeshFile(fixture("two_solids.stl"), { unit: "in" });
    expect(Math.max(...r.mesh.positions)).toBeCloseTo(7 * 0.0254, 15);
  });
  it("OBJ and MSH through the same pipeline", () => {
    expect(loadMeshFile(fixture("parts.obj"), mm).mesh.names).toEqual(["box", "lshape"]);
    expect(loadMeshFile(fixture("two_tets_22.msh"), mm).mesh.names).toEqual(["anode", "cathode"]);
    expect(loadMeshFile(fixture("groups.obj"), { ...mm, groups: ["tri"] }).mesh.names).toEqual(["tri"]);
  });
  it("names are unique across files", () => {
    const r = loadMeshFiles([fixture("two_solids.stl"), fixture("two_solids.stl"), fixture("two_tets_22.msh")], mm);
    expect(r.mesh.names).toEqual(["anode", "cathode plate", "anode_2", "cathode plate_2", "anode_3", "cathode"]);
    expect(r.files).toHaveLength(3);
  });
  it("one warning counting dropped degenerates; a conductor left empty is an error", () => {
    const t = "solid a\n" + [
      "0 0 0|1 0 0|0 1 0", "0 0 0|1 0 0|2 0 0", "0 0 0|0 0 0|0 1 0",
    ].map((f) => `facet normal 0 0 1\nouter loop\n${f.split("|").map((v) => `vertex ${v}\n`).join("")}endloop\nendfacet\n`).join("") + "endsolid a\nsolid b\nfacet normal 0 0 1\nouter loop\nvertex 5 0 0\nvertex 6 0 0\nvertex 7 0 0\nendloop\nendfacet\nendsolid\n";
    const e = err(() => parseMeshBytes(enc(t), "d.stl", mm));
    expect(e.message).toBe('d.stl: conductor "b" has no valid triangle left: all of its triangles are degenerate (zero area)');
    const ok = parseMeshBytes(enc(t), "d.stl", { ...mm, groups: ["a"] });
    expect(ok.dropped).toBe(2);
    expect(ok.warnings.filter((w) => /degenerate/.test(w.message))).toHaveLength(1);
    expect(ok.warnings[0].message).toMatch(/^2 degenerate triangle/);
  });
  it("bad files: missing, directory, empty, unknown format", () => {
    const dir = mkdtempSync(join(tmpdir(), "sigmesh-load-"));
    expect(err(() => loadMeshFile(join(dir, "none.stl"), mm)).message).toBe(`${join(dir, "none.stl")}: no such file`);
    mkdirSync(join(dir, "d.stl"));
    expect(err(() => loadMeshFile(join(dir, "d.stl"), mm)).fault).toMatch(/is a directory/);
    writeFileSync(join(dir, "e.obj"), "");
    expect(err(() => loadMeshFile(join(dir, "e.obj"), mm)).fault).toBe("empty file");
    writeFileSync(join(dir, "x.ply"), "ply\nformat ascii 1.0\n");
    expect(err(() => loadMeshFile(join(dir, "x.ply"), mm)).fault).toMatch(/unknown mesh format \(extension "\.ply"/);
    copyFileSync(fixture("two_tets_22.msh"), join(dir, "noext"));
    expect(loadMeshFile(join(dir, "noext"), mm).mesh.names).toEqual(["anode", "cathode"]);
  });
});

/** One unit tetrahedron, all four faces in surface entity 1; `phys` 0 for no physical group. */
const TET = [[1, 3, 2], [1, 2, 4], [1, 4, 3], [2, 3, 4]];
const NODE_XYZ = ["0 0 0", "1 0 0", "0 1 0", "0 0 1"];
const names22 = (names: string) => names === "" ? "" : `$PhysicalNames\n${names.split("\n").length}\n${names}\n$EndPhysicalNames\n`;
/** Gmsh MSH 2.2 ASCII (legacy format in the Gmsh reference manual): element "id 2 2 phys entity n1 n2 n3". */
function msh22(phys: number, names: string): Uint8Array {
  return enc("$MeshFormat\n2.2 0 8\n$EndMeshFormat\n" + names22(names) +
    `$Nodes\n4\n${NODE_XYZ.map((x, i) => `${i + 1} ${x}`).join("\n")}\n$EndNodes\n` +
    `$Elements\n4\n${TET.map((t, i) => `${i + 1} 2 2 ${phys} 1 ${t.join(" ")}`).join("\n")}\n$EndElements\n`);
}
/** Gmsh MSH 4.1 ASCII ("MSH file format" in the Gmsh reference manual): one surface entity, its physical tag in $Entities. */
function msh41(phys: number, names: string): Uint8Array {
  const physList = phys === 0 ? "0" : `1 ${phys}`;
  return enc("$MeshFormat\n4.1 0 8\n$EndMeshFormat\n" + names22(names) +
    `$Entities\n0 0 1 0\n1 0 0 0 1 1 1 ${physList} 0\n$EndEntities\n` +
    `$Nodes\n1 4 1 4\n2 1 0 4\n1\n2\n3\n4\n${NODE_XYZ.join("\n")}\n$EndNodes\n` +
    `$Elements\n1 4 1 4\n2 1 2 4\n${TET.map((t, i) => `${i + 1} ${t.join(" ")}`).join("\n")}\n$EndElements\n`);
}

describe("a one-body file's conductor name", () => {
  const variants = [["2.2", msh22], ["4.1", msh41]] as const;
  for (const [version, write] of variants) {
    it(`MSH ${version}: one named physical surface gives its name; unnamed ones and none give the stem`, () => {
      expect(parseMeshBytes(write(101, '2 101 "electrode"'), "part.msh", mm).mesh.names).toEqual(["electrode"]);
      // Spaces kept, surrounding blanks trimmed, as for files with several bodies.
      expect(parseMeshBytes(write(101, '2 101 " hv electrode "'), "part.msh", mm).mesh.names).toEqual(["hv electrode"]);
      // A physical group with no name in $PhysicalNames, an empty name, or no physical group at all.
      expect(parseMeshBytes(write(101, ""), "part.msh", mm).mesh.names).toEqual(["part"]);
      expect(parseMeshBytes(write(101, '2 101 ""'), "part.msh", mm).mesh.names).toEqual(["part"]);
      expect(parseMeshBytes(write(101, '1 101 "a curve"'), "part.msh", mm).mesh.names).toEqual(["part"]);
      expect(parseMeshBytes(write(0, ""), "part.msh", mm).mesh.names).toEqual(["part"]);
    });
  }
  it("MSH: name wins over the physical name; groups select by it; merge names after the stem; split numbers it", () => {
    const b = msh41(101, '2 101 "electrode"');
    expect(parseMeshBytes(b, "part.msh", { ...mm, name: "hv" }).mesh.names).toEqual(["hv"]);
    expect(parseMeshBytes(b, "part.msh", { ...mm, groups: ["electrode"] }).mesh.names).toEqual(["electrode"]);
    expect(parseMeshBytes(b, "part.msh", { ...mm, groups: ["part"] }).mesh.names).toEqual(["electrode"]);
    expect(err(() => parseMeshBytes(b, "part.msh", { ...mm, groups: ["other"] })).fault).toMatch(/no group "other" in the file; it has: "electrode"/);
    expect(parseMeshBytes(b, "part.msh", { ...mm, merge: true }).mesh.names).toEqual(["part"]);
    // Two separate tetrahedra in the one physical surface: split gives electrode_1, electrode_2.
    const two = new TextDecoder().decode(msh22(101, '2 101 "electrode"'))
      .replace("$Nodes\n4\n", "$Nodes\n8\n").replace("$EndNodes", `${NODE_XYZ.map((x, i) => `${i + 5} ${x.replace(/^\S+/, (v) => String(Number(v) + 3))}`).join("\n")}\n$EndNodes`)
      .replace("$Elements\n4\n", "$Elements\n8\n").replace("$EndElements", `${TET.map((t, i) => `${i + 5} 2 2 101 1 ${t.map((n) => n + 4).join(" ")}`).join("\n")}\n$EndElements`);
    expect(parseMeshBytes(enc(two), "part.msh", mm).mesh.names).toEqual(["electrode"]);
    expect(parseMeshBytes(enc(two), "part.msh", { ...mm, split: true }).mesh.names).toEqual(["electrode_1", "electrode_2"]);
  });
  it("MSH with two named physical surfaces keeps both names, as before", () => {
    expect(parseMeshBytes(fixtureBytes("two_tets_41.msh"), "part.msh", mm).mesh.names).toEqual(["anode", "cathode"]);
    expect(parseMeshBytes(fixtureBytes("two_tets_22.msh"), "part.msh", mm).mesh.names).toEqual(["anode", "cathode"]);
  });
  it("STL and OBJ: a one-body file is named after the stem whatever solid, o or g name it carries", () => {
    const tri = "facet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nvertex 0 1 0\nendloop\nendfacet\n";
    expect(parseMeshBytes(enc(`solid electrode\n${tri}endsolid electrode\n`), "part.stl", mm).mesh.names).toEqual(["part"]);
    expect(parseMeshBytes(enc(`solid\n${tri}endsolid\n`), "part.stl", mm).mesh.names).toEqual(["part"]);
    expect(parseMeshBytes(enc("o electrode\nv 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n"), "part.obj", mm).mesh.names).toEqual(["part"]);
    expect(parseMeshBytes(enc("g electrode\nv 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n"), "part.obj", mm).mesh.names).toEqual(["part"]);
  });
});

describe("detectFormat", () => {
  it("extension first, then content", () => {
    expect(detectFormat("a.STL", new Uint8Array())).toBe("stl");
    expect(detectFormat("a.Obj", new Uint8Array())).toBe("obj");
    expect(detectFormat("a", fixtureBytes("tetra_solid_header.stl"))).toBe("stl");
    expect(detectFormat("a", fixtureBytes("two_solids.stl"))).toBe("stl");
    expect(detectFormat("a.txt", fixtureBytes("parts.obj"))).toBe("obj");
    expect(detectFormat("a.mesh", fixtureBytes("two_tets_41.msh"))).toBe("msh");
    expect(() => detectFormat("a.dat", enc("hello world\n"))).toThrowError(InputError);
  });
});
