// End to end: `sigmesh extract --accuracy R` (build first): the summary says what was requested and
// reached, the JSON carries it, and bad values are refused with one line, exit 2, nothing written.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, writeFileSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";
const run = (args: string[]) => {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd: dir });
  return { code: r.status, out: r.stdout, err: r.stderr };
};

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npm run build` first");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-accuracy-"));
  writeFileSync(join(dir, "cube.json"), JSON.stringify({ unit: "mm", conductors: [{ name: "cube", shape: { box: { size: [10, 10, 10], divisions: 4 } } }] }));
  writeFileSync(join(dir, "cubes.json"), JSON.stringify({ unit: "mm", parameters: { gap: 4 }, conductors: [
    { name: "a", shape: { box: { size: [4, 4, 4], divisions: 2 } } },
    { name: "b", shape: { box: { size: [4, 4, 4], divisions: 2 } }, place: { translate: ["=gap + 4", 0, 0] } }] }));
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

describe("sigmesh extract --accuracy", () => {
  it("refines to 1 % and says so in the summary and the JSON report (cube: Hwang & Mascagni 0.6606782·4πε0·L)", () => {
    const r = run(["extract", "cube.json", "--accuracy", "1%", "--json", "out.json", "--markdown", "out.md"]);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/requested 1\.0 % on every diagonal entry and every coupling above 5\.0 % of its row's diagonal: reached, worst \d/);
    expect(r.out).toMatch(/adaptive refinement over 192 → \d+ → \d+/);
    const j = JSON.parse(readFileSync(join(dir, "out.json"), "utf8"));
    expect(j.accuracy.adaptive.requested).toBe(0.01);
    expect(j.accuracy.adaptive.reached).toBe(true);
    expect(j.accuracy.adaptive.governing).toEqual([[true]]);
    const c = j.capacitance.maxwell[0][0], ref = 4 * Math.PI * 8.8541878128e-12 * 0.6606782 * 0.01;
    expect(Math.abs(c - ref)).toBeLessThanOrEqual(j.accuracy.errorEstimate[0][0]);
    expect(j.accuracy.errorEstimate[0][0] / c).toBeLessThanOrEqual(0.01);
    expect(readFileSync(join(dir, "out.md"), "utf8")).toMatch(/Requested 1\.0 % on every diagonal entry and every coupling above 5\.0 % of its row's diagonal: reached \(adaptive refinement, \d+ solves\)\./);
  });

  it.each([
    [["--accuracy", "abc"], /--accuracy "abc": expected a relative error, e\.g\. 1e-3 or 0\.1%/],
    [["--accuracy", "0.5"], /accuracy must be a relative error from 1e-7 to 0\.1/],
    [["--accuracy", "1e-3", "--refine", "1"], /--accuracy and --refine are two ways to refine: give one/],
    [["--accuracy", "1e-3", "--max-panels", "-5"], /--max-panels "-5": expected a positive whole number of panels/],
  ])("refuses %j with one line and exit 2, writing nothing", (args, message) => {
    const r = run(["extract", "cube.json", ...args, "--json", "bad.json"]);
    expect(r.code).toBe(2);
    expect(r.err.trim().split("\n")).toHaveLength(1);
    expect(r.err).toMatch(message);
    expect(existsSync(join(dir, "bad.json"))).toBe(false);
  });

  it("sweep --accuracy extracts every point to the requested accuracy, and refuses it with --refine", () => {
    const r = run(["sweep", "cubes.json", "--vary", "gap=4:8:2", "--accuracy", "2%", "--csv", "sweep.csv", "--quiet"]);
    expect(r.code).toBe(0);
    const rows = readFileSync(join(dir, "sweep.csv"), "utf8").trim().split("\n");
    expect(rows).toHaveLength(3);
    // The coupling falls as the gap widens.
    const cm = rows.slice(1).map((line) => Number(line.split(",").at(-1)));
    expect(cm[1]).toBeLessThan(cm[0]);
    const bad = run(["sweep", "cubes.json", "--vary", "gap=4:8:2", "--accuracy", "2%", "--refine", "1", "--csv", "bad.csv"]);
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/--accuracy and --refine are two ways to refine/);
    expect(existsSync(join(dir, "bad.csv"))).toBe(false);
  });
});
