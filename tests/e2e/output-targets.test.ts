// End to end: output paths of every command checked before any work (exit 2, one line naming
// the option and the path as given), the missing-directory rule (only an output's own directory
// is created), a read-only directory, and a full disk on a small tmpfs (the earlier files kept,
// no temporary left, the message naming the output).
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, writeFileSync, readFileSync, readdirSync, mkdirSync, symlinkSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { sphereMesh } from "../../src/mesh/primitives/index.js";
import { writeMeshFile } from "../../src/io/write.js";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";

function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd: dir });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

/** Mount a tmpfs at a new directory under `dir`; undefined where mounting is not permitted. */
function mountTmpfs(name: string, options: string): string | undefined {
  const at = join(dir, name);
  mkdirSync(at);
  const r = spawnSync("mount", ["-t", "tmpfs", "-o", options, "tmpfs", at], { encoding: "utf8" });
  return r.status === 0 ? at : undefined;
}
const mounted: string[] = [];

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npx tsc -p tsconfig.json` first");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-targets-"));
  writeMeshFile(join(dir, "ball.stl"), sphereMesh({ radius: 5e-3, level: 2, name: "ball" }), "stl", "mm");
  writeFileSync(join(dir, "s.json"), JSON.stringify({
    unit: "mm", parameters: { r: 5 }, conductors: [{ name: "ball", shape: { sphere: { radius: "=r", level: 1 } }, potential: 1 }],
  }));
  writeFileSync(join(dir, "notes.txt"), "keep");
  mkdirSync(join(dir, "adir"));
  mkdirSync(join(dir, "out"));
  symlinkSync(".", join(dir, "here"));
});
afterAll(() => {
  for (const m of mounted) spawnSync("umount", [m]);
  if (dir) rmSync(dir, { recursive: true, force: true });
});

describe("output paths are checked before any work", () => {
  // Each run also names an input that does not exist: the output is refused first, so nothing was loaded or solved.
  const cases: Array<[string, string[], string]> = [
    ["extract: a directory missing above the output's own", ["extract", "missing.stl", "--json", "a/b/r.json"], "--json a/b/r.json: directory a does not exist (only an output's own directory is created): create it first"],
    ["extract: a path under a regular file", ["extract", "missing.stl", "--html", "notes.txt/r.html"], "--html notes.txt/r.html: notes.txt is a file, not a directory"],
    ["extract: a target that is a directory", ["extract", "missing.stl", "--csv", "adir"], "--csv adir: is a directory, not a file: give a file name"],
    ["extract: one file named twice through a symbolic link", ["extract", "missing.stl", "--json", "out/x", "--spice", "here/out/x"], "--json out/x and --spice here/out/x are the same file: give each output its own file"],
    ["extract: a device", ["extract", "missing.stl", "--markdown", "/dev/null"], "--markdown /dev/null: is not a regular file (a device, pipe or socket)"],
    ["sweep: the table under a missing directory", ["sweep", "missing.json", "--vary", "r=1,2", "--csv", "a/b/t.csv"], "--csv a/b/t.csv: directory a does not exist (only an output's own directory is created): create it first"],
    ["sweep: the plot under a regular file", ["sweep", "missing.json", "--vary", "r=1,2", "--csv", "t.csv", "--svg", "notes.txt/p.svg"], "--svg notes.txt/p.svg: notes.txt is a file, not a directory"],
    ["sweep merge: the table under a missing directory", ["sweep", "merge", "missing.csv", "--csv", "a/b/m.csv"], "--csv a/b/m.csv: directory a does not exist (only an output's own directory is created): create it first"],
    ["check --json under a missing directory", ["check", "missing.stl", "--json", "a/b/c.json"], "--json a/b/c.json: directory a does not exist (only an output's own directory is created): create it first"],
    ["mesh -o under a missing directory", ["mesh", "sphere", "--radius", "1", "-o", "a/b/s.stl"], "-o a/b/s.stl: directory a does not exist (only an output's own directory is created): create it first"],
  ];
  for (const [what, args, message] of cases) {
    it(`${what}: exit 2, one line, nothing written`, () => {
      const before = readdirSync(dir).sort();
      const r = run(args);
      expect(r.err).toBe(`sigmesh: error: ${message}\n`);
      expect(r.code).toBe(2);
      expect(readdirSync(dir).sort()).toEqual(before);
      expect(readdirSync(join(dir, "out"))).toEqual([]);
    });
  }

  it("creates a missing last directory of an output, the same for extract, sweep, check --json and mesh -o", () => {
    expect(run(["extract", "ball.stl", "--json", "new1/r.json", "--quiet"]).code).toBe(0);
    expect(JSON.parse(readFileSync(join(dir, "new1", "r.json"), "utf8")).format).toBe("sigmesh-extraction/1");
    expect(run(["sweep", "s.json", "--vary", "r=4,5", "--csv", "new2/t.csv", "--quiet"]).code).toBe(0);
    expect(readdirSync(join(dir, "new2"))).toEqual(["t.csv"]);
    expect(run(["check", "ball.stl", "--json", "new3/c.json", "--quiet"]).code).toBe(0);
    expect(readdirSync(join(dir, "new3"))).toEqual(["c.json"]);
    expect(run(["mesh", "sphere", "--radius", "1", "-o", "new4/s.stl", "--quiet"]).code).toBe(0);
    expect(readdirSync(join(dir, "new4"))).toEqual(["s.stl"]);
  });
});

describe("faults of the file system", () => {
  it("a read-only directory is refused before any work", (ctx) => {
    const ro = mountTmpfs("ro", "ro,size=64k");
    if (!ro) return ctx.skip("mounting a tmpfs is not permitted here: read-only directory not tested");
    mounted.push(ro);
    const r = run(["extract", "missing.stl", "--json", "ro/r.json"]);
    expect(r.err).toBe("sigmesh: error: --json ro/r.json: cannot write in directory ro (read-only file system)\n");
    expect(r.code).toBe(2);
  });

  it("a full disk leaves the earlier files, no temporary, and names the output", (ctx) => {
    const full = mountTmpfs("full", "size=64k");
    if (!full) return ctx.skip("mounting a tmpfs is not permitted here: full disk not tested");
    mounted.push(full);
    writeFileSync(join(full, "r.json"), "old report");
    writeFileSync(join(full, "r.html"), "old page");
    // The HTML report (over 500 kB with the viewer) cannot fit in 64 kB.
    const r = run(["extract", "ball.stl", "--json", "full/r.json", "--html", "full/r.html", "--quiet"]);
    expect(r.err).toBe("sigmesh: error: cannot write --html full/r.html: no space left on device; no earlier output was changed\n");
    expect(r.code).toBe(2);
    expect(readdirSync(full).sort()).toEqual(["r.html", "r.json"]);
    expect(readFileSync(join(full, "r.json"), "utf8")).toBe("old report");
    expect(readFileSync(join(full, "r.html"), "utf8")).toBe("old page");
  });
});
