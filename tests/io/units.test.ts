import { describe, it, expect } from "vitest";
import { readFileSync } from "node:fs";
import { parseUnit, metresPer, UNIT_SPELLINGS } from "../../src/io/units.js";
import { parseScene } from "../../src/io/scene.js";
import { InputError } from "../../src/errors.js";

// Exact factors: 1 in = 25.4 mm (international inch, 1959); 1 mil = 1 thou = 0.001 in.
describe("parseUnit", () => {
  const spellings: Array<[string, number]> = [
    ["mm", 1e-3], ["MM", 1e-3], ["millimeter", 1e-3], ["Millimeters", 1e-3], ["millimetre", 1e-3], ["MILLIMETRES", 1e-3],
    ["um", 1e-6], ["µm", 1e-6], ["μm", 1e-6], ["µM", 1e-6], ["micron", 1e-6], ["Microns", 1e-6], ["micrometre", 1e-6],
    ["m", 1], ["M", 1], ["meter", 1], ["meters", 1], ["metre", 1], ["Metres", 1],
    ["cm", 1e-2], ["centimetre", 1e-2], ["centimeters", 1e-2],
    ["in", 25.4e-3], ["IN", 25.4e-3], ["inch", 25.4e-3], ["Inches", 25.4e-3],
    ["mil", 25.4e-6], ["mils", 25.4e-6], ["thou", 25.4e-6], [" mm ", 1e-3],
  ];
  for (const [s, f] of spellings) it(`"${s}"`, () => expect(metresPer(parseUnit(s))).toBe(f));
  it("a wrong one names the allowed set and where it came from", () => {
    for (const bad of ["furlong", "mmm", "", "milimeter", "inchs", "u m"]) {
      let e: unknown;
      try { parseUnit(bad, "--unit"); } catch (x) { e = x; }
      expect(e).toBeInstanceOf(InputError);
      expect((e as InputError).message).toMatch(/^--unit: unknown length unit ".*" \(use m, cm, mm, um \(µm, micron\), in \(inch\), mil \(thou\)/);
    }
  });
});

describe("scene unit", () => {
  const scene = (unit: unknown) => JSON.stringify({ unit, conductors: [{ name: "s", shape: { sphere: { radius: 1 } } }] });
  it("takes the same spellings", () => {
    expect(parseScene(scene("Millimetres"), "s.json").unit).toBe("mm");
    expect(parseScene(scene("µm"), "s.json").unit).toBe("um");
    expect(parseScene(scene("INCH"), "s.json").unit).toBe("in");
    expect(parseScene(scene("thou"), "s.json").unit).toBe("mil");
  });
  it("refuses a wrong one naming the key and the allowed set", () => {
    let e: unknown;
    try { parseScene(scene("parsec"), "s.json"); } catch (x) { e = x; }
    expect(e).toBeInstanceOf(InputError);
    expect((e as InputError).message).toMatch(/s\.json.*unit.*unknown length unit "parsec" \(use m, cm, mm/);
  });
});

describe("the scene schema's units", () => {
  it("lists exactly the spellings the reader accepts, and each one parses", () => {
    const schema = JSON.parse(readFileSync(new URL("../../schema/scene.schema.json", import.meta.url), "utf8"));
    const listed: string[] = schema.properties.unit.enum;
    const accepted = Object.values(UNIT_SPELLINGS).flat();
    expect([...listed].sort()).toEqual([...accepted].sort());
    for (const name of listed) expect(() => parseUnit(name)).not.toThrow();
    expect(listed).toContain("millimetre");
  });
});
