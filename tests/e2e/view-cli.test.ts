// End to end: `sigmesh view` (build first) refuses what is not a report with one line naming
// the file (and the line and column of a JSON fault), and serves a report until SIGINT.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawn, spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";

function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", timeout: 60_000 });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npm run build` first");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-view-"));
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

describe("sigmesh view", () => {
  it("a mesh file given instead of a report: one line saying what to give", () => {
    const stl = join(dir, "pad.stl");
    writeFileSync(stl, "solid pad\nendsolid pad\n");
    const r = run(["view", stl]);
    expect(r.code).toBe(2);
    expect(r.err).toBe(`sigmesh: error: ${stl}: not a sigmesh report: give the .json written by \`sigmesh extract --json FILE --json-panels\` or the .html written by \`--html\`\n`);
  });

  it("a broken JSON report: one line, with the line and column of the fault where the parser names it", () => {
    const bad = join(dir, "bad.json"), stray = join(dir, "stray.json");
    writeFileSync(bad, '{\n  "format": "sigmesh-extraction/1",\n  "conductors" 1\n}\n');
    const r = run(["view", bad]);
    expect(r.code).toBe(2);
    expect(r.err.startsWith(`sigmesh: error: ${bad}: line 3, column 16: not valid JSON (`), r.err).toBe(true);
    expect(r.err).toMatch(/\([^\n]+\)\n$/);
    // a fault the parser reports with a quoted snippet of the text (line breaks included)
    writeFileSync(stray, '{\n  "format": "sigmesh-extraction/1",\n  "conductors": [,]\n}\n');
    const s = run(["view", stray]);
    expect(s.code).toBe(2);
    expect(s.err).toMatch(/^sigmesh: error: .*stray\.json: (line \d+, column \d+: )?not valid JSON \([^\n]*\)\n$/);
  });

  it("serves an extraction's JSON report with panels, only its two paths, and stops on SIGINT with exit 0", async () => {
    const mesh = join(dir, "ball.stl"), report = join(dir, "ball.json");
    expect(run(["mesh", "sphere", "--radius", "1", "--level", "1", "-o", mesh, "-q"]).code).toBe(0);
    const ex = run(["extract", mesh, "--json", report, "--json-panels", "--quiet"]);
    expect(ex.code, ex.err).toBe(0);
    const child = spawn(process.execPath, [cli, "view", report], { stdio: ["ignore", "pipe", "pipe"] });
    const url = await new Promise<string>((resolve, reject) => {
      let out = "";
      child.stdout.on("data", (b: Buffer) => { out += b.toString(); const m = /(http:\/\/127\.0\.0\.1:\d+\/)/.exec(out); if (m) resolve(m[1]); });
      child.once("exit", (code) => reject(new Error(`view exited with ${code} before printing its URL`)));
    });
    try {
      const page = await fetch(url);
      expect(page.status).toBe(200);
      expect(page.headers.get("content-type")).toMatch(/^text\/html/);
      expect(await page.text()).toMatch(/<html/i);
      const json = await (await fetch(url + "report.json")).json() as { format: string; viewer?: unknown };
      expect(json.format).toMatch(/^sigmesh-extraction\//);
      expect(json.viewer).toBeUndefined();
      expect((await fetch(url + "ball.json")).status).toBe(404);
      expect((await fetch(url, { method: "POST" })).status).toBe(405);
    } finally {
      const exited = new Promise<number | null>((resolve) => child.once("exit", (code) => resolve(code)));
      child.kill("SIGINT");
      expect(await exited).toBe(0);
    }
  }, 60_000);
});
