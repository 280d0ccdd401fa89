// End to end: `node dist/cli/main.js sweep ...` against single `extract --json -` runs of the
// scene written by hand, sharded runs merged against the unsharded table, child processes
// against in-process points, and bad --vary strings refused with one line, exit 2, no table.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, writeFileSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { parseCsv } from "../../src/report/csv.js";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";

function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd: dir });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

const scene = (gap: number | string, w: number | string, params?: Record<string, number>) => JSON.stringify({
  unit: "mm", ...(params ? { parameters: params } : {}), conductors: [
    { name: "pad", shape: { box: { size: [w, w, 0.5], divisions: 2 } }, potential: 1 },
    { name: "lid", shape: { plate: { size: [w, w], divisions: 3 } }, place: { translate: [0, 0, typeof gap === "number" ? gap + 0.25 : `=${gap} + 0.25`] } },
  ] });

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npx tsc -p tsconfig.json` first");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-sweep-cli-"));
  writeFileSync(join(dir, "s.json"), scene("gap", "=w", { gap: 2, w: 4 }));
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

describe("sigmesh sweep", () => {
  it("shows each point's warnings once, with its parameter values, in this process and in child processes", () => {
    for (const processes of ["0", "2"]) {
      // gap 0.1 mm under panels of about 2 mm: a narrow-gap warning at that point only.
      const r = run(["sweep", "s.json", "--vary", "gap=3,0.1", "--csv", `warn${processes}.csv`, "--processes", processes, "--quiet"]);
      expect(r.code, r.err).toBe(0);
      const lines = r.err.split("\n").filter((l) => l.startsWith("sigmesh: warning:"));
      expect(lines.length, r.err).toBeGreaterThan(0);
      for (const l of lines) expect(l).toMatch(/^sigmesh: warning: sweep point 1 \(gap=0\.1\): /);
      expect(lines.some((l) => /conductors pad and lid are only 0\.1000 mm apart/.test(l)), r.err).toBe(true);
      expect(new Set(lines).size).toBe(lines.length);
    }
  });

  it("gives the entries of single extractions of the hand-written scenes, exactly", () => {
    const r = run(["sweep", "s.json", "--vary", "gap=1,2.5", "--entries", "C(pad,pad),Cm(pad,lid),C(lid,pad)", "--csv", "one.csv", "--svg", "one.svg", "--quiet"]);
    // Quiet: nothing but the points' warnings (both gaps are narrower than the coarse panels).
    expect(r.err.split("\n").filter((l) => l !== "" && !l.startsWith("sigmesh: warning: sweep point "))).toEqual([]);
    expect(r.code).toBe(0);
    const rows = parseCsv(readFileSync(join(dir, "one.csv"), "utf8"));
    expect(rows[0]).toEqual(["point (of 2)", "gap", "C(pad,pad) (F)", "Cm(pad,lid) (F)", "C(lid,pad) (F)"]);
    [1, 2.5].forEach((gap, k) => {
      writeFileSync(join(dir, `hand${k}.json`), scene(gap, 4));
      const single = run(["extract", `hand${k}.json`, "--json", "-", "--quiet"]);
      expect(single.code).toBe(0);
      const cap = JSON.parse(single.out).capacitance as { maxwell: number[][]; mutual: number[][] };
      expect(rows[k + 1].map(Number)).toEqual([k, gap, cap.maxwell[0][0], cap.mutual[0][1], cap.maxwell[1][0]]);
    });
    expect(Number(rows[1][3])).toBeGreaterThan(Number(rows[2][3])); // closer lid, larger mutual capacitance
    const svg = readFileSync(join(dir, "one.svg"), "utf8");
    expect(svg).toMatch(/^(<\?xml[^>]*>\s*)?<svg[\s\S]*Cm\(pad,lid\)[\s\S]*<\/svg>\s*$/);
    // The x axis names the parameter and the unit its lengths are in.
    expect(svg).toContain(">gap (scene units; lengths in mm)</text>");
  });

  it("shards merged equal the unsharded table, byte for byte; child processes equal in-process points", () => {
    const grid = ["--vary", "gap=1:3:3", "--vary", "w=3,4", "--quiet"];
    expect(run(["sweep", "s.json", ...grid, "--csv", "all.csv"]).code).toBe(0);
    expect(run(["sweep", "s.json", ...grid, "--csv", "s0.csv", "--shard", "0/2"]).code).toBe(0);
    expect(run(["sweep", "s.json", ...grid, "--csv", "s1.csv", "--shard", "1/2", "--processes", "2"]).code).toBe(0);
    expect(parseCsv(readFileSync(join(dir, "s1.csv"), "utf8")).slice(1).map((r) => r[0])).toEqual(["1", "3", "5"]);
    const m = run(["sweep", "merge", "s1.csv", "s0.csv", "--csv", "merged.csv"]);
    expect(m.code).toBe(0);
    expect(m.err).toMatch(/6 points from 2 files/);
    expect(readFileSync(join(dir, "merged.csv"), "utf8")).toBe(readFileSync(join(dir, "all.csv"), "utf8"));
    const part = run(["sweep", "merge", "s1.csv", "--csv", "part.csv"]);
    expect(part.code).toBe(0);
    expect(part.err).toBe("sigmesh: warning: 3 of 6 points are missing: 0, 2, 4\n");
    const twice = run(["sweep", "merge", "s1.csv", "all.csv", "--csv", "twice.csv"]);
    expect(twice.code).toBe(2);
    expect(twice.err).toBe("sigmesh: error: all.csv: line 3: point 1 is already in s1.csv, line 2\n");
    expect(existsSync(join(dir, "twice.csv"))).toBe(false);
  });

  it("refuses bad --vary strings and unknown parameters with one line, exit 2, and no table", () => {
    const cases: [string[], RegExp][] = [
      [["--vary", "gap=1:5"], /^sigmesh: error: --vary "gap=1:5": expected START:STOP:COUNT, got 2 fields after "="\n$/],
      [["--vary", "gap=log:-1:5:3"], /^sigmesh: error: --vary "gap=log:-1:5:3": logarithmic steps need a positive start and stop\n$/],
      [["--vary", "gap:1:5:3"], /^sigmesh: error: --vary "gap:1:5:3": expected NAME=START/],
      [["--vary", "gapp=1:5:3"], /^sigmesh: error: s\.json: parameters: no parameter "gapp" to vary \(the scene's parameters are gap, w\)\n$/],
      [["--vary", "gap=1,2", "--entries", "C(pad,top)"], /^sigmesh: error: --entries "C\(pad,top\)": C\(pad,top\) names "top", which is not a conductor/],
      [["--vary", "gap=1,2", "--shard", "2/2"], /^sigmesh: error: --shard "2\/2": I must be from 0 to 1/],
      [["--vary", "gap=-0.25,1"], /^sigmesh: error: s\.json: sweep point 0 \(gap=-0\.25\): conductors pad and lid touch/],
    ];
    for (const [args, re] of cases) {
      const r = run(["sweep", "s.json", ...args, "--csv", "bad.csv"]);
      expect(r.code, args.join(" ")).toBe(2);
      expect(r.err.split("\n").filter((l) => l.startsWith("sigmesh: error")).length).toBe(1);
      expect(r.err.replace(/^sigmesh: warning: [^\n]*\n/gm, "").replace(/^sigmesh: sweep of[^\n]*\n|^\r?sigmesh: \d+\/\d+ points[^\n]*\n/gm, "").replace(/(\rsigmesh: \d+\/\d+ points)+\n?/g, ""), args.join(" ")).toMatch(re);
      expect(existsSync(join(dir, "bad.csv"))).toBe(false);
    }
  });
});
