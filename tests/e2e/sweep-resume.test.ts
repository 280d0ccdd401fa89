// End to end: sweeps that fail at a point or are interrupted keep the finished points in
// <csv>.journal, write no table, and `--resume` runs only the others, giving the table of an
// uninterrupted run byte for byte. Also: a scene with a dielectric body and a multi-part net
// (mesh path relative to the scene) swept in child processes equals `extract --json -`.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawn, spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, writeFileSync, readFileSync, appendFileSync, mkdirSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { parseCsv } from "../../src/report/csv.js";
import { writeMeshFile } from "../../src/io/write.js";
import { boxMesh } from "../../src/mesh/primitives/index.js";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";

function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd: dir });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

/** Pad and lid; `lift` is the lid's height expression. */
const scene = (lift: string, divisions = 2) => JSON.stringify({
  unit: "mm", parameters: { gap: 2, w: 4 }, conductors: [
    { name: "pad", shape: { box: { size: ["=w", "=w", 0.5], divisions } }, potential: 1 },
    { name: "lid", shape: { plate: { size: ["=w", "=w"], divisions: divisions + 1 } }, place: { translate: [0, 0, lift] } },
  ] });

const entryLines = (file: string): number => readFileSync(join(dir, file), "utf8").split("\n").filter((l) => l.startsWith("{\"point\"")).length;

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npx tsc -p tsconfig.json` first");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-sweep-resume-"));
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

describe("sigmesh sweep --resume", () => {
  it("a failing point: one line with its values, no table, the others kept; resumed after the fix equals a fresh run", () => {
    writeFileSync(join(dir, "f.json"), scene("=gap + 0.25"));
    const grid = ["--vary", "gap=-0.25,1,2.5"];
    const r = run(["sweep", "f.json", ...grid, "--csv", "f.csv"]);
    expect(r.code).toBe(2);
    const errors = r.err.split("\n").filter((l) => l.startsWith("sigmesh: error"));
    expect(errors).toHaveLength(1);
    expect(errors[0]).toMatch(/^sigmesh: error: f\.json: sweep point 0 \(gap=-0\.25\): conductors pad and lid touch/);
    expect(r.err).toMatch(/1 of 3 points failed and no table was written; the 2 finished are kept in f\.csv\.journal/);
    expect(existsSync(join(dir, "f.csv"))).toBe(false);
    expect(entryLines("f.csv.journal")).toBe(2);

    // Run again without --resume: refused, naming the journal; nothing is lost.
    const again = run(["sweep", "f.json", ...grid, "--csv", "f.csv"]);
    expect(again.code).toBe(2);
    expect(again.err).toMatch(/^sigmesh: error: f\.csv\.journal: holds 2 points of an earlier run of this table that did not finish: add --resume/m);
    expect(entryLines("f.csv.journal")).toBe(2);

    // The fix moves only the failing point: the others' scenes are unchanged, so they are kept.
    writeFileSync(join(dir, "f.json"), scene("=max(gap, 0.5) + 0.25"));
    const resumed = run(["sweep", "f.json", ...grid, "--csv", "f.csv", "--resume"]);
    expect(resumed.code).toBe(0);
    expect(resumed.err).toMatch(/3 points, 2 kept from f\.csv\.journal, 1 to run/);
    expect(existsSync(join(dir, "f.csv.journal"))).toBe(false);
    expect(run(["sweep", "f.json", ...grid, "--csv", "fresh.csv", "--quiet"]).code).toBe(0);
    expect(readFileSync(join(dir, "f.csv"), "utf8")).toBe(readFileSync(join(dir, "fresh.csv"), "utf8"));
  });

  it("an interrupted sweep keeps its finished points; resumed, it equals an uninterrupted run byte for byte", async () => {
    writeFileSync(join(dir, "i.json"), scene("=gap + 0.25", 5));
    const grid = ["--vary", "gap=1:3:10"];
    for (const processes of ["0", "2"]) {
      const csv = `i${processes}.csv`;
      const child = spawn(process.execPath, [cli, "sweep", "i.json", ...grid, "--csv", csv, "--processes", processes, "--quiet"], { cwd: dir, stdio: ["ignore", "ignore", "pipe"] });
      let err = "";
      child.stderr.on("data", (b: Buffer) => { err += b.toString(); });
      const exited = new Promise<number | null>((done) => child.on("close", (code) => done(code)));
      const journal = join(dir, `${csv}.journal`);
      const t0 = Date.now();
      while (!(existsSync(journal) && entryLines(`${csv}.journal`) >= 2) && Date.now() - t0 < 120_000) await new Promise((w) => setTimeout(w, 20));
      child.kill("SIGTERM");
      expect(await exited).toBe(143);
      expect(err).toMatch(/interrupted \(SIGTERM\); the points finished are kept in i\d\.csv\.journal: rerun with --resume/);
      const kept = entryLines(`${csv}.journal`);
      expect(kept).toBeGreaterThanOrEqual(2);
      expect(kept).toBeLessThan(10);
      expect(existsSync(join(dir, csv))).toBe(false);
      // A line torn by a kill during the write is skipped, not fatal.
      appendFileSync(journal, "{\"point\":9,\"key\":\"ab");
      const resumed = run(["sweep", "i.json", ...grid, "--csv", csv, "--resume"]);
      expect(resumed.code).toBe(0);
      expect(resumed.err).toMatch(new RegExp(`10 points, ${kept} kept from i\\d\\.csv\\.journal, ${10 - kept} to run`));
    }
    expect(run(["sweep", "i.json", ...grid, "--csv", "whole.csv", "--quiet"]).code).toBe(0);
    const whole = readFileSync(join(dir, "whole.csv"), "utf8");
    expect(readFileSync(join(dir, "i0.csv"), "utf8")).toBe(whole);
    expect(readFileSync(join(dir, "i2.csv"), "utf8")).toBe(whole);
  }, 300_000);

  it("reuses no point whose settings differ, and refuses a file that is not a journal", () => {
    writeFileSync(join(dir, "o.json"), scene("=gap + 0.25"));
    const grid = ["--vary", "gap=-0.25,1"];
    expect(run(["sweep", "o.json", ...grid, "--csv", "o.csv"]).code).toBe(2);
    writeFileSync(join(dir, "o.json"), scene("=max(gap, 0.5) + 0.25"));
    const other = run(["sweep", "o.json", ...grid, "--csv", "o.csv", "--resume", "--tol", "1e-6"]);
    expect(other.code).toBe(0);
    expect(other.err).not.toMatch(/kept from/);
    expect(other.err).toMatch(/2 points \(2 run\)/);
    writeFileSync(join(dir, "n.csv.journal"), "point,gap\n");
    const bad = run(["sweep", "o.json", ...grid, "--csv", "n.csv", "--resume"]);
    expect(bad.code).toBe(2);
    expect(bad.err).toBe("sigmesh: error: n.csv.journal: line 1: not a sigmesh sweep journal (its first line is not the journal header); delete it or choose another --csv\n");
  });
});

describe("sweeps of dielectric and multi-part scenes", () => {
  it("equal single extractions, in this process and in child processes (mesh paths relative to the scene)", () => {
    mkdirSync(join(dir, "parts"), { recursive: true });
    // A 1 mm cube (the generator works in metres; written in mm).
    writeMeshFile(join(dir, "parts", "stub.stl"), { ...boxMesh({ size: [1e-3, 1e-3, 1e-3], divisions: 2 }), names: ["stub"] }, "stl", "mm");
    const value = (gap: number | string) => ({
      unit: "mm", parameters: { gap: 1 },
      conductors: [
        { name: "pin", parts: [{ mesh: "stub.stl" }, { shape: { box: { size: [1, 1, 1], divisions: 2 } }, place: { translate: [0, 0, 1] } }], potential: 1 },
        { name: "cap", shape: { plate: { size: [3, 3], divisions: 4 } }, place: { translate: [0, 0, typeof gap === "number" ? gap + 1.5 : gap] } }],
      dielectrics: [{ name: "block", shape: { box: { size: [3, 3, 0.5], divisions: [4, 4, 1] } }, place: { translate: [3, 0, 0] }, permittivity: 3 }] });
    writeFileSync(join(dir, "parts", "d.json"), JSON.stringify(value("=gap + 1.5")));
    for (const processes of ["0", "1"]) {
      const r = run(["sweep", "parts/d.json", "--vary", "gap=1,2", "--entries", "C(pin,pin),Cm(pin,cap)", "--csv", `d${processes}.csv`, "--processes", processes, "--quiet"]);
      // Quiet: only the points' warnings (the parts' shared face, the narrow gap at gap=1).
      expect(r.err.split("\n").filter((l) => l !== "" && !l.startsWith("sigmesh: warning: sweep point "))).toEqual([]);
      expect(r.code).toBe(0);
    }
    const rows = parseCsv(readFileSync(join(dir, "d0.csv"), "utf8"));
    expect(readFileSync(join(dir, "d1.csv"), "utf8")).toBe(readFileSync(join(dir, "d0.csv"), "utf8"));
    [1, 2].forEach((gap, k) => {
      writeFileSync(join(dir, "parts", `h${k}.json`), JSON.stringify({ ...value(gap), parameters: undefined }));
      const single = run(["extract", `parts/h${k}.json`, "--json", "-", "--quiet"]);
      expect(single.code).toBe(0);
      const report = JSON.parse(single.out) as { capacitance: { maxwell: number[][]; mutual: number[][] }; dielectrics?: unknown };
      expect(rows[k + 1].map(Number)).toEqual([k, gap, report.capacitance.maxwell[0][0], report.capacitance.mutual[0][1]]);
    });
  });
});
