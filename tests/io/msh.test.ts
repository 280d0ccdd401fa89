import { describe, it, expect } from "vitest";
import { readFileSync } from "node:fs";
import { readMsh } from "../../src/io/msh.js";
import { fixture, fixtureBytes, rawArea, UNIT_TET_AREA } from "./helpers.js";

// Fixtures follow the layouts of the Gmsh reference manual, "MSH file format" (4.1) and
// "Legacy formats" (2.2). Geometry: unit right tetrahedron at the origin, another at x = 3.
const names = (m: ReturnType<typeof readMsh>) => [...new Set(m.group)].map((g) => m.groupNames[g]);

describe("readMsh 4.1", () => {
  it("physical surfaces give the conductors and their names; other element types ignored", () => {
    const m = readMsh(fixtureBytes("two_tets_41.msh"), "t.msh");
    expect(names(m)).toEqual(["anode", "cathode"]);
    expect(m.triangles.length).toBe(24);
    expect(rawArea(m, m.groupNames.indexOf("anode"))).toBeCloseTo(UNIT_TET_AREA, 12);
    expect(rawArea(m, m.groupNames.indexOf("cathode"))).toBeCloseTo(UNIT_TET_AREA, 12);
    expect(m.warnings).toEqual([]);
  });
  it("without physical groups, surface entities sharing nodes form one body named after the lowest tag", () => {
    const m = readMsh(fixtureBytes("two_tets_41_nophys.msh"), "t.msh");
    expect(names(m)).toEqual(["surface_1", "surface_3"]);
    expect(m.warnings[0]).toMatch(/3 surface entities joined into 2 conductor/);
  });
});

describe("readMsh 2.2", () => {
  it("first tag is the physical group; $PhysicalNames of dimension 2 name it", () => {
    const m = readMsh(fixtureBytes("two_tets_22.msh"), "t.msh");
    expect(names(m)).toEqual(["anode", "cathode"]);
    expect(rawArea(m, m.groupNames.indexOf("cathode"))).toBeCloseTo(UNIT_TET_AREA, 12);
  });
  it("unnamed physical groups are physical_N", () => {
    expect(names(readMsh(fixtureBytes("two_tets_22_unnamed.msh"), "t.msh"))).toEqual(["physical_101", "physical_102"]);
  });
  it("physical tag 0 everywhere: elementary entities joined by shared nodes", () => {
    expect(names(readMsh(fixtureBytes("two_tets_22_nophys.msh"), "t.msh"))).toEqual(["surface_1", "surface_3"]);
  });
  it("groupNamed marks the names $PhysicalNames gives, not the made-up ones", () => {
    const named = (f: string) => { const m = readMsh(fixtureBytes(f), "t.msh"); return m.groupNamed; };
    expect(named("two_tets_22.msh")).toEqual([true, true]);
    expect(named("two_tets_41.msh")).toEqual([true, true]);
    expect(named("two_tets_22_unnamed.msh")).toEqual([false, false]);
    expect(named("two_tets_22_nophys.msh")).toEqual([false, false]);
  });
});

describe("readMsh errors", () => {
  const text = readFileSync(fixture("two_tets_22.msh"), "utf8");
  const fails = (s: string) => { try { readMsh(s, "e.msh"); } catch (e) { return (e as Error).message; } throw new Error("no error"); };
  it("binary, unknown version, missing header", () => {
    // Text claiming to be binary: the byte-order int is missing, named by its byte offset.
    expect(fails(text.replace("2.2 0 8", "4.1 1 8"))).toMatch(/^e\.msh: byte 20: binary MSH: expected the int 1 after the format line/);
    expect(fails(text.replace("2.2 0 8", "3.0 0 8"))).toMatch(/line 2: MSH version 3\.0 not supported/);
    expect(fails("hello\n")).toMatch(/line 1: not a Gmsh MSH file/);
  });
  it("unknown node tag, early section end, bad numbers", () => {
    expect(fails(text.replace("10 2 2 102 3 6 7 8", "10 2 2 102 3 6 7 99"))).toBe("e.msh: line 32: element refers to node 99, which $Nodes does not define");
    expect(fails(text.replace("$Nodes\n8", "$Nodes\n9"))).toMatch(/line 20: \$Nodes ends early/);
    expect(fails(text.replace("5 3 0 0", "5 3 zz 0"))).toMatch(/line 16: y coordinate "zz" is not a finite number/);
    expect(fails(text.replace("$Elements\n10", "$Elements\n99999999"))).toMatch(/number of elements 99999999 is more than the file can hold/);
  });
  it("no triangles: a warning counting the other elements", () => {
    const m = readMsh(text.replace(/^\d+ 2 2 .*\n/gm, "").replace("$Elements\n10", "$Elements\n2"), "e.msh");
    expect(m.triangles.length).toBe(0);
    expect(m.warnings[0]).toMatch(/no surface elements .*skipped: 1 point element\(s\), 1 line element\(s\)/);
  });
});
