// Dielectric bodies that partly overlap give a region with two permittivities: refused by
// extract (one line naming both bodies, exit 2, nothing written) and reported by check; a body
// nested wholly inside another and bodies that only touch stay allowed.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";
function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd: dir });
  return { code: r.status, out: r.stdout, err: r.stderr };
}
beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npm run build` first");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-overlap-"));
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

const pad = { name: "pad", potential: 1, shape: { box: { size: [2, 2, 0.5], divisions: 2 } }, place: { translate: [0, 0, 5] } };
const box = (name: string, er: number, size: number[], at: number[]) =>
  ({ name, permittivity: er, shape: { box: { size, divisions: 2 } }, place: { translate: at } });
function scene(file: string, dielectrics: object[]): void {
  writeFileSync(join(dir, file), JSON.stringify({ unit: "mm", conductors: [pad], dielectrics }));
}

describe("overlapping dielectric bodies", () => {
  it("two boxes that partly overlap: extract refuses naming both, check reports both", () => {
    scene("overlap.json", [box("low", 3, [4, 4, 2], [0, 0, 0]), box("high", 5, [4, 4, 2], [1, 0, 1])]);
    const r = run(["extract", "overlap.json", "--json", "out.json"]);
    expect(r.code).toBe(2);
    const lines = r.err.trim().split("\n");
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^sigmesh: error: overlap\.json: dielectrics low and high partly overlap \(their surfaces cross at \(.* mm\)/);
    expect(existsSync(join(dir, "out.json"))).toBe(false);
    const c = run(["check", "overlap.json", "--quiet"]);
    expect(c.code).toBe(2);
    expect(c.err).toMatch(/FAILED: overlap\.json: dielectrics low and high partly overlap/);
  });

  it("a body nested inside another, and two stacked bodies that touch, are accepted", () => {
    scene("nested.json", [box("outer", 3, [6, 6, 3], [0, 0, 0]), box("inner", 5, [2, 2, 1], [0, 0, 0])]);
    const n = run(["check", "nested.json", "--quiet"]);
    expect(n.code, n.err).toBe(0);
    scene("stacked.json", [box("board", 4, [4, 4, 1], [0, 0, 0]), box("mask", 3, [4, 4, 1], [0, 0, 1])]);
    const s = run(["check", "stacked.json", "--quiet"]);
    expect(s.code, s.err).toBe(0);
  });
});
