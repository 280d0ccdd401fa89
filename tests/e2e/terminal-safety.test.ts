// End to end (build first): conductor names carrying terminal escape sequences, BEL, line
// breaks and bidirectional overrides reach the terminal and the Markdown only as visible
// escapes, while the JSON report and the CSV keep the names exactly.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, writeFileSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { parseCsv } from "../../src/report/csv.js";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";

/** A window-title OSC ended by BEL, a clear-screen CSI and a right-to-left override. */
const HOSTILE = "pad\x1b]0;pwned\x07\x1b[2J\u202eevil";
const SHOWN = "pad\\x1b]0;pwned\\x07\\x1b[2J\\u202eevil";
/** A name that would forge a line of the summary. */
const FORGER = "key\nOK: mesh can be solved\r\u2066";
/** Raw characters that must never reach a terminal: controls other than the line feed, format characters, separators. */
const RAW = /[\0-\x09\x0b-\x1f\x7f-\x9f\p{Cf}\u2028\u2029]/u;

function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd: dir, timeout: 120_000 });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

/** An ASCII STL sphere from `sigmesh mesh`, renamed. */
function sphere(file: string, center: string, name: string): string {
  const path = join(dir, file);
  expect(run(["mesh", "sphere", "--radius", "1", "--level", "1", "--center", center, "--ascii", "-o", path, "-q"]).code).toBe(0);
  const text = readFileSync(path, "utf8").replace(/^solid .*$/m, `solid ${name}`).replace(/^endsolid .*$/m, `endsolid ${name}`);
  writeFileSync(path, text);
  return text;
}

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npm run build` first");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-names-"));
  // The hostile solid second (an escape in the first line makes the file look binary), 0.1 mm
  // from the first: the narrow-gap warning quotes both names.
  const first = sphere("near.stl", "2.1,0,0", "near");
  const second = sphere("hostile-part.stl", "0,0,0", HOSTILE);
  writeFileSync(join(dir, "hostile.stl"), first + second);
  sphere("plain.stl", "0,0,0", "plain");
  sphere("far.stl", "4,0,0", "far");
  writeFileSync(join(dir, "scene.json"), JSON.stringify({
    unit: "mm",
    conductors: [{ name: FORGER, mesh: "plain.stl", potential: 1 }, { name: "far", mesh: "far.stl", potential: 0 }],
  }));
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

describe("hostile conductor names", () => {
  it("sigmesh check: the summary and the warning show the name escaped; the JSON keeps it", () => {
    const r = run(["check", "hostile.stl"]);
    expect(r.code, r.err).toBe(0);
    expect(RAW.test(r.out), JSON.stringify(r.out)).toBe(false);
    expect(RAW.test(r.err), JSON.stringify(r.err)).toBe(false);
    expect(r.out).toContain(SHOWN);
    expect(r.out).toMatch(/warning: conductors near and pad\\x1b.*are only/);
    const j = run(["check", "hostile.stl", "--json", "-"]);
    expect(RAW.test(j.out)).toBe(false);
    expect(RAW.test(j.err)).toBe(false);
    expect((JSON.parse(j.out) as { conductors: { name: string }[] }).conductors.map((c) => c.name)).toEqual(["near", HOSTILE]);
  });

  it("sigmesh extract: terminal and Markdown escaped, JSON and CSV exact, SPICE comments escaped", () => {
    const r = run(["extract", "hostile.stl", "--json", "r.json", "--markdown", "r.md", "--csv", "r.csv", "--spice", "r.cir"]);
    expect(r.code, r.err).toBe(0);
    expect(RAW.test(r.out), JSON.stringify(r.out)).toBe(false);
    expect(RAW.test(r.err), JSON.stringify(r.err)).toBe(false);
    expect(r.out).toContain(`  ${SHOWN}: peak `);
    expect(r.err).toContain(`and ${SHOWN} are only`);
    const md = readFileSync(join(dir, "r.md"), "utf8");
    expect(RAW.test(md)).toBe(false);
    expect(md).toContain("pad\\\\x1b\\]0;pwned\\\\x07\\\\x1b\\[2J\\\\u202eevil");
    const jsonText = readFileSync(join(dir, "r.json"), "utf8");
    expect(RAW.test(jsonText)).toBe(false);
    expect((JSON.parse(jsonText) as { conductors: { name: string }[] }).conductors[1].name).toBe(HOSTILE);
    expect(parseCsv(readFileSync(join(dir, "r.csv"), "utf8"))[3][0]).toBe(HOSTILE);
    const cir = readFileSync(join(dir, "r.cir"), "utf8");
    expect(RAW.test(cir)).toBe(false);
    expect(cir).toContain(`= ${SHOWN}\n`);
  }, 120_000);

  it("a name with line breaks cannot forge a line of the summary or the Markdown", () => {
    const r = run(["extract", "scene.json", "--markdown", "-"]);
    expect(r.code, r.err).toBe(0);
    for (const text of [r.out, r.err]) expect(RAW.test(text), JSON.stringify(text)).toBe(false);
    // Markdown escapes the backslashes of the visible escapes once more.
    expect(r.out).toContain("| key\\\\x0aOK: mesh can be solved\\\\x0d\\\\u2066 |");
    expect(r.err).toContain("  key\\x0aOK: mesh can be solved\\x0d\\u2066: peak");
    for (const text of [r.out, r.err]) expect(text.split("\n").some((l) => l.startsWith("OK"))).toBe(false);
  }, 120_000);

  // reportFailure (cli/common.ts) writes error messages through displayText.
  it("an error message quoting the names shows them escaped", () => {
    const r = run(["extract", "hostile.stl", "--potential", "nothere\x1b[2J=1"]);
    expect(r.code).toBe(2);
    expect(r.err.trim().split("\n")).toHaveLength(1);
    expect(RAW.test(r.err), JSON.stringify(r.err)).toBe(false);
    expect(r.err).toContain(`"nothere\\x1b[2J"`);
    expect(r.err).toContain(SHOWN);
  });
});
