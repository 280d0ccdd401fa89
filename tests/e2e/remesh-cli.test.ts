import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { writeMeshFile } from "../../src/io/write.js";
import { loadScene } from "../../src/io/inputs.js";
import { extract } from "../../src/extract/extract.js";
import { extractionSummary } from "../../src/report/extract-summary.js";
import { sceneReport } from "../../src/report/outputs.js";
import { closeSharedPool } from "../../src/linalg/pool.js";
import { sliverBox } from "../mesh/cad-style.js";
import { remeshFlatPatches } from "../../src/mesh/remesh.js";
import { boxMesh } from "../../src/mesh/primitives/index.js";

const root = fileURLToPath(new URL("../..", import.meta.url));
const cli = join(root, "dist/cli/main.js");
let dir = "", stl = "";
const run = (...args: string[]) => spawnSync(process.execPath, [cli, ...args], { cwd: dir, encoding: "utf8" });

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "sigmesh-remesh-"));
  stl = join(dir, "cad.stl");
  // A 4 mm CAD-style cube (slivers on every face), written in mm.
  writeMeshFile(stl, sliverBox([4e-3, 4e-3, 4e-3], [0.05, 0.5, 0.9]), "stl", "mm");
});
afterAll(() => closeSharedPool());

describe("remeshing of CAD-style mesh files", () => {
  it("check says what extract would change; --keep-mesh says nothing; the JSON carries it", () => {
    const r = run("check", stl, "--json", "check.json");
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/note: extract would remesh 6 flat patches \(\d+ → \d+ panels; worst aspect ratio \d+ → [\d.]+/);
    const json = JSON.parse(readFileSync(join(dir, "check.json"), "utf8"));
    expect(json.remesh.patches).toBe(6);
    expect(json.remesh.worstAspectAfter).toBeLessThan(4);
    expect(json.triangles).toBe(json.remesh.trianglesBefore); // the mesh checked is the one given
    const kept = run("check", stl, "--keep-mesh", "--json", "kept.json");
    expect(kept.status).toBe(0);
    expect(kept.stdout).not.toMatch(/would remesh/);
    expect(JSON.parse(readFileSync(join(dir, "kept.json"), "utf8")).remesh).toBeNull();
    expect(run("check", stl, "--panel-size", "-1").stderr).toMatch(/--panel-size "-1": expected a positive length/);
  });

  it("extract remeshes by default and says so (warning, summary, JSON input); --keep-mesh solves the mesh as given", async () => {
    const scene = loadScene(stl, { panelSize: 2 });
    expect(scene.remesh?.applied).toBe(true);
    expect(scene.mesh.triangles.length / 3).toBe(scene.remesh!.trianglesAfter);
    expect(scene.warnings.some((w) => /^remeshed 6 flat patches/.test(w.message))).toBe(true);
    const result = await extract(scene, { solver: "direct" });
    expect(extractionSummary(result)).toMatch(/Warnings\n {2}- remeshed 6 flat patches .*--keep-mesh solves on the mesh as given/);
    const input = sceneReport(result).input as { remeshed: { patches: number; panelsAfter: number } | null };
    expect(input.remeshed?.patches).toBe(6);
    const given = loadScene(stl, { keepMesh: true });
    expect(given.remesh).toBeUndefined();
    expect(given.mesh.triangles.length / 3).toBe(scene.remesh!.trianglesBefore);
    expect(given.warnings.some((w) => /remeshed/.test(w.message))).toBe(false);
    const plain = await extract(given, { solver: "direct" });
    expect(sceneReport(plain).input).toMatchObject({ remeshed: null });
  });

  it("a scene remeshes its mesh-file entries, never its generated shapes, and \"keepMesh\" keeps both", () => {
    const write = (name: string, extra: Record<string, unknown>) => {
      const file = join(dir, name);
      writeFileSync(file, JSON.stringify({
        unit: "mm", ...extra,
        conductors: [
          { name: "cad", mesh: "cad.stl" },
          { name: "box", shape: { box: { size: [4, 4, 0.1], divisions: [2, 2, 1] } }, place: { translate: [0, 0, 8] } },
        ],
      }));
      return file;
    };
    const s = loadScene(write("scene.json", { panelSize: 2 }));
    expect(s.remesh?.patches).toBe(6);
    const given = loadScene(write("kept.json", { keepMesh: true }));
    expect(given.remesh).toBeUndefined();
    const count = (m: typeof s.mesh, c: number) => Array.from(m.conductor).filter((x) => x === c).length;
    // The shape's panels (thin rim faces above the trigger) would be remeshed as a mesh file; as a shape they stay.
    expect(remeshFlatPatches(boxMesh({ size: [4e-3, 4e-3, 1e-4], divisions: [2, 2, 1] })).summary.patches).toBeGreaterThan(0);
    expect(count(s.mesh, 1)).toBe(count(given.mesh, 1));
    expect(count(s.mesh, 0)).toBeGreaterThan(count(given.mesh, 0));
    expect(() => loadScene(write("bad.json", { keepMesh: "yes" }))).toThrow(/keepMesh: expected true or false/);
    expect(() => loadScene(write("bad2.json", { panelSize: 0 }))).toThrow(/panelSize: expected a positive length in mm/);
  });
});
