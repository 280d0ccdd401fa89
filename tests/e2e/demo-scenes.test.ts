// The bundled demo scenes load, pass the mesh check and describe what the demo says they do;
// `npm run demo` extracts them (not run here: it takes about a minute).
import { describe, it, expect } from "vitest";
import { readdirSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { join } from "node:path";
import { loadScene } from "../../src/io/inputs.js";
import { checkMesh } from "../../src/mesh/check.js";

const demo = fileURLToPath(new URL("../../meshes/demo/", import.meta.url));

describe("demo scenes", () => {
  const scenes = readdirSync(demo).filter((f) => f.endsWith(".json"));
  it("are bundled", () => {
    expect(scenes).toEqual(expect.arrayContaining(["keypad.json", "hv-electrode.json"]));
  });
  for (const file of scenes) {
    it(`${file} loads and passes the mesh check`, () => {
      const scene = loadScene([join(demo, file)]);
      expect(scene.mesh.names.length).toBeGreaterThan(1);
      const check = checkMesh(scene.mesh);
      expect(check.pairs.filter((p) => p.severity === "error")).toEqual([]);
    });
  }
  it("the keypad has its board over a ground plane and the electrode its high voltage", () => {
    const keypad = loadScene([join(demo, "keypad.json")]);
    expect(keypad.dielectrics.length).toBeGreaterThan(0);
    expect(keypad.groundPlane).toBeDefined();
    const hv = loadScene([join(demo, "hv-electrode.json")]);
    expect(Math.max(...Array.from(hv.potentials ?? [], (v) => Math.abs(v)))).toBeGreaterThanOrEqual(1000);
  });
});
