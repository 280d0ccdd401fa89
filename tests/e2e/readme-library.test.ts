// The README's library section, run as written: each TypeScript block that loads a scene runs on
// every bundled scene (only the scene path replaced) as a script importing the built package by
// its name, must end by itself, and must give the same matrices and charges as `sigmesh extract
// --json` on that scene; the sweep block runs once. Slow-ish (two keypad solves and a two-point
// sweep), so the blocks are kept to default settings.
import { describe, it, expect, beforeAll } from "vitest";
import { execFileSync, spawnSync } from "node:child_process";
import { mkdirSync, mkdtempSync, readFileSync, readdirSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";

const root = fileURLToPath(new URL("../../", import.meta.url));
const cli = join(root, "dist/cli/main.js");
// Scripts live inside the package so that `import … from "sigmesh"` resolves to this package (Node's self-reference through "exports").
const scripts = join(root, "tests/artifacts/readme");

/** The ```ts blocks of the README's "## Library" section, in order. */
function libraryBlocks(): string[] {
  const readme = readFileSync(join(root, "README.md"), "utf8");
  const start = readme.indexOf("\n## Library\n");
  expect(start, "README has a Library section").toBeGreaterThan(0);
  const end = readme.indexOf("\n## ", start + 5);
  const section = readme.slice(start, end < 0 ? undefined : end);
  return [...section.matchAll(/```ts\n([\s\S]*?)```/g)].map((m) => m[1]);
}

function runScript(name: string, code: string, cwd: string): { status: number | null; stdout: string; stderr: string } {
  const file = join(scripts, `${name}.mjs`);
  writeFileSync(file, code);
  // No closeSharedPool in the README: the script must end by itself well within the timeout.
  const r = spawnSync(process.execPath, [file], { cwd, encoding: "utf8", timeout: 500_000 });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

const relative = (a: number, b: number): number => Math.abs(a - b) / Math.max(Math.abs(a), Math.abs(b), 1e-300);

describe("README library section", () => {
  const blocks = libraryBlocks();
  const sceneBlocks = blocks.filter((b) => /loadScene\("([^"]+)"\)/.test(b));
  const demo = join(root, "meshes/demo");
  const scenes = readdirSync(demo).filter((f) => f.endsWith(".json"));

  beforeAll(() => { mkdirSync(scripts, { recursive: true }); });

  it("has a scene block that uses extract and writeOutputs, and a sweep block", () => {
    expect(sceneBlocks.length).toBeGreaterThan(0);
    expect(sceneBlocks.some((b) => /await extract\(scene/.test(b) && /writeOutputs\(/.test(b))).toBe(true);
    expect(blocks.some((b) => /runSweep\(/.test(b))).toBe(true);
    expect(scenes.length).toBeGreaterThanOrEqual(2);
  });

  for (const sceneFile of scenes) {
    it(`runs as written on ${sceneFile} and agrees with sigmesh extract --json`, () => {
      const scene = join(demo, sceneFile);
      for (const [i, block] of sceneBlocks.entries()) {
        const cwd = mkdtempSync(join(tmpdir(), "sigmesh-readme-"));
        const code = block.replace(/loadScene\("[^"]+"\)/, `loadScene(${JSON.stringify(scene)})`);
        const r = runScript(`scene-${i}-${sceneFile.replace(/\.json$/, "")}`, code, cwd);
        expect(r.stderr.includes("Error") ? r.stderr : "", "no error on stderr").toBe("");
        expect(r.status, "the script ends by itself with exit 0").toBe(0);
        const written = readdirSync(cwd);
        const jsonName = written.find((f) => f.endsWith(".json"));
        expect(jsonName, `the block writes a JSON report (wrote: ${written.join(", ")})`).toBeDefined();
        const lib = JSON.parse(readFileSync(join(cwd, jsonName!), "utf8"));
        execFileSync(process.execPath, [cli, "extract", scene, "--json", join(cwd, "cli.json"), "--quiet"], { encoding: "utf8" });
        const ref = JSON.parse(readFileSync(join(cwd, "cli.json"), "utf8"));
        expect(lib.conductors.map((c: { name: string }) => c.name)).toEqual(ref.conductors.map((c: { name: string }) => c.name));
        const pairs: Array<[number, number]> = [
          ...lib.capacitance.maxwell.flat().map((v: number, j: number) => [v, ref.capacitance.maxwell.flat()[j]]),
          ...lib.capacitance.mutual.flat().map((v: number, j: number) => [v, ref.capacitance.mutual.flat()[j]]),
          ...lib.conductors.map((c: { charge: number }, j: number) => [c.charge, ref.conductors[j].charge]),
          ...lib.conductors.map((c: { peakField: number }, j: number) => [c.peakField, ref.conductors[j].peakField]),
        ];
        for (const [a, b] of pairs) expect(relative(a, b)).toBeLessThanOrEqual(1e-12);
        // The matrix the script printed is the one it wrote.
        expect(r.stdout).toContain(String(lib.capacitance.maxwell[0][0]));
        expect(r.stdout).toContain(`sigmesh extract: ${scene}`);
      }
    }, 600_000); // two solves of the keypad: about 40 s on an idle machine, minutes on a loaded one
  }

  it("the sweep block runs as written: a table of two points, the finger's coupling falling with the gap", () => {
    const block = blocks.find((b) => /runSweep\(/.test(b))!;
    const r = runScript("sweep", block, root);
    expect(r.status, r.stderr).toBe(0);
    const lines = r.stdout.trim().split(/\r?\n/); // RFC 4180 records end in CRLF
    expect(lines[0]).toBe("point (of 2),fingerGap,\"C(key2,key2) (F)\",\"Cm(key2,finger) (F)\"");
    const rows = lines.slice(1).map((l) => l.split(",").map(Number));
    expect(rows.map((row) => row[1])).toEqual([3, 6]);
    for (const row of rows) { expect(row[2]).toBeGreaterThan(0); expect(row[3]).toBeGreaterThan(0); }
    // A finger twice as far from the key couples less (common practice; no closed form for this scene).
    expect(rows[1][3]).toBeLessThan(rows[0][3]);
  }, 600_000);
});
