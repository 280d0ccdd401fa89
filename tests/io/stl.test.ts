import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { readStl, writeStlBinary, writeStlAscii, formatCoordinate } from "../../src/io/stl.js";
import { readDecimal } from "../../src/io/decimal.js";
import { InputError } from "../../src/errors.js";
import { fixtureBytes, rawArea, UNIT_TET_AREA } from "./helpers.js";

const enc = (s: string) => new TextEncoder().encode(s);

function binaryStl(header: string, tris: number[][], claimed = tris.length): Uint8Array {
  const out = new Uint8Array(84 + 50 * tris.length);
  out.set(enc(header).subarray(0, 80));
  const dv = new DataView(out.buffer);
  dv.setUint32(80, claimed, true);
  tris.forEach((t, i) => t.forEach((v, k) => dv.setFloat32(84 + 50 * i + 12 + 4 * k, v, true)));
  return out;
}

describe("readStl binary", () => {
  it("reads a binary file whose header starts with 'solid' by the size rule", () => {
    const m = readStl(fixtureBytes("tetra_solid_header.stl"), "t.stl");
    expect(m.triangles.length).toBe(12);
    expect(m.groupNames).toEqual([""]);
    // The fixture is the unit tetrahedron scaled by 2.5: area scales by 2.5².
    expect(rawArea(m)).toBeCloseTo(UNIT_TET_AREA * 6.25, 5);
  });
  it("rejects a header claiming more triangles than the file holds, naming byte 80", () => {
    const b = binaryStl("x", [[0, 0, 0, 1, 0, 0, 0, 1, 0]], 4000000000);
    expect(() => readStl(b, "big.stl")).toThrowError(/big\.stl: byte 80: .*claims 4000000000 triangles/);
  });
  it("rejects a truncated file", () => {
    const b = binaryStl("x", [[0, 0, 0, 1, 0, 0, 0, 1, 0], [0, 0, 0, 1, 0, 0, 0, 0, 1]]).subarray(0, 84 + 70);
    expect(() => readStl(b, "cut.stl")).toThrowError(/byte 80: .*truncated/);
  });
  it("names the triangle and byte offset of a non-finite coordinate", () => {
    const b = binaryStl("x", [[0, 0, 0, 1, 0, 0, 0, 1, 0], [0, 0, 0, 1, NaN, 0, 0, 0, 1]]);
    let err: unknown;
    try { readStl(b, "nan.stl"); } catch (e) { err = e; }
    expect(err).toBeInstanceOf(InputError);
    // Triangle 2 starts at 84 + 50; its vertices at +12; the y of vertex 2 is the 5th float.
    expect((err as InputError).place).toBe(`byte ${84 + 50 + 12 + 16}`);
    expect((err as InputError).fault).toMatch(/triangle 2: vertex 2 coordinate y is NaN/);
  });
  it("rejects bytes that are neither binary nor ASCII STL", () => {
    expect(() => readStl(new Uint8Array([1, 2, 3]), "x.stl")).toThrowError(InputError);
    expect(() => readStl(new Uint8Array(200).fill(7), "x.stl")).toThrowError(/byte 80/);
  });
});

/**
 * Binary STL as several solids end to end, written byte by byte: per block an 80-byte
 * header (the text, then zero bytes), a uint32 count and count 50-byte records.
 */
function stlBlocks(blocks: Array<{ header: string; tris: number[][]; claimed?: number }>): Uint8Array {
  const parts = blocks.map((b) => binaryStl("", b.tris, b.claimed ?? b.tris.length));
  blocks.forEach((b, i) => parts[i].set(enc(b.header).subarray(0, 80)));
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) { out.set(p, at); at += p.length; }
  return out;
}
const tri = (x: number): number[] => [x, 0, 0, x + 1, 0, 0, x, 1, 0];
const tris = (k: number, x: number): number[][] => Array.from({ length: k }, (_, i) => tri(x + 2 * i));

