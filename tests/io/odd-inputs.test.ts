import { describe, it, expect } from "vitest";
import { parseMeshBytes } from "../../src/io/load.js";
import { InputError } from "../../src/errors.js";
import { conductorAreas } from "../../src/mesh/model.js";
import { readMsh } from "../../src/io/msh.js";
import { UNIT_TET_AREA } from "./helpers.js";

// Odd but legal files that CAD and mesh tools write; each must load as the plain form would.
// Geometry: the unit right tetrahedron (area UNIT_TET_AREA, elementary geometry), in metres here.
const enc = (s: string) => new TextEncoder().encode(s);
const m = { unit: "m" as const };
const load = (text: string | Uint8Array, file: string) => parseMeshBytes(typeof text === "string" ? enc(text) : text, file, m);
const err = (f: () => unknown): InputError => {
  try { f(); } catch (e) { if (e instanceof InputError) return e; throw e; }
  throw new Error("expected an InputError");
};
const V = [[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1]];
const F = [[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]];

function asciiStl(opts: { name?: string; end?: string; nl?: string; indent?: string; upper?: boolean; num?: (x: number) => string; shift?: number } = {}): string {
  const { name = "tet", nl = "\n", indent = "  ", upper = false, num = String, shift = 0 } = opts;
  const k = (s: string) => (upper ? s.toUpperCase() : s);
  let s = `${k("solid")} ${name}${nl}`;
  for (const f of F) {
    s += `${indent}${k("facet normal")} 0 0 0${nl}${indent}${indent}${k("outer loop")}${nl}`;
    for (const v of f) s += `${indent}${indent}${indent}${k("vertex")} ${V[v].map((x, i) => num(i === 0 ? x + shift : x)).join(indent === "\t" ? "\t" : " ")}${nl}`;
    s += `${indent}${indent}${k("endloop")}${nl}${indent}${k("endfacet")}${nl}`;
  }
  return s + `${k("endsolid")}${opts.end !== undefined ? opts.end : ` ${name}`}${nl}`;
}

function binaryStl(header: string, tris: number[][][], claimed = tris.length, extra = 0): Uint8Array {
  const out = new Uint8Array(84 + 50 * tris.length + extra);
  out.set(enc(header).subarray(0, 80));
  const dv = new DataView(out.buffer);
  dv.setUint32(80, claimed, true);
  tris.forEach((t, i) => t.flat().forEach((v, k) => dv.setFloat32(84 + 50 * i + 12 + 4 * k, v, true)));
  return out;
}
const TET = F.map((f) => f.map((v) => V[v]));

function tetArea(r: ReturnType<typeof load>): number { return conductorAreas(r.mesh).reduce((a, b) => a + b, 0); }

describe("STL, binary", () => {
  it("a header starting with 'solid' (and even 'facet') is binary by the size rule", () => {
    const r = load(binaryStl("solid tet facet normal exported by CAD", TET), "b.stl");
    expect(tetArea(r)).toBeCloseTo(UNIT_TET_AREA, 6);
  });
  it("trailing bytes after the counted triangles: read, with a warning naming both sizes", () => {
    const r = load(binaryStl("x", TET, 4, 17), "b.stl");
    expect(tetArea(r)).toBeCloseTo(UNIT_TET_AREA, 6);
    expect(r.warnings.map((w) => w.message).join("\n")).toMatch(/17 bytes after the 4 triangles the header counts/);
  });
  it("trailing bytes on a header starting with 'solid' are still binary", () => {
    const r = load(binaryStl("solid x", TET, 4, 3), "b.stl");
    expect(tetArea(r)).toBeCloseTo(UNIT_TET_AREA, 6);
  });
  it("a count larger than the file: error naming the count and what the size holds", () => {
    const e = err(() => load(binaryStl("x", TET, 9), "b.stl"));
    expect(e.message).toMatch(/b\.stl: byte 80: .*claims 9 triangles .* holds 284 bytes, room for 4/);
  });
});

