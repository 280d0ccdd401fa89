// End to end: `sigmesh check scene.json` builds the scene as extract does (shapes, parts,
// dielectric bodies, planes), names all of it, writes the built meshes for inspection, and
// refuses (exit 2, one line naming the scene) a conductor crossing the ground plane.
import { describe, it, expect, beforeAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync, readFileSync, existsSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { loadMeshFiles } from "../../src/io/load.js";

const root = fileURLToPath(new URL("../..", import.meta.url));
const cli = join(root, "dist/cli/main.js");
let dir = "";

function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd: dir });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

/** A shape conductor, a net of two parts, a dielectric box and a ground plane; `padZ` places the shape conductor's centre. */
function scene(padZ: number) {
  return JSON.stringify({
    unit: "mm", groundPlane: { z: 0 },
    conductors: [
      { name: "pad", shape: { box: { size: [2, 2, 1], divisions: 2 } }, place: { translate: [0, 0, padZ] } },
      { name: "net", parts: [
        { shape: { box: { size: [1, 1, 1], divisions: 1 } }, place: { translate: [5, 0, 2] } },
        { shape: { sphere: { radius: 0.5, level: 1 } }, place: { translate: [-5, 0, 2] } }] },
    ],
    dielectrics: [{ name: "slab", shape: { box: { size: [4, 4, 1], divisions: 2 } }, place: { translate: [0, 0, 4] }, permittivity: 4 }],
  });
}

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js is missing: run `npx tsc -p tsconfig.json` (npm test builds first)");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-check-scene-"));
  writeFileSync(join(dir, "board.json"), scene(2));
  writeFileSync(join(dir, "sunk.json"), scene(0.2)); // the pad reaches 0.3 mm below z = 0
});

describe("sigmesh check on a scene file", () => {
  it("names the conductors, the dielectric body and the planes, and passes", () => {
    const r = run(["check", "board.json"]);
    expect(r.err).toBe("");
    expect(r.code).toBe(0);
    expect(r.out).toContain("from board.json");
    expect(r.out).toContain("unit: mm (the scene's; --unit overrides it)");
    // The box shape with 2 divisions per edge: 6 faces of 2×2 quads, two triangles each.
    expect(r.out).toMatch(/^pad\s+48\s/m);
    // Two parts, one net: a 12-triangle box and an 80-triangle sphere.
    expect(r.out).toMatch(/^net\s+92\s/m);
    expect(r.out).toContain("dielectric slab: εr 4.000, 48 triangles, closed, volume 16.00 mm³");
    expect(r.out).toContain("ground plane: z = 0.000 mm");
    expect(r.out).toContain("symmetry plane: none");
    expect(r.out).toContain("OK: scene can be solved");
  });

  it("writes the JSON scene object in SI units", () => {
    const r = run(["check", "board.json", "--unit", "cm", "--json", "-"]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.inputUnit).toBe("cm");
    expect(j.ok).toBe(true);
    expect(j.scene.file).toBe("board.json");
    expect(j.scene.dielectrics).toHaveLength(1);
    expect(j.scene.dielectrics[0]).toMatchObject({ name: "slab", permittivity: 4, triangles: 48, closed: true, fault: null });
    // --unit cm overrides the scene's mm: the 4×4×1 box is 16 cm³.
    expect(j.scene.dielectrics[0].volume).toBeCloseTo(16e-6, 18);
    expect(j.scene.planes).toEqual({ groundPlane: { axis: "z", offset: 0 }, symmetry: [], inSymmetryPlane: 0, fault: null });
  });

  it("--write-mesh writes conductors and dielectric bodies as named solids that read back", () => {
    const r = run(["check", "board.json", "--write-mesh", "built.stl", "--quiet"]);
    expect(r.code).toBe(0);
    const back = loadMeshFiles([join(dir, "built.stl")], { unit: "mm" });
    expect(back.mesh.names).toEqual(["pad", "net", "dielectric:slab"]);
    const counts = back.mesh.names.map((_, c) => back.mesh.conductor.filter((x) => x === c).length);
    expect(counts).toEqual([48, 92, 48]);
    // Written in the scene's unit: the slab's top at z = 4.5 mm.
    let top = -Infinity;
    for (let t = 0; t < back.mesh.conductor.length; t++) if (back.mesh.conductor[t] === 2) {
      for (let k = 0; k < 3; k++) top = Math.max(top, back.mesh.positions[3 * back.mesh.triangles[3 * t + k] + 2]);
    }
    expect(top).toBeCloseTo(4.5e-3, 12);
  });

  it("refuses a conductor crossing the ground plane: exit 2 and one line naming the scene", () => {
    const r = run(["check", "sunk.json", "--quiet", "--write-mesh", "sunk.obj"]);
    expect(r.code).toBe(2);
    const lines = r.err.trim().split("\n");
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^sigmesh: FAILED: sunk\.json: conductor pad crosses the ground plane z = 0\.000 mm \(its lowest point is at z = -0\.3000 mm\)/);
    // The meshes are still written for inspection, as the report is.
    expect(readFileSync(join(dir, "sunk.obj"), "utf8")).toContain("o dielectric:slab");
    const full = run(["check", "sunk.json"]);
    expect(full.code).toBe(2);
    expect(full.out).toMatch(/^FAILED: sunk\.json: conductor pad crosses the ground plane/m);
    expect(full.out).not.toContain("OK:");
    // extract refuses the same scene with the same lengths, in the scene's unit.
    const ex = run(["extract", "sunk.json", "--quiet"]);
    expect(ex.code).toBe(2);
    expect(ex.err).toMatch(/^sigmesh: error: sunk\.json: conductor pad crosses the ground plane z = 0\.000 mm \(its lowest point is at z = -0\.3000 mm\)/);
  });

  it("refuses a bad --write-mesh target before any work", () => {
    const r = run(["check", "board.json", "--write-mesh", "built.ply"]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/built\.ply: cannot write mesh format "\.ply"; use \.stl or \.obj/);
  });

  it("with a symmetry plane, judges a half dielectric body unfolded, as extract does, and refuses one reaching across", () => {
    const half = (x: number, width: number) => JSON.stringify({
      unit: "mm", symmetry: [{ x: 0 }],
      conductors: [{ name: "pad", shape: { box: { size: [2, 2, 1], divisions: 2 } }, place: { translate: [1, 0, 2] } }],
      dielectrics: [{ name: "slab", shape: { box: { size: [width, 4, 1], divisions: 2 } }, place: { translate: [x, 0, 4] }, permittivity: 4 }],
    });
    writeFileSync(join(dir, "half.json"), half(1, 2)); // x from 0 to 2: the half of a 4×4×1 box
    writeFileSync(join(dir, "across.json"), half(0, 4)); // x from -2 to 2: the whole box, across the plane
    const ok = run(["check", "half.json"]);
    expect(ok.code).toBe(0);
    expect(ok.out).toContain("symmetry plane: x = 0.000 mm, images even");
    expect(ok.out).toContain("dielectric slab: εr 4.000, 48 triangles, closed, volume 16.00 mm³");
    const bad = run(["check", "across.json", "--quiet"]);
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/^sigmesh: FAILED: across\.json: dielectric slab reaches across the symmetry plane x = 0\.000 mm/);
    const ex = run(["extract", "across.json", "--quiet"]);
    expect(ex.code).toBe(2);
    expect(ex.err).toMatch(/^sigmesh: error: across\.json: dielectric slab reaches across the symmetry plane x = 0\.000 mm/);
  });
});
