/**
 * Outputs written all or none (src/io/atomic.ts): targets refused before anything is written,
 * a failed rename that puts the earlier set back, one file named twice, only an output's own
 * directory created, and the process ending in the middle of a write (an exit, a signal).
 */
import { describe, it, expect, beforeAll, afterAll, vi } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, mkdirSync, writeFileSync, readFileSync, readdirSync, rmSync, existsSync, symlinkSync, unlinkSync, statSync, chmodSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { writeFilesAtomic, writeFileAtomic, checkOutputPaths, outputOfHidden } from "../../src/io/atomic.js";
import { InputError } from "../../src/errors.js";
import { reportFailure } from "../../cli/common.js";

let root = "";
beforeAll(() => { root = mkdtempSync(join(tmpdir(), "sigmesh-atomic-")); });
afterAll(() => { if (root) rmSync(root, { recursive: true, force: true }); });

let n = 0;
/** A fresh directory holding `files` (name -> content). */
function folderWith(files: Record<string, string>): string {
  const dir = join(root, `case${n++}`);
  mkdirSync(dir);
  for (const [name, text] of Object.entries(files)) writeFileSync(join(dir, name), text);
  return dir;
}

/** Every entry of a directory with the content of its files ("<dir>" for directories). */
function contents(dir: string): Record<string, string> {
  const out: Record<string, string> = {};
  for (const name of readdirSync(dir).sort()) {
    const p = join(dir, name);
    out[name] = statSync(p).isDirectory() ? "<dir>" : readFileSync(p, "utf8");
  }
  return out;
}

function refusal(f: () => void): InputError {
  try { f(); } catch (err) { if (err instanceof InputError) return err; throw err; }
  throw new Error("not refused");
}