describe("STL, ASCII", () => {
  const cases: Array<[string, string]> = [
    ["CRLF line ends", asciiStl({ nl: "\r\n" })],
    ["tabs", asciiStl({ indent: "\t" })],
    ["upper-case keywords", asciiStl({ upper: true })],
    ["endsolid without a name", asciiStl({ end: "" })],
    ["endsolid with another name", asciiStl({ end: " other" })],
    // 10 × the unit tetrahedron spelled "1.0E+01", "0.0E+00".
    ["scientific notation", asciiStl({ num: (x) => (10 * x).toExponential(1).toUpperCase().replace(/E([+-])(\d)$/, "E$10$2") })],
    ["no trailing newline", asciiStl().trimEnd()],
    ["a byte-order mark", "\uFEFF" + asciiStl()],
    ["a solid without a name", asciiStl({ name: "", end: "" })],
  ];
  for (const [what, text] of cases) {
    it(what, () => {
      const r = load(text, "a.stl");
      const area = tetArea(r);
      expect(area).toBeCloseTo(what === "scientific notation" ? 100 * UNIT_TET_AREA : UNIT_TET_AREA, 12);
      expect(r.mesh.names).toEqual(["a"]);
    });
  }
  it("`1.0E+01` style numbers are read exactly", () => {
    const t = asciiStl().replace(/vertex 1 0 0/g, "vertex 1.0E+01 0.0e-00 +0.0E+0").replace(/vertex 0 1 0/g, "vertex 0 1.0E+01 0").replace(/vertex 0 0 1/g, "vertex 0 0 10.0E0");
    expect(tetArea(load(t, "a.stl"))).toBeCloseTo(100 * UNIT_TET_AREA, 10);
  });
  it("several solids are several conductors, names with spaces, unicode and markup kept", () => {
    const t = asciiStl({ name: "HV électrode <A&B> \"1\"" }) + asciiStl({ name: "guard ring", shift: 5 });
    const r = load(t, "a.stl");
    expect(r.mesh.names).toEqual(["HV électrode <A&B> \"1\"", "guard ring"]);
    expect(conductorAreas(r.mesh)[1]).toBeCloseTo(UNIT_TET_AREA, 12);
  });
});

