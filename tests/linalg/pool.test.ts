import { describe, it, expect, afterAll } from "vitest";
import { mkdirSync, mkdtempSync, rmSync, utimesSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { WorkerPool, compiledUrl, sharedFloat64 } from "../../src/linalg/pool.js";
import { failTask, fillRangeTask } from "../../src/linalg/pool-selftest.js";
import { task } from "../../src/linalg/task.js";
import { staleModules } from "../setup/build.js";

describe("WorkerPool", () => {
  const pool = new WorkerPool(2);
  afterAll(() => pool.close());

  it("runs tasks in workers that write into shared memory", async () => {
    const a = sharedFloat64(1000);
    expect(await pool.map(fillRangeTask, [[a, 0, 500, 1.5], [a, 500, 1000, 2.5]])).toEqual([500, 500]);
    expect(a[0]).toBe(1.5);
    expect(a[499]).toBe(1.5);
    expect(a[500]).toBe(2.5);
    expect(a[999]).toBe(2.5);
  });

  it("passes task failures back as rejections", async () => {
    await expect(pool.run(failTask, 0, ["boom"])).rejects.toThrow(/boom/);
  });

  it("a handle takes its name from the function and carries no function (it crosses to workers)", () => {
    function someKernel(x: number): number { return 2 * x; }
    const h = task("file:///m.js", { someKernel });
    expect(h).toEqual({ module: "file:///m.js", name: "someKernel" });
    expect(() => task("file:///m.js", { someKernel, other: someKernel })).toThrow(/one function/);
    expect(structuredClone(h)).toEqual(h);
  });
});

describe("compiled modules for the workers", () => {
  // A module pair in a scratch tree laid out like the project: <root>/src/m.ts, <root>/dist/src/m.js.
  const root = mkdtempSync(join(tmpdir(), "sigmesh-compiled-"));
  afterAll(() => rmSync(root, { recursive: true, force: true }));
  mkdirSync(join(root, "src"));
  mkdirSync(join(root, "dist", "src"), { recursive: true });
  const ts = join(root, "src", "m.ts"), js = join(root, "dist", "src", "m.js");
  writeFileSync(ts, "export function f(): number { return 1; }\n");
  const url = pathToFileURL(ts).href;
  const at = (path: string, seconds: number): void => utimesSync(path, seconds, seconds);

  it("refuses a missing compiled module", () => {
    expect(() => compiledUrl(url)).toThrow(/m\.js is missing: run npm run build/);
    expect(staleModules(root)).toEqual([join("src", "m.ts")]);
  });

  it("maps a source module to a current compiled one", () => {
    writeFileSync(js, "export function f() { return 1; }\n");
    at(ts, 1_700_000_000); at(js, 1_700_000_100);
    expect(compiledUrl(url)).toBe(pathToFileURL(js).href);
    expect(staleModules(root)).toEqual([]);
  });

  it("refuses a compiled module older than its source, naming both files", async () => {
    at(ts, 1_700_000_200); at(js, 1_700_000_100);
    // A string matches as a substring of the message.
    expect(() => compiledUrl(url)).toThrow(`${js} is older than its source ${ts}: run npm run build`);
    expect(staleModules(root)).toEqual([join("src", "m.ts")]);
    // Through the pool: a rejection, not a worker left waiting.
    const pool = new WorkerPool(1);
    try {
      await expect(pool.run(task(url, { f: (): number => 1 }), 0, [])).rejects.toThrow(/older than its source/);
    } finally { await pool.close(); }
  });
});

describe("WorkerPool in a script given with -e", () => {
  it("works when the parent runs with --input-type=module (the workers' CommonJS source is not read as a module)", async () => {
    const { spawnSync } = await import("node:child_process");
    const url = new URL("../../dist/src/linalg/pool.js", import.meta.url).href;
    const selftest = new URL("../../dist/src/linalg/pool-selftest.js", import.meta.url).href;
    const script = `import { WorkerPool, sharedFloat64 } from ${JSON.stringify(url)};
      import { fillRangeTask } from ${JSON.stringify(selftest)};
      const pool = new WorkerPool(1);
      const out = sharedFloat64(4);
      await pool.run(fillRangeTask, 0, [out, 0, 4, 2]);
      await pool.close();
      process.stdout.write(Array.from(out).join(","));`;
    const r = spawnSync(process.execPath, ["--input-type=module", "-e", script], { encoding: "utf8" });
    expect(r.stderr).toBe("");
    expect(r.status).toBe(0);
    expect(r.stdout).toBe("2,2,2,2");
  });
});
