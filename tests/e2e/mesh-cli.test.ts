// End to end: `node dist/cli/main.js mesh ...` (build with `npx tsc -p tsconfig.json` first),
// read back with the library's loader, and bad parameters refused with one line and no file.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, readdirSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { loadMeshFile } from "../../src/io/load.js";
import { surfaceArea, signedVolume } from "../../src/mesh/measure.js";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";

function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8" });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npx tsc -p tsconfig.json` first");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-mesh-"));
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

describe("sigmesh mesh", () => {
  it("says when a mesh is far finer than an extraction needs, with its file size and what its solve would take", () => {
    const out = join(dir, "big.stl");
    const r = run(["mesh", "sphere", "--radius", "2", "--level", "8", "-o", out, "--quiet"]);
    expect(r.code).toBe(0);
    expect(r.err).toMatch(/^sigmesh: warning: 1310720 triangles \(65\.5 MB\): an extraction of this mesh needs about \d+(\.\d)? GB and minutes; a coarser mesh/);
  });

  it("writes a binary STL sphere in mm that reads back with 320 triangles and the polyhedral area", () => {
    const out = join(dir, "s.stl");
    const r = run(["mesh", "sphere", "--radius", "2", "--level", "2", "--unit", "mm", "-o", out]);
    expect(r.code).toBe(0);
    expect(r.err).toMatch(/sphere.*320 triangles.*lengths in mm.*s\.stl \(16\.1 kB\)/);
    expect(r.err).not.toMatch(/warning/);
    // The area reads as `check` prints it: same digits, mm² rather than mm^2.
    const printed = /area (\S+) mm², /.exec(r.err)?.[1];
    expect(printed, r.err).toMatch(/^\d+\.\d{2}$/);
    const checked = run(["check", out, "--unit", "mm"]);
    expect(checked.out).toMatch(new RegExp(`^s +320 +${printed!.replace(".", "\\.")} `, "m"));
    const loaded = loadMeshFile(out, { unit: "mm" }).mesh;
    expect(loaded.triangles.length / 3).toBe(320);
    const area = surfaceArea(loaded);
    // Below 4 pi R^2 = 50.27 mm^2 (inscribed polyhedron), within 2% at level 2.
    expect(area).toBeLessThan(4 * Math.PI * 4e-6);
    expect(area).toBeGreaterThan(0.98 * 4 * Math.PI * 4e-6);
    expect(signedVolume(loaded)).toBeGreaterThan(0);
  });

  it("writes an ASCII STL graded box in inches with its exact area and volume", () => {
    const out = join(dir, "b.stl");
    const r = run(["mesh", "box", "--size", "1,2,3", "--divisions", "3", "--grading", "4", "--center", "-1,2,3", "--unit", "in", "--ascii", "-o", out]);
    expect(r.code).toBe(0);
    const m = loadMeshFile(out, { unit: "in" }).mesh;
    const inch = 25.4e-3;
    expect(m.triangles.length / 3).toBe(4 * 27);
    // ASCII STL keeps enough digits for 1e-9 relative.
    expect(Math.abs(surfaceArea(m) / (22 * inch * inch) - 1)).toBeLessThan(1e-9);
    expect(Math.abs(signedVolume(m) / (6 * inch ** 3) - 1)).toBeLessThan(1e-9);
  });

  it("writes OBJ for the other shapes", () => {
    for (const [shape, args, triangles] of [
      ["disk", ["--radius", "1", "--divisions", "3"], 6 + 18 + 30],
      ["cylinder", ["--radius", "1", "--height", "2", "--divisions", "12", "--axis", "x"], undefined],
      ["torus", ["--major-radius", "3", "--minor-radius", "1", "--divisions", "24,8"], 2 * 24 * 8],
      ["plate", ["--size", "2,1", "--divisions", "4,2", "--grading", "2"], 16],
      ["bar", ["--length", "10", "--width", "1", "--thickness", "0.1", "--name", "trace"], 4 * (40 * 4 + 4 + 40)],
      // Filleted box: 2 flat divisions (spacing 1) and one step per half fillet (pi/4 < 1) on each axis, a 4 x 4 x 4 lattice.
      ["box", ["--size", "4,4,4", "--fillet", "1", "--divisions", "2"], 4 * 3 * 16],
      ["capsule", ["--radius", "1", "--length", "2", "--axis", "y"], undefined],
      ["washer", ["--inner-radius", "1", "--outer-radius", "3", "--thickness", "0.5", "--edge-radius", "0.1"], undefined],
      ["plate", ["--size", "20,10", "--holes", "-5,0,1.5;5,0,1.5", "--grading", "3"], undefined],
    ] as [string, string[], number | undefined][]) {
      const out = join(dir, `${shape}.obj`);
      const r = run(["mesh", shape, ...args, "-o", out]);
      expect(r.code, r.err).toBe(0);
      const m = loadMeshFile(out, { unit: "mm" }).mesh;
      if (triangles !== undefined) expect(m.triangles.length / 3).toBe(triangles);
      expect(surfaceArea(m)).toBeGreaterThan(0);
    }
  });

  const bad: [string[], RegExp][] = [
    [["mesh", "sphere", "--radius", "-2"], /--radius must be positive/],
    [["mesh", "sphere", "--radius", "2", "--level", "2.5"], /--level/],
    [["mesh", "sphere"], /--radius/],
    [["mesh", "box", "--size", "1,2"], /--size takes 3 values/],
    [["mesh", "box", "--size", "1,x,2"], /--size "x" is not a number/],
    [["mesh", "torus", "--major-radius", "1", "--minor-radius", "1"], /--minor-radius must be less than --major-radius/],
    [["mesh", "disk", "--radius", "1", "--grading", "0"], /--grading must be at least 1/],
    [["mesh", "plate", "--size", "1,1", "--radius", "1"], /--radius does not apply to a plate/],
    [["mesh", "dodecahedron", "--radius", "1"], /unknown shape/],
    [["mesh", "sphere", "--radius", "1", "--unit", "furlong"], /--unit: unknown length unit/],
    [["mesh", "box", "--size", "1,1,1", "--divisions", "5000"], /more than the limit/],
    [["mesh", "box", "--size", "4,4,1", "--fillet", "0.6"], /--fillet must be at most half the smallest side \(0\.5\), got 0\.6/],
    [["mesh", "plate", "--size", "10,6", "--holes", "0,0,1;1.5,0,1"], /--holes: hole 2 overlaps or touches hole 1/],
    [["mesh", "washer", "--inner-radius", "3", "--outer-radius", "1", "--thickness", "1"], /--inner-radius must be less than --outer-radius/],
    [["mesh", "capsule", "--radius", "1", "--length", "-1"], /--length must be 0 or more/],
  ];
  it.each(bad)("%j: exit 2, one line on stderr, no file written", (args, re) => {
    const out = join(dir, "bad", "x.stl");
    const r = run([...args, "-o", out]);
    expect(r.code).toBe(2);
    const lines = r.err.trimEnd().split("\n");
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^sigmesh: error: /);
    expect(lines[0]).toMatch(re);
    expect(existsSync(out)).toBe(false);
    if (existsSync(join(dir, "bad"))) expect(readdirSync(join(dir, "bad"))).toEqual([]);
  });

  it("without -o nothing is generated and the message says what to give", () => {
    const r = run(["mesh", "sphere", "--radius", "1"]);
    expect(r.code).toBe(2);
    expect(r.err.trimEnd().split("\n")).toHaveLength(1);
    expect(r.err).toMatch(/-o/);
  });

  it("an unknown output extension is refused naming the file", () => {
    const out = join(dir, "x.ply");
    const r = run(["mesh", "sphere", "--radius", "1", "-o", out]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/x\.ply.*\.stl or \.obj/);
    expect(existsSync(out)).toBe(false);
  });
});