describe("OBJ", () => {
  const verts = V.map((v) => `v ${v.join(" ")}`).join("\n") + "\n";
  const faces = (fmt: (i: number) => string) => F.map((f) => `f ${f.map((i) => fmt(i + 1)).join(" ")}`).join("\n") + "\n";
  const cases: Array<[string, string]> = [
    ["mtllib, usemtl, s, l and p lines", `mtllib parts.mtl\n${verts}vt 0 0\nvn 0 0 1\nusemtl copper\ns 1\nl 1 2\np 3\ns off\n${faces(String)}`],
    ["line continuations", `${verts.replace("v 0 0 1", "v 0 \\\n 0 \\\n 1")}${faces(String).replace("f 1 3 2", "f 1 \\\n3 2")}`],
    ["vp statements", `${verts}vp 0.5 0.5\n${faces(String)}`],
    ["faces v//vn", `${verts}vn 0 0 1\n${faces((i) => `${i}//1`)}`],
    ["faces v/vt/vn", `${verts}vt 0 0\nvn 0 0 1\n${faces((i) => `${i}/1/1`)}`],
    ["negative indices", `${verts}${faces((i) => String(i - 5))}`],
    ["CRLF and a byte-order mark", "\uFEFF" + (verts + faces(String)).replace(/\n/g, "\r\n")],
    ["no trailing newline", (verts + faces(String)).trimEnd()],
  ];
  for (const [what, text] of cases) {
    it(what, () => {
      const r = load(text, "o.obj");
      expect(tetArea(r)).toBeCloseTo(UNIT_TET_AREA, 12);
      expect(r.mesh.triangles.length).toBe(12);
      expect(r.warnings).toEqual([]);
    });
  }
  it("polygons with repeated vertices lose the repeats, not the face", () => {
    const t = `${verts}f 1 3 3 2\nf 1 2 4 1\nf 1 4 3 3 1\nf 2 3 4\n`;
    const r = load(t, "o.obj");
    expect(r.mesh.triangles.length).toBe(12);
    expect(tetArea(r)).toBeCloseTo(UNIT_TET_AREA, 12);
    expect(r.dropped).toBe(0);
  });
});

describe("MSH", () => {
  it("a byte-order mark and CRLF", () => {
    const t = "\uFEFF$MeshFormat\r\n2.2 0 8\r\n$EndMeshFormat\r\n$Nodes\r\n4\r\n" + V.map((v, k) => `${k + 1} ${v.join(" ")}`).join("\r\n")
      + "\r\n$EndNodes\r\n$Elements\r\n4\r\n" + F.map((f, k) => `${k + 1} 2 2 1 1 ${f.map((i) => i + 1).join(" ")}`).join("\r\n") + "\r\n$EndElements";
    expect(tetArea(load(t, "t.msh"))).toBeCloseTo(UNIT_TET_AREA, 12);
  });
});

describe("nothing to load", () => {
  for (const file of ["e.stl", "e.obj", "e.msh", "e"]) {
    it(`${file}: an empty file is one clear error`, () => {
      expect(err(() => load(new Uint8Array(0), file)).message).toBe(`${file}: empty file`);
    });
  }
  it("whitespace only", () => {
    for (const file of ["w.stl", "w.obj", "w.msh"]) expect(err(() => load(" \n\r\n\t\n", file)).fault).toMatch(/empty file/);
  });
  it("only degenerate triangles: says nothing is left", () => {
    const t = "solid flat\nfacet normal 0 0 0\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nvertex 2 0 0\nendloop\nendfacet\nendsolid\n";
    expect(err(() => load(t, "d.stl")).message).toMatch(/^d\.stl: .*no valid triangle left.*degenerate/);
    expect(err(() => load("v 0 0 0\nv 1 1 1\nf 1 2 2\nf 1 1 1\n", "d.obj")).message).toMatch(/^d\.obj: .*no valid triangle left|^d\.obj: .*no triangles/);
  });
});

describe("names in Windows-1252", () => {
  // Bytes that are not valid UTF-8 are read as Windows-1252 (0xC9 = É, 0xB5 = µ, 0x96 = en dash).
  const latin = (s: string) => Uint8Array.from(s, (c) => ({ "É": 0xc9, "µ": 0xb5, "–": 0x96 } as Record<string, number>)[c] ?? c.charCodeAt(0));
  it("STL solid names", () => {
    const t = asciiStl({ name: "Électrode 5µm – A" });
    expect(load(latin(t), "l.stl").mesh.names).toEqual(["l"]);
    const two = asciiStl({ name: "Électrode 5µm – A" }) + asciiStl({ name: "B", shift: 5 });
    expect(load(latin(two), "l.stl").mesh.names).toEqual(["Électrode 5µm – A", "B"]);
  });
  it("OBJ object names and MSH physical names", () => {
    const obj = `o Électrode\n${V.map((v) => `v ${v.join(" ")}`).join("\n")}\n${F.map((f) => `f ${f.map((i) => i + 1).join(" ")}`).join("\n")}\no µ–pad\nv 5 0 0\nv 6 0 0\nv 5 1 0\nv 5 0 1\nf 5 7 6\nf 5 6 8\nf 5 8 7\nf 6 7 8\n`;
    expect(load(latin(obj), "l.obj").mesh.names).toEqual(["Électrode", "µ–pad"]);
    const msh = "$MeshFormat\n2.2 0 8\n$EndMeshFormat\n$PhysicalNames\n1\n2 1 \"Électrode\"\n$EndPhysicalNames\n$Nodes\n4\n" + V.map((v, k) => `${k + 1} ${v.join(" ")}`).join("\n")
      + "\n$EndNodes\n$Elements\n4\n" + F.map((f, k) => `${k + 1} 2 2 1 1 ${f.map((i) => i + 1).join(" ")}`).join("\n") + "\n$EndElements\n";
    expect(readMsh(latin(msh), "l.msh").groupNames).toEqual(["Électrode"]);
  });
});
