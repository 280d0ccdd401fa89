/**
 * Multi-part conductors and dielectrics in scenes: a net of two far-apart parts against the
 * two-conductor solve of the same panels (the net's capacitance at 1 V is the sum of the 2×2
 * Maxwell matrix, an identity of linear superposition), two abutting boxes joined into the
 * closed box of both (shared faces removed), part then entry placement, and broken parts
 * refused by key path.
 */
import { describe, it, expect, afterAll } from "vitest";
import { mkdtempSync, writeFileSync, rmSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { tmpdir } from "node:os";
import { boxMesh, plateMesh } from "../../src/mesh/primitives/index.js";
import { surfaceArea, signedVolume } from "../../src/mesh/measure.js";
import { conductorTopology } from "../../src/mesh/topology.js";
import { boundingBox } from "../../src/mesh/model.js";
import { parseScene } from "../../src/io/scene.js";
import { loadSceneMesh } from "../../src/io/scene-mesh.js";
import { loadScene } from "../../src/io/inputs.js";
import { writeMeshFile } from "../../src/io/write.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

const dir = mkdtempSync(join(tmpdir(), "sigmesh-parts-"));
afterAll(async () => { rmSync(dir, { recursive: true, force: true }); await closeSharedPool(); });

const sceneFile = (name: string, value: unknown): string => {
  const f = join(dir, name);
  writeFileSync(f, JSON.stringify(value));
  return f;
};

describe("multi-part conductors", () => {
  it("a net of a shape and a mesh file carries the charge of both parts held at the same potential", async () => {
    // The mesh-file part is a 1 × 1 × 2 mm box (the generator works in metres) written in millimetres; the shape part a plate 3 mm away.
    writeMeshFile(join(dir, "pin.stl"), { ...boxMesh({ size: [1e-3, 1e-3, 2e-3], divisions: [2, 2, 4] }), names: ["pin"] }, "stl", "mm");
    const plate = { shape: { plate: { size: [4, 2], divisions: [6, 3] } }, place: { translate: [0, 0, 3] } };
    const pin = { mesh: "pin.stl", place: { translate: [-1, 0, 0] } };
    const net = loadScene(sceneFile("net.json", { unit: "mm", conductors: [{ name: "net", parts: [plate, pin] }] }));
    const two = loadScene(sceneFile("two.json", { unit: "mm", conductors: [{ name: "a", ...plate }, { name: "b", ...pin }] }));
    expect(net.mesh.names).toEqual(["net"]);
    expect(net.mesh.triangles.length).toBe(two.mesh.triangles.length);
    const rn = await extractMesh(net.mesh, { solver: "direct" });
    const r2 = await extractMesh(two.mesh, { solver: "direct" });
    const sum = r2.maxwell[0] + r2.maxwell[1] + r2.maxwell[2] + r2.maxwell[3];
    expect(rn.maxwell[0]).toBeGreaterThan(0);
    expect(Math.abs(rn.maxwell[0] / sum - 1)).toBeLessThan(1e-9);
  });

  it("two abutting boxes are one closed box: the face they share is removed", () => {
    const halves = { parts: [
      { shape: { box: { size: [1, 1, 1], divisions: 3 } }, place: { translate: [-0.5, 0, 0] } },
      { shape: { box: { size: [1, 1, 1], divisions: 3 } }, place: { translate: [0.5, 0, 0] } }] };
    const s = parseScene(JSON.stringify({ unit: "m", conductors: [{ name: "bar", ...halves, potential: 1 }], dielectrics: [{ name: "slab", ...halves, place: { translate: [0, 0, 5] }, permittivity: 3 }] }), join(dir, "h.json"));
    const m = loadSceneMesh(s);
    const one = boxMesh({ size: [2, 1, 1], divisions: [6, 3, 3] });
    for (const mesh of [m.mesh, m.dielectrics[0].mesh]) {
      const topo = conductorTopology(mesh)[0];
      expect(topo.closed).toBe(true);
      expect(topo.inconsistentEdges).toBe(0);
      expect(mesh.triangles.length).toBe(one.triangles.length);
      expect(surfaceArea(mesh)).toBeCloseTo(10, 12); // 2·(2·1 + 2·1 + 1·1) m²
      expect(signedVolume(mesh)).toBeCloseTo(2, 12);
      expect(mesh.positions.length).toBe(one.positions.length); // no vertex left over from the removed faces
    }
    expect(m.warnings.map((w) => w.message)).toEqual([
      "conductors[0]: 18 triangle(s) shared by two of its parts removed from both (inside the joined net)",
      "dielectrics[0]: 18 triangle(s) shared by two of its parts removed from both (inside the joined net)",
    ]);
  });

  it("place each part within the net, then the entry as a whole", () => {
    const s = parseScene(JSON.stringify({ unit: "mm", conductors: [{
      name: "l", place: { rotate: { axis: [0, 0, 1], degrees: 90 }, translate: [0, 0, 1] },
      parts: [{ shape: { box: { size: [1, 1, 1] } }, place: { translate: [5, 0, 0] } }, { shape: { sphere: { radius: 0.5 } } }] }] }), join(dir, "p.json"));
    const m = loadSceneMesh(s);
    const bb = boundingBox(m.mesh.positions);
    // The box's centre goes to (5, 0, 0) mm, then the quarter turn takes it to (0, 5, 0) mm, then up 1 mm.
    [-0.5e-3, -0.5e-3, 0.5e-3, 0.5e-3, 5.5e-3, 1.5e-3].forEach((x, i) => expect(bb[i]).toBeCloseTo(x, 12));
    expect(s.conductors[0].parts.map((p) => p.path)).toEqual(["conductors[0].parts[0]", "conductors[0].parts[1]"]);
  });

  it("names an unnamed net after its first part and keeps one-piece entries as they were", () => {
    writeMeshFile(join(dir, "tail.stl"), { ...plateMesh({ size: [1, 1], divisions: 2 }), names: ["tail"] }, "stl", "mm");
    const s = parseScene(JSON.stringify({ conductors: [{ parts: [{ mesh: "tail.stl" }, { shape: { sphere: { radius: 1, center: [0, 0, 3] } } }] }, { shape: { sphere: { radius: 1, center: [9, 0, 0] } } }] }), join(dir, "n.json"));
    expect(s.conductors.map((c) => c.name)).toEqual(["tail", "sphere"]);
    expect(s.conductors[1].parts).toHaveLength(1);
    expect(s.conductors[1].shape?.kind).toBe("sphere");
  });

  it("refuse broken parts with the key path of the fault", () => {
    const bad = (conductors: unknown[], re: RegExp): void => {
      const text = JSON.stringify({ unit: "mm", conductors });
      expect(() => loadSceneMesh(parseScene(text, join(dir, "bad.json")))).toThrow(re);
    };
    const ok = { name: "ok", shape: { sphere: { radius: 1, center: [0, 0, 9] } } };
    bad([ok, ok && { name: "b", shape: { sphere: { radius: 1 } } }, { name: "c", parts: [{ shape: { box: { size: [1, 1, 1] } } }, { shape: { box: { size: [1, -2, 1] } } }] }],
      /bad\.json: conductors\[2\]\.parts\[1\]\.shape\.box\.size/);
    bad([{ name: "c", parts: [] }], /conductors\[0\]\.parts: the list is empty/);
    bad([{ name: "c", parts: { mesh: "a.stl" } }], /conductors\[0\]\.parts: expected a list of parts/);
    bad([{ name: "c", parts: ["a.stl"] }], /conductors\[0\]\.parts\[0\]: expected an object/);
    bad([{ name: "c", mesh: "a.stl", parts: [{ mesh: "a.stl" }] }], /conductors\[0\]\.mesh: an entry with parts takes its mesh files and shapes inside the parts/);
    bad([{ name: "c", parts: [{ mesh: "a.stl", potential: 1 }] }], /conductors\[0\]\.parts\[0\]\.potential: unknown key \(a part takes mesh, shape, place, group, groups, description; name, potential/);
    bad([{ name: "c", parts: [{ place: { translate: [1, 0, 0] } }] }], /conductors\[0\]\.parts\[0\]\.mesh: missing/);
    bad([{ name: "c", parts: [{ shape: { box: { size: [1, 1, 1] } }, place: { translate: [1, 0] } }] }], /conductors\[0\]\.parts\[0\]\.place\.translate: expected \[x, y, z\]/);
    bad([{ name: "c", parts: [{ shape: { box: { size: [1, 1, 1] } } }, { mesh: "missing.stl" }] }], /missing\.stl: no such file/);
    bad([{ name: "c", parts: [{ shape: { box: { size: [1, 1, 1] } } }, { shape: { box: { size: [1, 1, 1] } } }] }], /conductors\[0\]\.parts: the parts are the same surface/);
  });

  it("take parameters in parts", () => {
    const s = parseScene(JSON.stringify({ parameters: { w: 2 }, conductors: [{ name: "c", parts: [{ shape: { plate: { size: ["=w", 1] } }, place: { translate: ["=w/2", 0, 0] } }] }] }), join(dir, "e.json"), { parameters: { w: 4 } });
    expect(s.conductors[0].parts[0].shape?.params.size).toEqual([4, 1]);
    expect(s.conductors[0].parts[0].place?.translate).toEqual([2, 0, 0]);
  });

  it("accept every key schema/scene.schema.json lists for entries and parts, and refuse others", () => {
    const schema = JSON.parse(readFileSync(new URL("../../schema/scene.schema.json", import.meta.url), "utf8"));
    const lists: Array<[string, string[], (k: string) => unknown]> = [
      ["conductors", Object.keys(schema.properties.conductors.items.properties), (k) => ({ conductors: [{ [k]: 1 }] })],
      ["dielectrics", Object.keys(schema.properties.dielectrics.items.properties), (k) => ({ conductors: [{ shape: { sphere: { radius: 1 } } }], dielectrics: [{ [k]: 1 }] })],
      ["parts", Object.keys(schema.$defs.part.properties), (k) => ({ conductors: [{ parts: [{ [k]: 1 }] }] })],
    ];
    for (const [what, keys, scene] of lists) {
      expect(keys.length, what).toBeGreaterThan(4);
      for (const k of keys) {
        let message = "";
        try { parseScene(JSON.stringify(scene(k)), "k.json"); } catch (e) { message = (e as Error).message; }
        expect(message, `${what}: ${k}`).not.toMatch(/unknown key/);
      }
      expect(() => parseScene(JSON.stringify(scene("colour")), "k.json"), what).toThrow(/colour: unknown key/);
    }
    expect(schema.properties.conductors.items.oneOf).toContainEqual({ required: ["parts"] });
  });
});
