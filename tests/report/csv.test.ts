/**
 * CSV and Markdown tables. Quoting rules checked here are RFC 4180, section 2 (fields with
 * commas, quotes or line breaks in double quotes, inner quotes doubled, CRLF records).
 */
import { describe, it, expect, afterAll } from "vitest";
import fc from "fast-check";
import { csvField, csvSafeText, csvText, parseCsv, csvReport, csvTables, markdownReport, markdownText, reportData, type ReportData } from "../../src/report/csv.js";
import { sphereMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes, type SurfaceMesh } from "../../src/mesh/model.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { extractionReport } from "../../src/report/json.js";
import { closeSharedPool } from "../../src/linalg/pool.js";
import { InputError } from "../../src/errors.js";

afterAll(() => closeSharedPool());

function shifted(m: SurfaceMesh, dx: number, name: string): SurfaceMesh {
  const p = m.positions.slice();
  for (let i = 0; i < p.length; i += 3) p[i] += dx;
  return { ...m, positions: p, names: [name] };
}

describe("RFC 4180 fields", () => {
  it("quotes fields with commas, quotes and line breaks, and only those", () => {
    expect(csvField("plain")).toBe("plain");
    expect(csvField("a,b")).toBe('"a,b"');
    expect(csvField('say "hi"')).toBe('"say ""hi"""');
    expect(csvField("two\nlines")).toBe('"two\nlines"');
    expect(csvField(1.5e-12)).toBe("1.5e-12");
    expect(csvField(null)).toBe("");
    expect(csvField(NaN)).toBe("");
    expect(csvText([["a", "b"], ["c"]])).toBe("a,b\r\nc,\r\n");
  });
  it("parses what it writes, for any strings", () => {
    fc.assert(fc.property(fc.array(fc.array(fc.string({ unit: "binary" }), { minLength: 1, maxLength: 5 }), { minLength: 1, maxLength: 6 }), (recs) => {
      const width = Math.max(...recs.map((r) => r.length));
      const padded = recs.map((r) => [...r, ...Array(width - r.length).fill("")]);
      // a record of one empty field is written as an empty line; RFC 4180 leaves that case open
      if (width === 1 && padded.some((r) => r[0] === "")) return true;
      // text a spreadsheet would run as a formula reads back with its neutralising apostrophe
      expect(parseCsv(csvText(recs))).toEqual(padded.map((r) => r.map(csvSafeText)));
      return true;
    }), { seed: 4180, numRuns: 300 });
  });
  it("writes net names a spreadsheet would take for formulas as text (CWE-1236), numbers as numbers", () => {
    expect(csvField("+3V3")).toBe("'+3V3");
    expect(csvField("-12V")).toBe("'-12V");
    expect(csvField("=HYPERLINK(\"x\")")).toBe("\"'=HYPERLINK(\"\"x\"\")\"");
    expect(csvField("@sum")).toBe("'@sum");
    expect(csvField("\tpad")).toBe("'\tpad");
    expect(csvField("VCC-12")).toBe("VCC-12");
    // numbers, also as text (the merged sweep table passes cells through as text), stay numbers
    expect(csvField(-1.5e-13)).toBe("-1.5e-13");
    expect(csvField("-1.5e-13")).toBe("-1.5e-13");
    expect(csvField("+2")).toBe("+2");
    expect(csvSafeText(csvSafeText("+3V3"))).toBe("'+3V3");
    const text = csvText([["name", "charge (C)"], ["+3V3", -1e-12], ["-12V", 2e-12]]);
    expect(parseCsv(text).map((r) => r[0])).toEqual(["name", "'+3V3", "'-12V"]);
    expect(parseCsv(text).map((r) => r[1])).toEqual(["charge (C)", "-1e-12", "2e-12"]);
  });
  it("names the line of malformed quoting", () => {
    expect(() => parseCsv('a,"b\nc')).toThrow(/line 1: quoted field is not closed/);
    expect(() => parseCsv('a\n"b"x,c')).toThrow(/line 2: text after a closing quote/);
  });
});

