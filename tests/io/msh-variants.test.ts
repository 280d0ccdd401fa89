import { describe, it, expect } from "vitest";
import { readMsh } from "../../src/io/msh.js";
import { InputError } from "../../src/errors.js";
import { fixtureBytes, rawArea, UNIT_TET_AREA } from "./helpers.js";
import { msh41Binary, msh22Binary, msh40Ascii, ByteWriter } from "./msh-fixtures.js";

// Binary and legacy variants of the same two-tetrahedron model must read exactly like the
// ASCII fixtures (Gmsh reference manual, "MSH file format"; layouts of tests/io/msh-fixtures.ts).
const names = (m: ReturnType<typeof readMsh>) => [...new Set(m.group)].map((g) => m.groupNames[g]);
const err = (f: () => unknown): InputError => {
  try { f(); } catch (e) { if (e instanceof InputError) return e; throw e; }
  throw new Error("expected an InputError");
};
/** Triangles as coordinate triples, so meshes with different node numbering compare equal. */
const soup = (m: ReturnType<typeof readMsh>) => Array.from(m.triangles, (v) => Array.from(m.positions.subarray(3 * v, 3 * v + 3)).join(","));

function sameModel(m: ReturnType<typeof readMsh>): void {
  expect(names(m)).toEqual(["anode", "cathode"]);
  expect(m.triangles.length).toBe(24);
  expect(rawArea(m, m.groupNames.indexOf("anode"))).toBeCloseTo(UNIT_TET_AREA, 14);
  expect(rawArea(m, m.groupNames.indexOf("cathode"))).toBeCloseTo(UNIT_TET_AREA, 14);
  expect(m.warnings).toEqual([]);
}

describe("binary MSH", () => {
  const ascii41 = soup(readMsh(fixtureBytes("two_tets_41.msh"), "a.msh"));
  for (const little of [true, false]) {
    for (const sizeT of [8, 4] as const) {
      it(`4.1, ${little ? "little" : "big"}-endian, size_t of ${sizeT} bytes`, () => {
        const m = readMsh(msh41Binary(little, sizeT), "b.msh");
        sameModel(m);
        expect(soup(m)).toEqual(ascii41);
      });
    }
    it(`2.2, ${little ? "little" : "big"}-endian`, () => {
      const m = readMsh(msh22Binary(little), "b.msh");
      sameModel(m);
      expect(soup(m)).toEqual(soup(readMsh(fixtureBytes("two_tets_22.msh"), "a.msh")));
    });
  }
  it("a wrong byte-order int, data size or truncation names the byte offset", () => {
    const b = msh41Binary();
    const one = new TextEncoder().encode("$MeshFormat\n4.1 1 8\n").length;
    const bad = b.slice(); bad[one] = 7;
    expect(err(() => readMsh(bad, "x.msh")).place).toBe(`byte ${one}`);
    const ds = new TextDecoder("latin1").decode(b).replace("4.1 1 8", "4.1 1 2");
    expect(err(() => readMsh(Uint8Array.from(ds, (c) => c.charCodeAt(0)), "x.msh")).fault).toMatch(/data size 2 not supported/);
    for (const cut of [b.length - 20, b.length - 100, Math.floor(b.length / 2), one + 10]) {
      const e = err(() => readMsh(b.subarray(0, cut), "x.msh"));
      expect(e.place).toMatch(/^byte \d+$/);
      expect(Number(e.place!.slice(5))).toBeLessThanOrEqual(cut);
    }
  });
  it("a count larger than the file is refused before anything is allocated", () => {
    const w = new ByteWriter(true, 8);
    w.text("$MeshFormat\n4.1 1 8\n").i32(1).text("\n$EndMeshFormat\n$Nodes\n").sz(1).sz(1e12).sz(1).sz(1e12);
    w.i32(2).i32(1).i32(0).sz(1e12);
    expect(err(() => readMsh(w.bytes(), "x.msh")).message).toMatch(/x\.msh: byte \d+: number of nodes in block 1000000000000 is more than the file can hold/);
  });
  it("an element type of unknown size stops the binary reader with its offset", () => {
    const b = new TextDecoder("latin1").decode(msh22Binary());
    const at = b.indexOf("$Elements\n10\n") + "$Elements\n10\n".length;
    const bytes = Uint8Array.from(b, (c) => c.charCodeAt(0));
    new DataView(bytes.buffer).setInt32(at, 77, true);
    const e = err(() => readMsh(bytes, "x.msh"));
    expect(e.place).toBe(`byte ${at}`);
    expect(e.fault).toMatch(/element type 77 unknown/);
  });
  it("MSH 1 is refused naming its version", () => {
    expect(err(() => readMsh("$NOD\n3\n1 0 0 0\n", "x.msh")).message).toBe('x.msh: line 1: MSH version 1 ("$NOD") not supported; re-export as MSH 4.1 or 2.2 (Gmsh: File > Export)');
  });
  it("binary 4.0 is refused with what to do", () => {
    expect(err(() => readMsh("$MeshFormat\n4 1 8\n", "x.msh")).fault).toMatch(/binary MSH 4\.0 not supported; re-export as MSH 4\.1/);
  });
});

