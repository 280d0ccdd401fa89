/**
 * writeOutputs: a result's files as one set — every target written with the content the
 * builders give, a target "-" returned to the caller instead of written, and targets that
 * cannot all be written refused before anything is touched.
 */
import { describe, it, expect, afterAll, beforeAll } from "vitest";
import { mkdtempSync, writeFileSync, readFileSync, readdirSync, rmSync, existsSync } from "node:fs";
import { join } from "node:path";
import { tmpdir } from "node:os";
import { loadScene } from "../../src/io/inputs.js";
import { InputError } from "../../src/errors.js";
import { extract, type SceneExtraction } from "../../src/extract/extract.js";
import { writeOutputs, checkOutputTargets, extractionFiles } from "../../src/report/outputs.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

const dir = mkdtempSync(join(tmpdir(), "sigmesh-outputs-"));
let result: SceneExtraction;

beforeAll(async () => {
  const scene = join(dir, "pair.json");
  writeFileSync(scene, JSON.stringify({
    unit: "mm",
    conductors: [
      { name: "left", shape: { sphere: { radius: 1, level: 2, center: [-2, 0, 0] } }, potential: 1 },
      { name: "right", shape: { sphere: { radius: 1, level: 2, center: [2, 0, 0] } }, potential: 0 },
    ],
    probes: [{ name: "axis", line: { from: [-0.5, 0, 0], to: [0.5, 0, 0], points: 5 } }],
  }));
  result = await extract(loadScene(scene));
});
afterAll(async () => { rmSync(dir, { recursive: true, force: true }); await closeSharedPool(); });

describe("writeOutputs", () => {
  it("writes every target of the set and returns their paths", () => {
    const out = join(dir, "set");
    const targets = {
      json: join(out, "r.json"), html: join(out, "r.html"), spice: join(out, "r.cir"), csv: join(out, "r.csv"),
      markdown: join(out, "r.md"), probeCsv: join(out, "probes.csv"),
    };
    const { written, piped } = writeOutputs(result, targets);
    expect(piped).toBeUndefined();
    expect([...written].sort()).toEqual([...Object.values(targets), join(out, "probes-axis.svg")].sort());
    const report = JSON.parse(readFileSync(targets.json, "utf8"));
    expect(report.format).toBe("sigmesh-extraction/1");
    expect(report.capacitance.maxwell.flat()).toEqual(Array.from(result.maxwell));
    expect(readFileSync(targets.spice, "utf8")).toMatch(/^\.SUBCKT r left right REF/m);
    // The probe table has a header and one record per point of the line.
    expect(readFileSync(targets.probeCsv, "utf8").trim().split(/\r?\n/).length).toBe(6);
    expect(readdirSync(out).filter((f) => f.endsWith(".tmp"))).toEqual([]);
  });

  it("returns the target - to the caller, and writes the others", () => {
    const out = join(dir, "piped");
    const { written, piped } = writeOutputs(result, { json: "-", spice: join(out, "r.cir") });
    expect(written).toEqual([join(out, "r.cir")]);
    expect(JSON.parse(piped!).conductors.map((c: { name: string }) => c.name)).toEqual(["left", "right"]);
  });

  it("refuses, before writing anything, two outputs to -, one path twice, and a convergence plot without refinement", () => {
    const out = join(dir, "refused");
    const cases: Array<[Parameters<typeof writeOutputs>[1], RegExp]> = [
      [{ json: "-", csv: "-" }, /--json and --csv ask for standard output/],
      [{ json: join(out, "x"), csv: join(out, "x") }, /--json and --csv both name/],
      [{ json: join(out, "a.json"), convergenceSvg: join(out, "c.svg") }, /--convergence-svg needs --refine/],
    ];
    for (const [targets, message] of cases) {
      expect(() => writeOutputs(result, targets)).toThrow(InputError);
      expect(() => writeOutputs(result, targets)).toThrow(message);
    }
    expect(existsSync(out)).toBe(false);
    expect(() => checkOutputTargets({ convergenceSvg: "c.svg" }, 1)).not.toThrow();
  });

  it("gives probe lines whose names differ only in characters a file name cannot hold a plot each", () => {
    const out = join(dir, "plots");
    const line = result.probes[0];
    const twins = { ...result, probes: [{ ...line, spec: { ...line.spec, name: "above pad" } }, { ...line, spec: { ...line.spec, name: "above_pad" } }] };
    const { written } = writeOutputs(twins, { probeCsv: join(out, "p.csv") });
    expect(written.map((p) => p.slice(out.length + 1)).sort()).toEqual(["p-above_pad-2.svg", "p-above_pad.svg", "p.csv"]);
    expect(readdirSync(out).sort()).toEqual(["p-above_pad-2.svg", "p-above_pad.svg", "p.csv"]);
    // A plot beside the probe table and another output on the same file: refused, nothing written.
    expect(() => writeOutputs(result, { probeCsv: join(dir, "clash", "p.csv"), markdown: join(dir, "clash", "p-axis.svg") }))
      .toThrow(/--markdown and the plot of probe line axis both name/);
    expect(existsSync(join(dir, "clash"))).toBe(false);
  });

  it("builds the same bytes it writes (apart from the report's creation time)", () => {
    const out = join(dir, "same");
    const spice = join(out, "r.cir"), csv = join(out, "r.csv");
    writeOutputs(result, { spice, csv });
    const built = extractionFiles(result, { spice, csv });
    expect(built.map((f) => f.data)).toEqual([readFileSync(spice, "utf8"), readFileSync(csv, "utf8")]);
  });
});