describe("report tables", async () => {
  const mesh = concatMeshes([shifted(sphereMesh({ radius: 1e-3, level: 1 }), -2e-3, 'pad "A", left'), shifted(sphereMesh({ radius: 1e-3, level: 1 }), 2e-3, "guard|<b>")]);
  const result = await extractMesh(mesh, { potentials: [5, 0], refine: 1 });
  const json = JSON.parse(JSON.stringify(extractionReport(result, { version: "test", files: ["x.stl"], unit: "mm", inputWarnings: ["a warning, with a comma"] })));
  const data = reportData(json);

  it("writes every number of the report so that it reads back exactly", () => {
    const recs = parseCsv(csvReport(data));
    const width = recs[0].length;
    for (const r of recs) expect(r.length).toBe(width);
    const at = (title: string): number => recs.findIndex((r) => r[0].startsWith(`# ${title}`));
    const c0 = at("conductors");
    expect(recs[c0 + 1].slice(0, 3)).toEqual(["name", "potential (V)", "charge (C)"]);
    for (let i = 0; i < 2; i++) {
      const row = recs[c0 + 2 + i];
      const c = json.conductors[i];
      expect(row[0]).toBe(c.name);
      expect(Number(row[1])).toBe(c.potential);
      expect(Number(row[2])).toBe(c.charge);
      expect(Number(row[3])).toBe(c.peakField);
      expect([Number(row[4]), Number(row[5]), Number(row[6])]).toEqual(c.peakFieldAt);
      expect(Number(row[7])).toBe(c.fieldRatio);
      expect([Number(row[8]), Number(row[9]), Number(row[10])]).toEqual(c.force);
    }
    for (const [title, m] of [["Maxwell matrix", json.capacitance.maxwell], ["mutual matrix", json.capacitance.mutual]] as const) {
      const h = at(title);
      expect(recs[h + 1].slice(1, 3)).toEqual([json.conductors[0].name, json.conductors[1].name]);
      for (let i = 0; i < 2; i++) for (let j = 0; j < 2; j++) expect(Number(recs[h + 2 + i][1 + j])).toBe(m[i][j]);
    }
    expect(recs[at("Maxwell matrix")][0]).toMatch(/extrapolated/);
    const a = at("accuracy");
    expect(Number(recs[a + 2][0])).toBe(json.accuracy.levels[0].panels);
    expect(Number(recs[a + 2][1])).toBe(json.accuracy.levels[0].maxwell[0][0]);
  });

  it("separate tables have the SI unit in every numeric header", () => {
    const t = csvTables(data);
    for (const h of t.conductors[0].slice(1, 11)) expect(String(h)).toMatch(/\((V|C|V\/m|m|N)\)|ratio/);
    expect(String(t.maxwell[0][0])).toMatch(/\(F\)/);
  });

  it("Markdown review page: tables with prefixes, escaped names, field check and cautions", () => {
    const md = markdownReport(data, { title: "Review" });
    expect(md).toContain("# Review");
    expect(md).toContain("guard\\|\\<b\\>");
    expect(md).not.toContain("<b>");
    // every table row has the same number of unescaped cell bounds as its header
    const lines = md.split("\n");
    for (let i = 0; i < lines.length; i++) {
      if (!lines[i].startsWith("| ")) continue;
      const cells = (s: string): number => s.replace(/\\\|/g, "").split("|").length;
      let h = i;
      while (h > 0 && lines[h - 1].startsWith("| ")) h--;
      expect(cells(lines[i])).toBe(cells(lines[h]));
    }
    // a 1 mm sphere is about 4πε0·1 mm ≈ 111 fF: the femto prefix
    const c00 = json.capacitance.maxwell[0][0] * 1e15;
    expect(c00).toBeGreaterThan(100);
    // No refinement, no estimate: three digits, as the terminal summary prints it.
    expect(md).toContain(`${c00.toPrecision(3)} fF`);
    expect(md).toMatch(/## Field check/);
    expect(md).toMatch(/× below/);
    expect(md).toContain(markdownText(json.fieldCheck.cautions[0]));
    expect(md).toMatch(/Estimated error: ±/);
    expect(md).toContain("a warning, with a comma");
  });

  it("Markdown shows control, line-break and bidirectional characters in names as visible escapes", () => {
    expect(markdownText("pad\x1b]0;t\x07\n| forged |\u202e")).toBe("pad\\\\x1b\\]0;t\\\\x07\\\\x0a\\| forged \\|\\\\u202e");
    expect(markdownText("Düse 电极")).toBe("Düse 电极");
    const hostile = { ...data, conductors: data.conductors.map((c, i) => (i === 0 ? { ...c, name: "a\x9b2J\r\nb\u2067" } : c)) };
    const md = markdownReport(hostile);
    expect(/[\0-\x09\x0b-\x1f\x7f-\x9f\p{Cf}]/u.test(md)).toBe(false);
    expect(md).toContain("| a\\\\x9b2J\\\\x0d\\\\x0ab\\\\u2067 |");
  });

  it("rejects a report missing what the tables need, naming the key path", () => {
    const bad = JSON.parse(JSON.stringify(json)) as Record<string, any>;
    bad.conductors[1].charge = "x";
    expect(() => reportData(bad, "old.json")).toThrow(InputError);
    expect(() => reportData(bad, "old.json")).toThrow("old.json: conductors[1].charge: expected a number");
    const bad2 = JSON.parse(JSON.stringify(json)) as Record<string, any>;
    bad2.capacitance.mutual[0] = [1];
    expect(() => reportData(bad2)).toThrow("capacitance.mutual[0]: expected a row of 2 numbers");
    expect(() => reportData([])).toThrow(/top level/);
    const minimal: ReportData = { conductors: [{ name: "a", potential: 1, charge: 1e-12, peakField: null, peakFieldAt: [null, null, null], fieldRatio: null, force: [0, 0, 0] }], capacitance: { maxwell: [[1e-12]], mutual: [[1e-12]] } };
    expect(markdownReport(reportData(minimal))).toMatch(/Not estimated/);
    expect(parseCsv(csvReport(minimal))[2][3]).toBe("");
  });
});
