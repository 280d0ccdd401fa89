// The CLI on geometry that cannot be solved: `check` fails with a FAILED line and `extract` stops
// with one line naming the file, exit 2, no stack trace, before any solve.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync, existsSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { sphereMesh } from "../../src/mesh/primitives/index.js";
import { writeStlBinary } from "../../src/io/stl.js";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";

function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd: dir });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "sigmesh-geometry-cli-"));
  const s = sphereMesh({ radius: 1e-3, level: 2 });
  const tri = Uint32Array.from([...s.triangles, ...s.triangles.subarray(3 * 40, 3 * 41)]);
  writeFileSync(join(dir, "repeat.stl"), writeStlBinary({ ...s, triangles: tri, conductor: new Uint32Array(tri.length / 3) }, 1e-3));
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

describe("a sphere with one face repeated", () => {
  it("fails `check` with the conductor, the count and the place; exit 2", () => {
    const r = run(["check", "repeat.stl"]);
    expect(r.code).toBe(2);
    expect(r.out).toMatch(/^FAILED: conductor repeat covers itself: 1 triangle repeats another \(the same three corners\), the first at \(.*\) mm;/m);
    expect(r.out).not.toContain("OK:");
  });

  it("`check --json` records it per conductor and is not ok", () => {
    const r = run(["check", "repeat.stl", "--json", "-", "--quiet"]);
    expect(r.code).toBe(2);
    const report = JSON.parse(r.out);
    expect(report.ok).toBe(false);
    expect(report.conductors[0].selfOverlap).toMatchObject({ repeated: 1, overlapping: 0, lowerBound: false });
    expect(report.conductors[0].triangles).toBe(321);
  });

  it("is refused by `extract` in one line naming the file, exit 2, no output written", () => {
    const r = run(["extract", "repeat.stl", "--json", "out.json"]);
    expect(r.code).toBe(2);
    const lines = r.err.split("\n").filter((l) => l !== "");
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^sigmesh: error: repeat\.stl: conductor repeat covers itself: 1 triangle repeats another/);
    expect(r.err).not.toMatch(/\n\s+at /);
    expect(existsSync(join(dir, "out.json"))).toBe(false);
  });
});
