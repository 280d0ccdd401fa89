/**
 * Sweeps: step rules, grids, shards, entry lists, and the substitution of parameters checked
 * against a scene written by hand with the same numbers (exactly equal matrices).
 */
import { describe, it, expect, afterAll } from "vitest";
import { mkdtempSync, writeFileSync, rmSync } from "node:fs";
import { join } from "node:path";
import { tmpdir } from "node:os";
import { parseVary, sweepGrid, parseShard, shardPoints, parseEntries, defaultEntries, extractPoint } from "../../src/extract/sweep.js";
import { mergeSweepCsv, sweepCsv } from "../../src/report/sweep-table.js";
import { loadScene } from "../../src/io/inputs.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

const dir = mkdtempSync(join(tmpdir(), "sigmesh-sweep-"));
afterAll(async () => { rmSync(dir, { recursive: true, force: true }); await closeSharedPool(); });

describe("sweep specifications", () => {
  it("step linearly and logarithmically with exact ends, or take a list", () => {
    expect(parseVary("gap=1:5:9").values).toEqual([1, 1.5, 2, 2.5, 3, 3.5, 4, 4.5, 5]);
    const log = parseVary("f=log:1e-3:1e-1:5");
    expect(log.log).toBe(true);
    expect(log.values[0]).toBe(1e-3);
    expect(log.values[4]).toBe(1e-1);
    [1e-3, 10 ** -2.5, 1e-2, 10 ** -1.5, 1e-1].forEach((v, i) => expect(log.values[i] / v - 1).toBeLessThan(1e-14));
    expect(parseVary("x=-1:1:3").values).toEqual([-1, 0, 1]);
    expect(parseVary("gap = 1, 2,5").values).toEqual([1, 2, 5]);
  });

  it("refuse malformed steps with one line naming the option", () => {
    const bad: [string, RegExp][] = [
      ["gap", /^--vary "gap": expected NAME=START:STOP:COUNT/], ["=1:2:3", /no parameter name/], ["gap=1:5", /expected START:STOP:COUNT, got 2 fields/],
      ["gap=1:5:1", /count "1" must be a whole number of at least 2/], ["gap=1:5:2.5", /count "2.5"/], ["gap=a:5:3", /start "a" is not a number/],
      ["gap=log:0:1:3", /positive start and stop/], ["gap=3:3:4", /start and stop are both 3/], ["gap=1,1", /1 is listed twice/], ["gap=", /no values/],
      ["gap=1,,2", /value 2 "" is not a number/], ["2x=1:2:3", /"2x" is not a parameter name/],
    ];
    for (const [text, re] of bad) expect(() => parseVary(text), text).toThrow(re);
  });

  it("make grids with the first parameter slowest, and shards that cover them once", () => {
    const grid = sweepGrid([parseVary("a=1,2"), parseVary("b=10,20,30")]);
    expect(grid).toEqual([{ a: 1, b: 10 }, { a: 1, b: 20 }, { a: 1, b: 30 }, { a: 2, b: 10 }, { a: 2, b: 20 }, { a: 2, b: 30 }]);
    expect(() => sweepGrid([parseVary("a=1,2"), parseVary("a=3")])).toThrow(/"a" is varied twice/);
    expect(shardPoints(7, parseShard("1/3"))).toEqual([1, 4]);
    const all = [0, 1, 2].flatMap((i) => shardPoints(7, parseShard(`${i}/3`))).sort();
    expect(all).toEqual([0, 1, 2, 3, 4, 5, 6]);
    expect(() => parseShard("3/3")).toThrow(/I must be from 0 to 2/);
    expect(() => parseShard("1-3")).toThrow(/expected I\/N/);
  });

  it("read entry lists by conductor names", () => {
    const names = ["pad", "ground", "trace 1"];
    expect(parseEntries("C(pad,pad), Cm(pad, ground),C( trace 1 ,pad)", names)).toEqual([
      { matrix: "C", row: "pad", column: "pad" }, { matrix: "Cm", row: "pad", column: "ground" }, { matrix: "C", row: "trace 1", column: "pad" }]);
    expect(defaultEntries(names).map((e) => `${e.matrix}(${e.row},${e.column})`)).toEqual(["C(pad,pad)", "C(ground,ground)", "C(trace 1,trace 1)", "Cm(pad,ground)", "Cm(pad,trace 1)"]);
    expect(() => parseEntries("C(pad,lid)", names)).toThrow(/"lid", which is not a conductor; the conductors are: pad, ground, trace 1/);
    expect(() => parseEntries("C(pad,pad) Cm(pad,ground)", names)).toThrow(/problem at character 12/);
    expect(() => parseEntries("X(pad,pad)", names)).toThrow(/expected a list like/);
  });
});