describe("ASCII MSH 4.0", () => {
  it("reads the same model as 4.1", () => {
    const m = readMsh(msh40Ascii(), "c.msh");
    sameModel(m);
    expect(soup(m)).toEqual(soup(readMsh(fixtureBytes("two_tets_41.msh"), "a.msh")));
  });
});

describe("element types", () => {
  const head = "$MeshFormat\n4.1 0 8\n$EndMeshFormat\n";
  it("6-node triangles give their 3 corners, with one warning counting them", () => {
    // Corner nodes 1-3 of a right triangle of legs 2; nodes 4-6 are mid-side (bent off the plane).
    const nodes = [[0, 0, 0], [2, 0, 0], [0, 2, 0], [1, 0, 0.3], [1, 1, 0.3], [0, 1, 0.3], [2, 2, 0]];
    const s = head + `$Nodes\n1 7 1 7\n2 1 0 7\n${nodes.map((_, k) => k + 1).join("\n")}\n${nodes.map((x) => x.join(" ")).join("\n")}\n$EndNodes\n`
      + "$Elements\n1 2 1 2\n2 1 9 2\n1 1 2 3 4 5 6\n2 2 7 3 5 5 5\n$EndElements\n";
    const m = readMsh(s, "q.msh");
    expect(Array.from(m.triangles)).toEqual([0, 1, 2, 1, 6, 2]);
    expect(rawArea(m)).toBeCloseTo(4, 14);
    expect(m.warnings).toEqual(["2 higher-order triangle(s): corner nodes used, mid-side and interior nodes dropped (curved edges become straight)"]);
    // The same in 2.2, where a 6-node triangle line holds tags then 6 nodes.
    const s22 = "$MeshFormat\n2.2 0 8\n$EndMeshFormat\n$Nodes\n7\n" + nodes.map((x, k) => `${k + 1} ${x.join(" ")}`).join("\n")
      + "\n$EndNodes\n$Elements\n1\n1 9 2 5 1 1 2 3 4 5 6\n$EndElements\n";
    const m22 = readMsh(s22, "q.msh");
    expect(m22.groupNames).toEqual(["physical_5"]);
    expect(rawArea(m22)).toBeCloseTo(2, 14);
  });
  it("a 6-node triangle with fewer nodes is an error naming its line", () => {
    const s = head + "$Nodes\n1 3 1 3\n2 1 0 3\n1\n2\n3\n0 0 0\n1 0 0\n0 1 0\n$EndNodes\n$Elements\n1 1 1 1\n2 1 9 1\n1 1 2 3\n$EndElements\n";
    expect(err(() => readMsh(s, "q.msh")).message).toBe("q.msh: line 17: element of type 9 needs 6 node tags, found 3");
  });
  it("quadrangles split along the shorter diagonal, keeping their orientation", () => {
    // Quad 1-2-3-4 = (0,0) (3,0) (4,1) (0,1): diagonal 1-3 is √17, 2-4 is √10, so the cut runs 2-4.
    // Quad 2-5-6-3 = (3,0) (6,0) (6,1) (4,1): diagonal 2-6 is √10, 5-3 is √5, so the cut runs 5-3.
    const nodes = [[0, 0, 0], [3, 0, 0], [4, 1, 0], [0, 1, 0], [6, 0, 0], [6, 1, 0]];
    const s = head + `$Nodes\n1 6 1 6\n2 1 0 6\n${nodes.map((_, k) => k + 1).join("\n")}\n${nodes.map((x) => x.join(" ")).join("\n")}\n$EndNodes\n`
      + "$Elements\n1 2 1 2\n2 1 3 2\n1 1 2 3 4\n2 2 5 6 3\n$EndElements\n";
    const m = readMsh(s, "q.msh");
    expect(Array.from(m.triangles)).toEqual([0, 1, 3, 1, 2, 3, 1, 4, 2, 4, 5, 2]);
    // Trapezoids of parallel sides 3 and 4, then 3 and 2, height 1.
    expect(rawArea(m)).toBeCloseTo(3.5 + 2.5, 14);
    // Every triangle keeps the quad's +z normal.
    for (let t = 0; t < 4; t++) {
      const [a, b, c] = [0, 1, 2].map((j) => m.triangles[3 * t + j]);
      const ux = m.positions[3 * b] - m.positions[3 * a], uy = m.positions[3 * b + 1] - m.positions[3 * a + 1];
      const vx = m.positions[3 * c] - m.positions[3 * a], vy = m.positions[3 * c + 1] - m.positions[3 * a + 1];
      expect(ux * vy - uy * vx).toBeGreaterThan(0);
    }
    expect(m.warnings).toEqual(["2 quadrangle(s) split into 2 triangles each along the shorter diagonal"]);
  });
  it("points, lines and volume elements are skipped without a warning when surfaces are present", () => {
    const nodes = [[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1]];
    const s = head + `$Nodes\n1 4 1 4\n3 1 0 4\n1\n2\n3\n4\n${nodes.map((x) => x.join(" ")).join("\n")}\n$EndNodes\n`
      + "$Elements\n4 5 1 5\n0 1 15 1\n1 1\n1 1 1 1\n2 1 2\n3 1 4 1\n3 1 2 3 4\n2 1 2 2\n4 1 3 2\n5 1 2 4\n$EndElements\n";
    const m = readMsh(s, "q.msh");
    expect(m.triangles.length).toBe(6);
    expect(m.warnings).toEqual([]);
    const only = readMsh(s.replace("4 5 1 5", "3 3 1 3").replace(/2 1 2 2\n4 1 3 2\n5 1 2 4\n/, ""), "q.msh");
    expect(only.warnings[0]).toBe("no surface elements (triangles or quadrangles) in the file; skipped: 1 point element(s), 1 line element(s), 1 volume element(s)");
  });
  it("binary files carry quadrangles and second-order triangles too", () => {
    const w = new ByteWriter(true, 8);
    const nodes = [[0, 0, 0], [3, 0, 0], [4, 1, 0], [0, 1, 0], [1.5, 0, 0], [2, 0.5, 0], [0, 0.5, 0]];
    w.text("$MeshFormat\n4.1 1 8\n").i32(1).text("\n$EndMeshFormat\n$Nodes\n").sz(1).sz(7).sz(1).sz(7);
    w.i32(2).i32(1).i32(0).sz(7);
    for (let k = 1; k <= 7; k++) w.sz(k);
    for (const x of nodes) for (const c of x) w.f64(c);
    w.text("\n$EndNodes\n$Elements\n").sz(2).sz(2).sz(1).sz(2);
    w.i32(2).i32(1).i32(3).sz(1).sz(1).sz(1).sz(2).sz(3).sz(4);
    w.i32(2).i32(1).i32(9).sz(1).sz(2).sz(1).sz(2).sz(4).sz(5).sz(6).sz(7);
    w.text("\n$EndElements\n");
    const m = readMsh(w.bytes(), "q.msh");
    // Triangles come first (the 6-node one's corners 1, 2, 4), then the quad cut along 2-4.
    expect(Array.from(m.triangles)).toEqual([0, 1, 3, 0, 1, 3, 1, 2, 3]);
    expect(m.warnings).toHaveLength(2);
  });
});

