import { describe, it, expect } from "vitest";
import { readObj, writeObj } from "../../src/io/obj.js";
import { InputError } from "../../src/errors.js";
import { fixtureBytes, rawArea } from "./helpers.js";

/** z-component of each triangle's doubled area vector. */
function normalZ(p: Float64Array, t: Uint32Array, k: number): number {
  const a = 3 * t[3 * k], b = 3 * t[3 * k + 1], c = 3 * t[3 * k + 2];
  return (p[b] - p[a]) * (p[c + 1] - p[a + 1]) - (p[b + 1] - p[a + 1]) * (p[c] - p[a]);
}

describe("readObj", () => {
  it("takes conductors from o when present; g inside an o is part of the same body", () => {
    const m = readObj(fixtureBytes("parts.obj"), "parts.obj");
    const used = [...new Set(m.group)].map((g) => m.groupNames[g]);
    expect(used).toEqual(["box", "lshape"]);
    const box = m.groupNames.indexOf("box"), l = m.groupNames.indexOf("lshape");
    // Unit cube: 6 quads -> 12 triangles, area 6. L-shape: 2x2 square less a 1x1 corner, area 3.
    expect(m.group.filter((g) => g === box).length).toBe(12);
    expect(rawArea(m, box)).toBeCloseTo(6, 12);
    expect(rawArea(m, l)).toBeCloseTo(3, 12);
    expect(m.warnings).toEqual([]);
  });
  it("ear-clips a non-convex polygon: every piece keeps the polygon's orientation", () => {
    const m = readObj(fixtureBytes("parts.obj"), "parts.obj");
    const l = m.groupNames.indexOf("lshape");
    let pieces = 0;
    for (let k = 0; k < m.group.length; k++) {
      if (m.group[k] !== l) continue;
      pieces++;
      // A fan from the first vertex would make one piece turn the other way (negative z).
      expect(normalZ(m.positions, m.triangles, k)).toBeGreaterThan(0);
    }
    expect(pieces).toBe(4);
  });
  it("takes conductors from g without o; continuation lines, CRLF and relative indices", () => {
    const m = readObj(fixtureBytes("groups.obj"), "groups.obj");
    const used = [...new Set(m.group)].map((g) => m.groupNames[g]);
    expect(used).toEqual(["pent", "tri"]);
    expect(m.group.filter((g) => g === m.groupNames.indexOf("pent")).length).toBe(3);
    // Shoelace area of the pentagon (0,0),(1,0),(1.5,1),(0.5,1.5),(-0.5,1): 1/2 |Σ x_i y_{i+1} − x_{i+1} y_i| = ½·(0 + 1 + 1.75 + 1.25 + 0) = 2.
    expect(rawArea(m, m.groupNames.indexOf("pent"))).toBeCloseTo(2, 12);
    expect(rawArea(m, m.groupNames.indexOf("tri"))).toBeCloseTo(0.5, 12);
  });
  it("faces before any name form an unnamed group", () => {
    const m = readObj("v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n", "a.obj");
    expect(m.groupNames[m.group[0]]).toBe("");
  });
  it("errors name the line", () => {
    const bad = (s: string) => { try { readObj(s, "b.obj"); } catch (e) { return e as InputError; } throw new Error("no error"); };
    expect(bad("v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 4\n").message).toBe("b.obj: line 4: face refers to vertex 4 but the file defines 3 vertices");
    expect(bad("v 0 0 0\nv 1 0 0\nf -3 -2 -1\n").message).toMatch(/line 3: relative vertex index -3/);
    expect(bad("v 0 0 0\nf 0 1 1\n").message).toMatch(/line 2: vertex index 0/);
    expect(bad("v 0 nan 0\n").message).toMatch(/line 1: vertex coordinates/);
    expect(bad("v 0 0\n").message).toMatch(/line 1: vertex needs 3 coordinates/);
    expect(bad("v 0 0 0\nf 1 1\n").message).toMatch(/line 2: face needs at least 3/);
    expect(bad("v 0 0 0\nf 1 a 1\n").message).toMatch(/line 2: face vertex "a"/);
    expect(bad("").message).toMatch(/empty file/);
  });
  it("warns once per unknown statement", () => {
    const m = readObj("v 0 0 0\nv 1 0 0\nv 0 1 0\nzz 1\nzz 2\nf 1 2 3\n", "a.obj");
    expect(m.warnings).toEqual(['line 4: unknown statement "zz" ignored (2 times)']);
  });
});

describe("writeObj", () => {
  it("writes o and g per conductor and reads back the same conductors", () => {
    const mesh = {
      positions: new Float64Array([0, 0, 0, 1, 0, 0, 0, 1, 0, 5, 5, 5]),
      triangles: new Uint32Array([0, 1, 2, 1, 2, 3]),
      conductor: new Uint32Array([1, 0]),
      names: ["b", "a"],
    };
    const t = writeObj(mesh, 1e-3);
    expect(t).toMatch(/^o b\ng b\n/m);
    const back = readObj(t, "w.obj");
    expect(back.positions[3]).toBeCloseTo(1000, 12);
    expect([...back.group].map((g) => back.groupNames[g]).sort()).toEqual(["a", "b"]);
  });
});
