// End to end: every command's --help (build first), and the README's command reference
// against it: an option the README shows must exist, and an option the program takes must
// be in the README section of its command.
import { describe, it, expect, beforeAll } from "vitest";
import { spawnSync } from "node:child_process";
import { existsSync, readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
const readme = readFileSync(fileURLToPath(new URL("../../README.md", import.meta.url)), "utf8");

function help(path: string[]): { code: number | null; out: string; err: string } {
  const r = spawnSync(process.execPath, [cli, ...path, "--help"], { encoding: "utf8" });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

/** The option entries of a help text: flag and its whole (wrapped) description. */
function optionEntries(text: string): Array<{ flag: string; text: string }> {
  const entries: Array<{ flag: string; text: string }> = [];
  let inOptions = false;
  for (const line of text.split("\n")) {
    if (/^\S/.test(line)) { inOptions = line.startsWith("Options:"); continue; }
    if (!inOptions) continue;
    const m = /^ {2}(?:-\w, )?(--[a-z][a-z-]*)/.exec(line);
    if (m) entries.push({ flag: m[1], text: line.trim() });
    else if (entries.length > 0 && line.trim() !== "") entries[entries.length - 1].text += " " + line.trim();
  }
  return entries;
}

/** The README section `### \`sigmesh NAME ...\`` up to the next heading. */
function readmeSection(name: string): string {
  const start = readme.indexOf("### `sigmesh " + name);
  if (start < 0) return "";
  const rest = readme.slice(start + 4);
  const end = rest.search(/\n#{2,3} /);
  return end < 0 ? rest : rest.slice(0, end);
}

const COMMANDS = ["check", "mesh", "extract", "demo", "view", "sweep"];
const GLOBAL = new Set(["--help", "--debug", "--version"]);

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npm run build` first");
});

describe("--help", () => {
  it.each([[[]], ...COMMANDS.map((c) => [[c]]), [["sweep", "merge"]]])("%j --help: exit 0, every option described once, no empty defaults", (path) => {
    const r = help(path as string[]);
    expect(r.code).toBe(0);
    expect(r.err).toBe("");
    const entries = optionEntries(r.out);
    expect(entries.length).toBeGreaterThan(0);
    for (const e of entries) {
      // "(default: [])" of a repeatable option says nothing; two defaults contradict or repeat.
      expect(e.text, e.flag).not.toMatch(/\(default: \[\]\)/);
      expect((e.text.match(/\(default\b/g) ?? []).length, e.text).toBeLessThanOrEqual(1);
    }
  });
});

function run(args: string[]): { code: number | null; out: string; err: string } {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8" });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

describe("usage errors", () => {
  it.each([
    [["extract"], /^sigmesh: error: missing required argument 'inputs' \(see sigmesh extract --help\)\n$/],
    [["check", "x.stl", "--bogus"], /^sigmesh: error: unknown option '--bogus' \(see sigmesh check --help\)\n$/],
    [["sweep", "merge"], /^sigmesh: error: missing required argument 'tables' \(see sigmesh sweep merge --help\)\n$/],
    [["nope"], /^sigmesh: error: unknown command 'nope' \(see sigmesh --help\)\n$/],
  ])("%j: exit 2 and one line pointing at that command's help", (args, re) => {
    const r = run(args as string[]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(re);
    expect(r.out).toBe("");
  });
  it("no command at all is a usage error (one line naming the commands, exit 2); help and version asked for exit 0", () => {
    for (const args of [[], ["--debug"]]) {
      const bare = run(args);
      expect(bare.code).toBe(2);
      expect(bare.err).toMatch(/^sigmesh: error: no command given: one of check, mesh, extract, demo, view, sweep \(see sigmesh --help\)\n$/);
      expect(bare.out).toBe("");
    }
    expect(run(["help"]).code).toBe(0);
    expect(run(["help", "extract"]).code).toBe(0);
    const v = run(["--version"]);
    expect(v.code).toBe(0);
    expect(v.out.trim()).toMatch(/^\d+\.\d+\.\d+/);
  });
});

describe("README command reference", () => {
  it.each(COMMANDS)("sigmesh %s: every option the README shows exists", (name) => {
    const section = readmeSection(name);
    expect(section, `README has a section for sigmesh ${name}`).not.toBe("");
    const taken = new Set(optionEntries(help([name]).out).map((e) => e.flag));
    if (name === "sweep") for (const e of optionEntries(help(["sweep", "merge"]).out)) taken.add(e.flag);
    // A quoted command line of another command (`sigmesh extract --json -`) shows that command's options.
    const own = section.replace(/`(?:npx )?sigmesh (\w+)[^`]*`/g, (span, c: string) => (c === name ? span : ""));
    // The viewer reads what extract writes: its section may name extract's output options.
    if (name === "view") for (const e of optionEntries(help(["extract"]).out)) if (/^--(html|json)/.test(e.flag)) taken.add(e.flag);
    const shown = new Set(own.match(/--[a-z][a-z-]*/g) ?? []);
    const unknown = [...shown].filter((f) => !taken.has(f) && !GLOBAL.has(f));
    expect(unknown, `options in the README's ${name} section that sigmesh ${name} does not take`).toEqual([]);
  });
  // The sweep section is kept by the sweep command's owner; its options are checked one way only above.
  it.each(COMMANDS.filter((c) => c !== "sweep"))("sigmesh %s: every option it takes is in the README", (name) => {
    const section = readmeSection(name);
    const missing = optionEntries(help([name]).out).map((e) => e.flag).filter((f) => !GLOBAL.has(f) && !section.includes(f));
    expect(missing, `options of sigmesh ${name} missing from its README section`).toEqual([]);
  });
});
