// Faults of the geometry found before any factorisation, each naming the file: a conductor
// covering itself, a model outside the physical range of sizes, the ground-plane crossing, the
// memory refusals (also for the finest level of a refinement study, before the first solve).
import { describe, it, expect, afterAll } from "vitest";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { loadScene } from "../../src/io/inputs.js";
import { writeStlBinary } from "../../src/io/stl.js";
import { extract } from "../../src/extract/extract.js";
import { implausibleSize } from "../../src/extract/scene-check.js";
import { sphereMesh } from "../../src/mesh/primitives/index.js";
import type { SurfaceMesh } from "../../src/mesh/model.js";
import { InputError } from "../../src/errors.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

const dir = mkdtempSync(join(tmpdir(), "sigmesh-geometry-"));
afterAll(async () => { rmSync(dir, { recursive: true, force: true }); await closeSharedPool(); });

/** Write `mesh` (metres) as a binary STL in mm; returns its path. */
function stl(name: string, mesh: SurfaceMesh): string {
  const path = join(dir, name);
  writeFileSync(path, writeStlBinary(mesh, 1e-3));
  return path;
}

function withRepeat(m: SurfaceMesh, t: number): SurfaceMesh {
  const tri = Uint32Array.from([...m.triangles, m.triangles[3 * t + 2], m.triangles[3 * t + 1], m.triangles[3 * t]]);
  return { ...m, triangles: tri, conductor: new Uint32Array(tri.length / 3) };
}

/** The InputError a promise rejects with. */
async function fault(p: Promise<unknown>): Promise<InputError> {
  try { await p; } catch (e) { if (e instanceof InputError) return e; throw e; }
  throw new Error("expected an InputError");
}

const sphere = sphereMesh({ radius: 1e-3, level: 1 });