describe("sweep points", () => {
  it("equal extractions of the scene written by hand with those values, bit for bit", async () => {
    writeFileSync(join(dir, "p.json"), JSON.stringify({ unit: "mm", parameters: { gap: 2, w: 4, half: "=w/2" }, conductors: [
      { name: "pad", shape: { box: { size: ["=w", "=w", 0.5], divisions: 2 } }, potential: 1 },
      { name: "lid", shape: { plate: { size: ["=2*half", "=w"], divisions: 3 } }, place: { rotate: { axis: [0, 0, 1], degrees: "=15*gap" }, translate: [0, 0, "=gap + 0.25"] } }] }));
    for (const gap of [1, 3.5]) {
      writeFileSync(join(dir, `h${gap}.json`), JSON.stringify({ unit: "mm", conductors: [
        { name: "pad", shape: { box: { size: [4, 4, 0.5], divisions: 2 } }, potential: 1 },
        { name: "lid", shape: { plate: { size: [4, 4], divisions: 3 } }, place: { rotate: { axis: [0, 0, 1], degrees: 15 * gap }, translate: [0, 0, gap + 0.25] } }] }));
      const swept = await extractPoint(join(dir, "p.json"), { gap });
      const s = loadScene(join(dir, `h${gap}.json`));
      const byHand = await extractMesh(s.mesh, { potentials: s.potentials });
      expect(Array.from(swept.maxwell)).toEqual(Array.from(byHand.maxwell));
      expect(Array.from(swept.mutual)).toEqual(Array.from(byHand.mutual));
    }
    // At gap = -0.25 the lid cuts through the pad: refused like sigmesh extract refuses it, naming the point.
    await expect(extractPoint(join(dir, "p.json"), { gap: -0.25 }, {}, 4)).rejects.toThrow(/^.*p\.json: sweep point 4 \(gap=-0\.25\): \S/);
  });

  it("merge slices' tables, refusing repeats and other sweeps, naming missing points", () => {
    const axes = [parseVary("g=1:2:3")], points = sweepGrid(axes);
    const entries = [{ matrix: "C" as const, row: "a", column: "a" }];
    const res = (k: number) => ({ names: ["a"], maxwell: [k + 0.5e-12], mutual: [k] });
    const table = (idx: number[]) => sweepCsv(axes, entries, 3, idx, points, idx.map(res));
    const whole = table([0, 1, 2]);
    expect(mergeSweepCsv([{ file: "b.csv", text: table([1]) }, { file: "a.csv", text: table([0, 2]) }])).toEqual({ text: whole, total: 3, missing: [] });
    expect(mergeSweepCsv([{ file: "a.csv", text: table([0, 2]) }]).missing).toEqual([1]);
    expect(() => mergeSweepCsv([{ file: "a.csv", text: table([0, 1]) }, { file: "b.csv", text: table([1, 2]) }])).toThrow(/^b\.csv: line 2: point 1 is already in a\.csv, line 3$/);
    const other = sweepCsv([parseVary("h=1:2:3")], entries, 3, [1], points.map((p) => ({ h: p.g })), [res(1)]);
    expect(() => mergeSweepCsv([{ file: "a.csv", text: table([0]) }, { file: "b.csv", text: other }])).toThrow(/b\.csv: line 1: header differs from a\.csv's/);
    expect(() => mergeSweepCsv([{ file: "x.csv", text: "a,b\r\n1,2\r\n" }])).toThrow(/x\.csv: line 1: the first column is "a"/);
  });
});

describe("sweep through the library entry point", () => {
  it("runs a grid with runSweep and tabulates it as the CLI does", async () => {
    const api = await import("../../src/index.js");
    writeFileSync(join(dir, "api.json"), JSON.stringify({ unit: "mm", parameters: { gap: 2 }, conductors: [
      { name: "a", shape: { box: { size: [2, 2, 0.5], divisions: 1 } }, potential: 1 },
      { name: "b", shape: { box: { size: [2, 2, 0.5], divisions: 1 } }, place: { translate: [0, 0, "=gap"] } }] }));
    const axes = [api.parseVary("gap=1,3")], points = api.sweepGrid(axes);
    const results = await api.runSweep(join(dir, "api.json"), points, [0, 1]);
    const single = await api.extractPoint(join(dir, "api.json"), { gap: 3 });
    expect(Array.from(results[1].maxwell)).toEqual(Array.from(single.maxwell));
    // Farther apart, less coupled: |C(a,b)| falls with the gap.
    expect(Math.abs(results[1].maxwell[1])).toBeLessThan(Math.abs(results[0].maxwell[1]));
    const entries = api.parseEntries("C(a,b)", results[0].names);
    const csv = api.sweepCsv(axes, entries, 2, [0, 1], points, results);
    expect(csv.split(/\r?\n/).filter((l) => l.length > 0)).toHaveLength(3);
  });
});