describe("format sniffing", () => {
  it("a binary MSH without the .msh extension is still MSH", async () => {
    const { detectFormat } = await import("../../src/io/format.js");
    expect(detectFormat("mesh.dat", msh41Binary())).toBe("msh");
    expect(detectFormat("mesh", msh22Binary(false))).toBe("msh");
  });
});

describe("binary MSH details", () => {
  it("UTF-8 physical names and parametric nodes (u, v after x, y, z on a surface)", () => {
    const w = new ByteWriter(true, 8);
    w.text('$MeshFormat\n4.1 1 8\n').i32(1).text('\n$EndMeshFormat\n$PhysicalNames\n1\n2 7 "électrode <HV> 1"\n$EndPhysicalNames\n');
    w.text("$Entities\n").sz(0).sz(0).sz(1).sz(0).i32(4);
    for (const b of [0, 0, 0, 1, 1, 0]) w.f64(b);
    w.sz(1).i32(7).sz(0).text("\n$EndEntities\n$Nodes\n").sz(1).sz(3).sz(1).sz(3);
    w.i32(2).i32(4).i32(1).sz(3).sz(1).sz(2).sz(3);
    for (const [x, y] of [[0, 0], [1, 0], [0, 1]]) w.f64(x).f64(y).f64(0).f64(99).f64(-99);
    w.text("\n$EndNodes\n$NodeData\n").i32(12345).text("\n$EndNodeData\n$Elements\n").sz(1).sz(1).sz(1).sz(1);
    w.i32(2).i32(4).i32(2).sz(1).sz(1).sz(1).sz(2).sz(3).text("\n$EndElements\n");
    const m = readMsh(w.bytes(), "p.msh");
    expect(m.groupNames).toEqual(["électrode <HV> 1"]);
    expect(Array.from(m.positions)).toEqual([0, 0, 0, 1, 0, 0, 0, 1, 0]);
  });
});