describe("readStl binary, several solids end to end", () => {
  const three = () => stlBlocks([
    { header: "solid electrode", tris: tris(4, 0) },
    { header: "plate", tris: tris(2, 20) },
    { header: "\0".repeat(80), tris: tris(3, 40) },
  ]);
  it("reads each block as a group named from its header", () => {
    const m = readStl(three(), "gmsh.stl");
    expect(m.groupNames).toEqual(["electrode", "plate", ""]);
    expect(Array.from(m.group)).toEqual([0, 0, 0, 0, 1, 1, 2, 2, 2]);
    expect(m.triangles.length).toBe(27);
    // Every vertex lands where its block put it: the first x of each triangle.
    const xs = Array.from({ length: 9 }, (_, t) => m.positions[9 * t]);
    expect(xs).toEqual([0, 2, 4, 6, 20, 22, 40, 42, 44]);
    expect(m.warnings).toEqual([]);
  });
  it("names blocks by the header text: 'solid' dropped, case-blind, trimmed; binary junk gives no name", () => {
    const junk = "\x01\x02abc";
    const m = readStl(stlBlocks([
      { header: "SOLID  pin 3  ", tris: tris(1, 0) },
      { header: "solidity", tris: tris(1, 5) },
      { header: junk, tris: tris(1, 10) },
      { header: "solid", tris: tris(1, 15) },
    ]), "n.stl");
    expect(m.groupNames).toEqual(["pin 3", "solidity", "", ""]);
  });
  it("names block, triangle and byte offset of a non-finite coordinate in a later block", () => {
    const b = stlBlocks([{ header: "a", tris: tris(2, 0) }, { header: "b", tris: [tri(9), [0, 0, 0, 1, 0, 0, 0, Infinity, 0]] }]);
    let err: unknown;
    try { readStl(b, "inf.stl"); } catch (e) { err = e; }
    expect(err).toBeInstanceOf(InputError);
    const second = 84 + 100;
    expect((err as InputError).place).toBe(`byte ${second + 84 + 50 + 12 + 28}`);
    expect((err as InputError).fault).toMatch(new RegExp(`^block 2 \\(byte ${second}\\), triangle 2: vertex 3 coordinate y is Infinity`));
  });
  it("a later block whose count overruns the file keeps the old reading: first block, trailing bytes ignored", () => {
    const b = stlBlocks([{ header: "solid a", tris: tris(2, 0) }, { header: "solid b", tris: tris(2, 9), claimed: 3 }]);
    const m = readStl(b, "over.stl");
    expect(m.groupNames).toEqual([""]);
    expect(m.triangles.length).toBe(6);
    expect(m.warnings).toEqual([`byte 184: ${b.length - 184} bytes after the 2 triangles the header counts (184 bytes of ${b.length}) ignored`]);
  });
  it("a count that falls short of the end, or a zero count, keeps the old reading too", () => {
    const short = stlBlocks([{ header: "a", tris: tris(2, 0) }, { header: "b", tris: tris(3, 9), claimed: 2 }]);
    expect(readStl(short, "s.stl").groupNames).toEqual([""]);
    expect(readStl(short, "s.stl").warnings[0]).toMatch(/^byte 184: /);
    const zero = stlBlocks([{ header: "a", tris: tris(2, 0) }, { header: "b", tris: [] }]);
    expect(readStl(zero, "z.stl").triangles.length).toBe(6);
    expect(readStl(zero, "z.stl").warnings[0]).toMatch(/^byte 184: 84 bytes after/);
  });
  it("reads a file written by Gmsh itself, one solid per physical group", () => {
    // Written by Debian's Gmsh 4.8.4 from tests/fixtures/gmsh_two_solids.geo
    // (`gmsh gmsh_two_solids.geo -2 -format stl -o gmsh_two_solids.stl`, Mesh.Binary = 1,
    // Mesh.StlOneSolidPerSurface = 2): a unit cube "electrode" and a sphere of radius 0.5
    // "ground plate". Gmsh's own block counts are 156 and 80 triangles.
    const m = readStl(fixtureBytes("gmsh_two_solids.stl"), "gmsh.stl");
    expect(m.groupNames).toEqual(["electrode", "ground plate"]);
    expect(Array.from(m.group).filter((g) => g === 0)).toHaveLength(156);
    expect(Array.from(m.group).filter((g) => g === 1)).toHaveLength(80);
    expect(m.warnings).toEqual([]);
    // The cube's faces are flat, so its triangles add up to the box's area, 6, to float32 rounding.
    expect(rawArea(m, 0)).toBeCloseTo(6, 5);
    // Triangles inscribed in the sphere: less than 4π·0.5², by the coarse mesh's chord error.
    expect(rawArea(m, 1)).toBeLessThan(Math.PI);
    expect(rawArea(m, 1)).toBeGreaterThan(0.9 * Math.PI);
  });
  it("a single block reads as before: one unnamed group, whatever its header says", () => {
    const m = readStl(stlBlocks([{ header: "solid electrode", tris: tris(3, 0) }]), "one.stl");
    expect(m.groupNames).toEqual([""]);
    expect(m.warnings).toEqual([]);
  });
});

