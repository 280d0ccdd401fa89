// End to end: `sigmesh view` (build first) refuses what is not a report with one line naming
// the file (and the line and column of a JSON fault), and serves a report until SIGINT.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawn, spawnSync } from "node:child_process";
import { request } from "node:http";
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

/** A GET with the Host header given (fetch sets its own). */
function getWithHost(url: URL, host: string, path = url.pathname): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    const req = request({ host: url.hostname, port: url.port, path, headers: { host } }, (res) => {
      let body = "";
      res.setEncoding("utf8");
      res.on("data", (c: string) => { body += c; });
      res.on("end", () => resolve({ status: res.statusCode ?? 0, body }));
    });
    req.on("error", reject);
    req.end();
  });
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

  /** Serve `ball.json` (made once), run `check` against the printed URL, stop with SIGINT and expect exit 0. */
  async function withViewer(check: (url: string) => Promise<void>): Promise<void> {
    const mesh = join(dir, "ball.stl"), report = join(dir, "ball.json");
    if (!existsSync(report)) {
      expect(run(["mesh", "sphere", "--radius", "1", "--level", "1", "-o", mesh, "-q"]).code).toBe(0);
      const ex = run(["extract", mesh, "--json", report, "--json-panels", "--quiet"]);
      expect(ex.code, ex.err).toBe(0);
    }
    const child = spawn(process.execPath, [cli, "view", report], { stdio: ["ignore", "pipe", "pipe"] });
    const url = await new Promise<string>((resolve, reject) => {
      let out = "";
      child.stdout.on("data", (b: Buffer) => { out += b.toString(); const m = /(http:\/\/127\.0\.0\.1:\d+\/\S*)/.exec(out); if (m) resolve(m[1]); });
      child.once("exit", (code) => reject(new Error(`view exited with ${code} before printing its URL`)));
    });
    try {
      await check(url);
    } finally {
      const exited = new Promise<number | null>((resolve) => child.once("exit", (code) => resolve(code)));
      child.kill("SIGINT");
      expect(await exited).toBe(0);
    }
  }

  it("serves an extraction's JSON report with panels at the printed URL, only its two paths, and stops on SIGINT with exit 0", async () => {
    await withViewer(async (url) => {
      const page = await fetch(url);
      expect(page.status).toBe(200);
      expect(page.headers.get("content-type")).toMatch(/^text\/html/);
      expect(await page.text()).toMatch(/<html/i);
      const json = await (await fetch(url + "report.json")).json() as { format: string; viewer?: unknown };
      expect(json.format).toMatch(/^sigmesh-extraction\//);
      expect(json.viewer).toBeUndefined();
      expect((await fetch(url + "ball.json")).status).toBe(404);
      expect((await fetch(url, { method: "POST" })).status).toBe(405);
    });
  }, 60_000);

  it("serves nothing without the random token the printed URL carries", async () => {
    await withViewer(async (url) => {
      const u = new URL(url);
      const token = u.pathname.split("/")[1];
      // at least 128 random bits, URL-safe
      expect(token).toMatch(/^[A-Za-z0-9_-]{22,}$/);
      for (const path of ["/", "/report.json", "/index.html", `/${token.slice(0, -1)}/report.json`, `/${token}x/`, `/x${token}/`, `/${token}`]) {
        const r = await fetch(new URL(path, u.origin));
        expect(r.status, path).toBe(403);
        expect(await r.text()).not.toContain("sigmesh-extraction");
      }
    });
  }, 60_000);

  it("answers only requests whose Host is its own loopback address and port (DNS rebinding is refused with 421)", async () => {
    await withViewer(async (url) => {
      const u = new URL(url);
      // A page on another site that resolves its own name to 127.0.0.1 sends its own name as Host.
      for (const host of [`evil.example:${u.port}`, `127.0.0.1.evil.example:${u.port}`, `localhost:${Number(u.port) + 1}`, "127.0.0.1", `[::1]:${u.port}`, `127.0.0.1:${u.port}@evil.example`]) {
        const r = await getWithHost(u, host, u.pathname + "report.json");
        expect(r.status, host).toBe(421);
        expect(r.body).not.toContain("sigmesh-extraction");
      }
      for (const host of [`127.0.0.1:${u.port}`, `localhost:${u.port}`, `LOCALHOST:${u.port}`]) {
        expect((await getWithHost(u, host, u.pathname + "report.json")).status, host).toBe(200);
      }
    });
  }, 60_000);
});