describe("writeFilesAtomic", () => {
  it("replaces a set and leaves no hidden file; a new file keeps the permissions of the one it replaces", () => {
    const dir = folderWith({ "a.json": "old a", "b.csv": "old b" });
    chmodSync(join(dir, "b.csv"), 0o640);
    writeFilesAtomic([{ path: join(dir, "a.json"), data: "new a" }, { path: join(dir, "b.csv"), data: new TextEncoder().encode("new b") }, { path: join(dir, "c.html"), data: "new c" }]);
    expect(contents(dir)).toEqual({ "a.json": "new a", "b.csv": "new b", "c.html": "new c" });
    expect(statSync(join(dir, "b.csv")).mode & 0o777).toBe(0o640);
  });

  it("a rename that fails (a target turned into a directory after the check) leaves the earlier set untouched and no temporaries", () => {
    const dir = folderWith({ "r.cir": "old spice", "r.csv": "old csv", "r.json": "old json" });
    const files = [
      { path: join(dir, "r.cir"), option: "--spice", data: "new spice" },
      { path: join(dir, "r.csv"), option: "--csv", data: "new csv" },
      { path: join(dir, "r.html"), option: "--html", data: "new html" }, // new: no earlier file
      { path: join(dir, "r.json"), option: "--json", data: "new json" },
    ];
    const err = refusal(() => writeFilesAtomic(files, {
      beforeCommit: () => { unlinkSync(join(dir, "r.json")); mkdirSync(join(dir, "r.json")); writeFileSync(join(dir, "r.json", "keep"), "x"); },
    }));
    expect(err.message).toContain(`--json ${join(dir, "r.json")}`);
    expect(err.message).not.toMatch(/sigmesh-\d+|\.tmp|\.old/);
    // The earlier files as they were, the new one gone, the directory untouched, nothing hidden.
    expect(contents(dir)).toEqual({ "r.cir": "old spice", "r.csv": "old csv", "r.json": "<dir>" });
    expect(readdirSync(join(dir, "r.json"))).toEqual(["keep"]);
  });

  it("a target that is already a directory is refused before the earlier set is touched", () => {
    const dir = folderWith({ "r.cir": "old spice", "r.csv": "old csv" });
    mkdirSync(join(dir, "r.json"));
    const err = refusal(() => writeFilesAtomic([
      { path: join(dir, "r.cir"), option: "--spice", data: "new spice" },
      { path: join(dir, "r.csv"), option: "--csv", data: "new csv" },
      { path: join(dir, "r.json"), option: "--json", data: "new json" },
    ]));
    expect(err.message).toBe(`--json ${join(dir, "r.json")}: is a directory, not a file: give a file name`);
    expect(contents(dir)).toEqual({ "r.cir": "old spice", "r.csv": "old csv", "r.json": "<dir>" });
  });

  it("the same file named twice (directly, through .. or a symbolic link) writes nothing", () => {
    const dir = folderWith({});
    symlinkSync(dir, join(dir, "link"));
    const cases: Array<[string, string, RegExp]> = [
      [join(dir, "x"), join(dir, "x"), /--json and --csv both name/],
      [join(dir, "x"), `${dir}/./x`, /are the same file/],
      [join(dir, "x"), join(dir, "link", "x"), /are the same file/],
    ];
    for (const [a, b, message] of cases) {
      const err = refusal(() => writeFilesAtomic([{ path: a, option: "--json", data: "1" }, { path: b, option: "--csv", data: "2" }]));
      expect(err.message).toMatch(message);
      expect(readdirSync(dir)).toEqual(["link"]);
    }
  });

  it("creates only an output's own directory, and removes it again when the set fails", () => {
    const dir = folderWith({});
    writeFileAtomic(join(dir, "out", "r.json"), "{}");
    expect(readFileSync(join(dir, "out", "r.json"), "utf8")).toBe("{}");
    const err = refusal(() => writeFileAtomic(join(dir, "a", "b", "r.json"), "{}", "--json"));
    expect(err.message).toBe(`--json ${join(dir, "a", "b", "r.json")}: directory ${join(dir, "a")} does not exist (only an output's own directory is created): create it first`);
    expect(existsSync(join(dir, "a"))).toBe(false);
    // A set that fails after its directory was made takes the directory away with it.
    expect(() => writeFilesAtomic([{ path: join(dir, "new", "r.csv"), data: "1" }, { path: join(dir, "r.txt"), data: "2" }], {
      beforeCommit: () => mkdirSync(join(dir, "r.txt")),
    })).toThrow(InputError);
    expect(existsSync(join(dir, "new"))).toBe(false);
  });

  it("refuses, naming the option and the path as given, targets that cannot be written", () => {
    const dir = folderWith({ "notes.txt": "keep" });
    mkdirSync(join(dir, "adir"));
    symlinkSync(join(dir, "nowhere"), join(dir, "dangling"));
    const cases: Array<[string, string]> = [
      [join(dir, "notes.txt", "r.json"), `${join(dir, "notes.txt")} is a file, not a directory`],
      [join(dir, "notes.txt", "deeper", "r.json"), `${join(dir, "notes.txt")} is a file, not a directory`],
      [join(dir, "adir"), "is a directory, not a file: give a file name"],
      ["/dev/null", "is not a regular file (a device, pipe or socket)"],
      [join(dir, "dangling"), "is a broken symbolic link"],
      [join(dir, "new") + "/", "ends with a path separator: give a file name"],
      ["", "an empty path: give a file name"],
    ];
    for (const [path, fault] of cases) {
      expect(refusal(() => checkOutputPaths([{ path, option: "--html" }])).message).toBe(`--html ${path}: ${fault}`);
      expect(refusal(() => writeFilesAtomic([{ path, option: "--html", data: "x" }])).message).toBe(`--html ${path}: ${fault}`);
    }
    expect(readdirSync(dir).sort()).toEqual(["adir", "dangling", "notes.txt"]);
    expect(readdirSync(join(dir, "adir"))).toEqual([]);
    expect(readFileSync(join(dir, "notes.txt"), "utf8")).toBe("keep");
    expect(() => checkOutputPaths([{ path: "-", option: "--json" }])).not.toThrow();
  });

  it("writes through a symbolic link to the file it names, and keeps the link", () => {
    const dir = folderWith({ "real.json": "old" });
    symlinkSync(join(dir, "real.json"), join(dir, "link.json"));
    writeFileAtomic(join(dir, "link.json"), "new");
    expect(readFileSync(join(dir, "real.json"), "utf8")).toBe("new");
    expect(readdirSync(dir).sort()).toEqual(["link.json", "real.json"]);
  });

  it("names an output from its hidden temporary, and nothing else", () => {
    expect(outputOfHidden("/x/.keypad.html.sigmesh-123-0a1b2c3d.tmp")).toBe("keypad.html");
    expect(outputOfHidden("/x/.keypad.html.sigmesh-123-0a1b2c3d.old")).toBe("keypad.html");
    expect(outputOfHidden("/x/keypad.html")).toBeUndefined();
  });
});