describe("readStl ASCII", () => {
  it("reads several named solids as groups, ignoring facet normals (even nan)", () => {
    const m = readStl(fixtureBytes("two_solids.stl"), "two.stl");
    expect(m.groupNames).toEqual(["anode", "cathode plate"]);
    expect(Array.from(m.group)).toEqual([0, 0, 0, 0, 1, 1]);
    expect(rawArea(m, 0)).toBeCloseTo(UNIT_TET_AREA, 12);
    expect(rawArea(m, 1)).toBeCloseTo(4, 12);
    expect(m.warnings).toEqual([]);
  });
  it("tolerates CRLF, tabs, upper case, a missing name and warns about trailing text", () => {
    const m = readStl(fixtureBytes("tetra_quirks.stl"), "q.stl");
    expect(m.groupNames).toEqual([""]);
    expect(m.triangles.length).toBe(12);
    expect(rawArea(m)).toBeCloseTo(UNIT_TET_AREA, 12);
    expect(m.warnings).toHaveLength(1);
    expect(m.warnings[0]).toMatch(/^line 32: text after the last "endsolid" ignored/);
  });
  it("names the line of a malformed vertex", () => {
    const t = "solid a\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 x 0\nvertex 0 1 0\nendloop\nendfacet\nendsolid\n";
    expect(() => readStl(enc(t), "bad.stl")).toThrowError(/bad\.stl: line 5: vertex y coordinate "x" is not a finite number/);
    const inf = t.replace("1 x 0", "1 inf 0");
    expect(() => readStl(enc(inf), "bad.stl")).toThrowError(/line 5: .*"inf" is not a finite number/);
  });
  it("names the line of a missing keyword", () => {
    const t = "solid a\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nvertex 0 1 0\nendfacet\nendsolid\n";
    expect(() => readStl(enc(t), "bad.stl")).toThrowError(/line 7: expected "endloop", found "endfacet"/);
  });
  it("warns when the file ends without endsolid", () => {
    const t = "solid a\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nvertex 0 1 0\nendloop\nendfacet\n";
    const m = readStl(enc(t), "open.stl");
    expect(m.triangles.length).toBe(3);
    expect(m.warnings[0]).toMatch(/without "endsolid"/);
  });
});

describe("readDecimal", () => {
  // Reference: ECMAScript Number() conversion, which the language specifies as correctly rounded.
  it("agrees exactly with Number() on random decimal spellings", () => {
    const digits = fc.string({ unit: fc.constantFrom(..."0123456789"), minLength: 1, maxLength: 20 });
    fc.assert(fc.property(fc.constantFrom("", "-", "+"), digits, fc.option(digits), fc.option(fc.integer({ min: -330, max: 330 })),
      (sign, int, frac, exp) => {
        const s = `${sign}${int}${frac !== null ? "." + frac : ""}${exp !== null ? "e" + exp : ""}`;
        const b = enc(s + " ");
        expect(Object.is(readDecimal(b, 0, b.length), Number(s))).toBe(true);
      }), { numRuns: 3000, seed: 42 });
  });
  it("agrees with Number() on shortest spellings of random doubles", () => {
    fc.assert(fc.property(fc.double({ noNaN: true, noDefaultInfinity: true }), (x) => {
      const s = String(x);
      const b = enc(s);
      expect(Object.is(readDecimal(b, 0, b.length), Number(s))).toBe(true);
    }), { numRuns: 3000, seed: 7 });
  });
  it("returns NaN for garbage", () => {
    for (const s of ["x", "1.2.3", "0x10", "--1", "1e", ".", "1,5"]) {
      const b = enc(s);
      expect(readDecimal(b, 0, b.length)).toBeNaN();
    }
  });
});

describe("formatCoordinate", () => {
  // Reference: ECMA-262 Number.prototype.toPrecision (exactly rounded); we only drop trailing zeros.
  it("prints the 15-significant-digit rounding, as short as possible", () => {
    fc.assert(fc.property(fc.double({ noNaN: true, noDefaultInfinity: true }), (x) => {
      const s = formatCoordinate(x);
      expect(Number(s)).toBe(Number(x.toPrecision(15)));
      expect(s).not.toMatch(/\.\d*0(e|$)|\.(e|$)/);
    }), { numRuns: 5000, seed: 5 });
    expect(formatCoordinate(64.99900000000001)).toBe("64.999");
    expect(formatCoordinate(-0)).toBe("0");
  });
});

describe("STL writers", () => {
  const mesh = {
    positions: new Float64Array([0, 0, 0, 1e-3, 0, 0, 0, 1e-3, 0, 0, 0, 1e-3]),
    triangles: new Uint32Array([0, 2, 1, 0, 1, 3, 0, 3, 2, 1, 2, 3]),
    conductor: new Uint32Array([0, 0, 1, 1]),
    names: ["left", "right"],
  };
  it("binary: header names sigmesh and the unit, never starts with solid, size rule holds", () => {
    const b = writeStlBinary(mesh, 1e-3);
    expect(b.length).toBe(84 + 50 * 4);
    const header = new TextDecoder().decode(b.subarray(0, 80));
    expect(header.startsWith("solid")).toBe(false);
    expect(header).toMatch(/sigmesh.*unit mm/);
    const back = readStl(b, "w.stl");
    expect(rawArea(back)).toBeCloseTo(UNIT_TET_AREA, 6);
  });
  it("ASCII: one solid per conductor, names kept, coordinates in the unit", () => {
    const t = writeStlAscii(mesh, 1e-3);
    expect(t.match(/^solid /gm)).toHaveLength(2);
    const back = readStl(enc(t), "w.stl");
    expect(back.groupNames).toEqual(["left", "right"]);
    expect(rawArea(back)).toBeCloseTo(UNIT_TET_AREA, 12);
  });
});