describe("extract refuses bad geometry before any solve, naming the file", () => {
  it("a sphere with a face repeated (reversed): the file, the conductor, the count and the place", async () => {
    const path = stl("repeat.stl", withRepeat(sphere, 7));
    const phases: string[] = [];
    const e = await fault(extract(loadScene(path), { progress: (p) => phases.push(p) }));
    expect(e.file).toBe(path);
    expect(e.fault).toMatch(/^conductor repeat covers itself: 1 triangle repeats another \(the same three corners\), the first at \(.*\) mm;/);
    expect(phases).toEqual([]);
  });

  it("a placement scaling a scene's conductor past the physical range: the scene file and the conductor", async () => {
    for (const [scale, pattern] of [[1e308, /conductor ball as placed: coordinate . = .* m lies .* from the origin, beyond the 1.00e6 m/], [1e-300, /the model is .* across .* smaller than the 1.00e-9 m/]] as const) {
      const scene = join(dir, `scaled-${scale}.json`);
      writeFileSync(scene, JSON.stringify({ unit: "mm", conductors: [{ name: "ball", shape: { sphere: { radius: 1, level: 1 } }, place: { scale } }] }));
      const e = await fault(extract(loadScene(scene)));
      expect(e.file).toBe(scene);
      expect(e.fault).toMatch(pattern);
    }
  });

  it("the ground-plane crossing names the file", async () => {
    const path = stl("low.stl", sphere);
    const e = await fault(extract(loadScene(path, { groundPlane: "z=0" })));
    expect(e.file).toBe(path);
    expect(e.fault).toMatch(/crosses the ground plane z = 0/);
  });

  it("the memory refusal names the file", async () => {
    const path = stl("big.stl", sphere);
    const e = await fault(extract(loadScene(path), { solver: "direct", memoryLimit: 1e4 }));
    expect(e.file).toBe(path);
    expect(e.fault).toMatch(/dense matrix for 80 panels needs about/);
  });

  it("refine K refuses at once when the finest level (4^K times the panels) cannot fit, before the first solve", async () => {
    const path = stl("refined.stl", sphere);
    const phases: string[] = [];
    // 80 panels fit in 1 MB (about 0.1 MB); 80·4² = 1280 do not (about 13 MB).
    const e = await fault(extract(loadScene(path), { solver: "direct", refine: 2, memoryLimit: 1e6, progress: (p) => phases.push(p) }));
    expect(e.file).toBe(path);
    expect(e.fault).toMatch(/^refine 2 solves up to 1280 panels \(4\^2 times the mesh's\) and the last level will not fit: the dense matrix for 1280 panels needs about/);
    expect(phases).toEqual([]);
  });
});

describe("loading refuses a model outside the physical range of sizes, naming the file and the place", () => {
  const tri = (coords: number[]) => ({ positions: new Float64Array(coords), triangles: new Uint32Array([0, 1, 2]), conductor: new Uint32Array(1), names: ["t"] });

  it("a coordinate of 1e308 (mm): the facet; one of 1e-300 across: the size", () => {
    const big = join(dir, "huge.stl");
    writeFileSync(big, "solid t\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 0 1 0\nvertex 1e308 0 0\nendloop\nendfacet\nendsolid\n");
    expect(() => loadScene(big)).toThrow(/huge\.stl: facet 1: coordinate x = 1e\+308 mm lies 1\.00e305 m from the origin, beyond the 1\.00e6 m a model may reach/);
    const tiny = stl("tiny.stl", tri([0, 0, 0, 1e-300, 0, 0, 0, 1e-300, 0]));
    expect(() => loadScene(tiny)).toThrow(/tiny\.stl: the model is .* m across \(bounding-box diagonal\), smaller than the 1\.00e-9 m/);
  });

  it("a small model far from the origin for its size; and the limits themselves pass", () => {
    const far = join(dir, "far.stl");
    writeFileSync(far, "solid t\nfacet normal 0 0 1\nouter loop\nvertex 1e8 0 0\nvertex 1e8 1e-2 0\nvertex 1e8 0 1e-2\nendloop\nendfacet\nendsolid\n");
    expect(() => loadScene(far, { unit: "mm" })).toThrow(/far\.stl: the model is .* across but lies 1\.00e5 m from the origin/);
    const edge = join(dir, "edge.stl");
    writeFileSync(edge, "solid t\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nvertex 0 1 0\nendloop\nendfacet\nendsolid\n");
    expect(loadScene(edge, { unit: "m" }).mesh.triangles.length).toBe(3);
    expect(loadScene(edge, { unit: "um" }).mesh.triangles.length).toBe(3);
  });
});

describe("reoriented surfaces", () => {
  it("the warning names the conductor whose surface was wound inward", async () => {
    const inward = (name: string, x: number): SurfaceMesh => {
      const m = sphereMesh({ radius: 1e-3, level: 1, center: [x, 0, 0], name });
      const tri = m.triangles.slice();
      for (let t = 0; t < tri.length; t += 3) { const b = tri[t + 1]; tri[t + 1] = tri[t + 2]; tri[t + 2] = b; }
      return { ...m, triangles: tri };
    };
    const good = sphereMesh({ radius: 1e-3, level: 1, center: [0, 0, 0], name: "good" });
    const scene = loadScene([stl("good.stl", good), stl("inside-out.stl", inward("x", 4e-3))], { unit: "mm" });
    const r = await extract(scene);
    const w = r.warnings.filter((s) => s.includes("reoriented"));
    expect(w).toEqual(["the surface of conductor inside-out was wound inward or inconsistently and has been reoriented"]);
  });
});

describe("implausible overall size", () => {
  it("warns when a file in metres is read in the assumed millimetres, naming the unit and the option; not once the unit is given", async () => {
    // A 90 mm ball written in metres (coordinates ~0.045).
    const path = join(dir, "ball-in-metres.stl");
    writeFileSync(path, writeStlBinary(sphereMesh({ radius: 0.045, level: 1 }), 1));
    const assumed = await extract(loadScene([path], {}));
    const w = assumed.input.warnings.filter((s) => s.includes("unusually"));
    expect(w).toHaveLength(1);
    expect(w[0]).toMatch(/ball-in-metres\.stl: the model is 0\.\d+ mm across with lengths read in mm \(assumed\), unusually small .*--unit/);
    const given = await extract(loadScene([path], { unit: "m" }));
    expect(given.input.warnings.some((s) => s.includes("unusually"))).toBe(false);
    expect(implausibleSize(sphereMesh({ radius: 1000, level: 0 }), "m", false)).toMatch(/^the model is \d+ m across with lengths read in m, unusually large/);
  });
});