describe("writeFilesAtomic when the process ends in the middle", () => {
  const atomic = fileURLToPath(new URL("../../dist/src/io/atomic.js", import.meta.url));
  // A child that writes a.txt and b.txt as one set and ends (or is signalled) between its temporaries and the commit.
  const child = (dir: string, how: string) => spawnSync(process.execPath, ["--input-type=module", "-e", `
    import { writeFilesAtomic } from ${JSON.stringify(atomic)};
    const dir = ${JSON.stringify(dir)}, how = ${JSON.stringify(how)};
    writeFilesAtomic([{ path: dir + "/a.txt", data: "new a" }, { path: dir + "/b.txt", data: "new b" }], {
      beforeCommit: () => { if (how === "exit") process.exit(3); else process.kill(process.pid, how); },
    });
    process.stdout.write("written\\n");
  `], { encoding: "utf8" });

  it("an exit removes the temporaries (exit hook) and leaves the earlier set", () => {
    const dir = folderWith({ "a.txt": "old a", "b.txt": "old b" });
    const r = child(dir, "exit");
    expect(r.status).toBe(3);
    expect(contents(dir)).toEqual({ "a.txt": "old a", "b.txt": "old b" });
  });

  for (const signal of ["SIGINT", "SIGTERM", "SIGHUP"] as const) {
    it(`${signal} during the write is held until the set is written, then ends the process as asked`, () => {
      const dir = folderWith({ "a.txt": "old a", "b.txt": "old b" });
      const r = child(dir, signal);
      expect(r.stderr).toBe("");
      expect(r.stdout).toBe("written\n");
      expect(r.signal).toBe(signal);
      expect(contents(dir)).toEqual({ "a.txt": "new a", "b.txt": "new b" });
    });
  }
});

describe("a file-system fault that reaches the command line", () => {
  const reported = (err: unknown): [number, string] => {
    let text = "";
    const spy = vi.spyOn(process.stderr, "write").mockImplementation((chunk: string | Uint8Array) => { text += String(chunk); return true; });
    try { return [reportFailure(err), text]; } finally { spy.mockRestore(); }
  };
  const fault = (code: string, path?: string) => Object.assign(new Error(`${code}: raw`), { code, path });

  it("is one line and exit 2, naming the output a hidden temporary stands for, never the temporary", () => {
    expect(reported(fault("ENOSPC", "/d/.keypad.html.sigmesh-12-0a1b2c3d.tmp"))).toEqual([2, "sigmesh: error: cannot write /d/keypad.html: no space left on device\n"]);
    expect(reported(fault("EROFS", "/d/r.json"))).toEqual([2, "sigmesh: error: /d/r.json: read-only file system\n"]);
    expect(reported(fault("ENOTDIR", "/d/notes.txt/r.json"))).toEqual([2, "sigmesh: error: /d/notes.txt/r.json: a part of the path is not a directory\n"]);
    expect(reported(fault("EDQUOT"))).toEqual([2, "sigmesh: error: disk quota exceeded\n"]);
  });
});
