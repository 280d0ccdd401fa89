/**
 * The library's pipeline: `extract(scene)` solves everything the scene holds (here a ground
 * plane, a dielectric slab, a floating conductor and a probe), exactly as `extractMesh` does when
 * handed each of those by hand; it refuses touching conductors naming the scene, reports the
 * input warnings as they are found, and stops on an AbortSignal.
 */
import { describe, it, expect, afterAll } from "vitest";
import { mkdtempSync, writeFileSync, rmSync } from "node:fs";
import { join } from "node:path";
import { tmpdir } from "node:os";
import { loadScene } from "../../src/io/inputs.js";
import { InputError } from "../../src/errors.js";
import { extract } from "../../src/extract/extract.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { parseProbeOption } from "../../src/io/probe-spec.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

const dir = mkdtempSync(join(tmpdir(), "sigmesh-pipeline-"));
afterAll(async () => { rmSync(dir, { recursive: true, force: true }); await closeSharedPool(); });

function sceneFile(name: string, value: unknown): string {
  const file = join(dir, name);
  writeFileSync(file, JSON.stringify(value));
  return file;
}

// Two square pads on a slab over a ground plane, a floating strip between them, a probe above.
const board = {
  unit: "mm",
  conductors: [
    { name: "a", shape: { box: { size: [4, 4, 0.2], divisions: [4, 4, 1], center: [-3.5, 0, 1.1] } }, potential: 2 },
    { name: "b", shape: { box: { size: [4, 4, 0.2], divisions: [4, 4, 1], center: [3.5, 0, 1.1] } }, potential: 0 },
    { name: "strip", shape: { box: { size: [1, 4, 0.2], divisions: [1, 4, 1], center: [0, 0, 1.1] } }, floating: true },
  ],
  dielectrics: [{ name: "slab", shape: { box: { size: [14, 8, 1], divisions: [7, 4, 1], center: [0, 0, 0.5] } }, permittivity: 4 }],
  groundPlane: { z: 0 },
  probes: [{ name: "above", line: { from: [0, 0, 2], to: [0, 0, 5], points: 4 } }],
};

describe("extract(scene)", () => {
  it("solves everything the scene holds, as extractMesh does with each part handed over by hand", async () => {
    const scene = loadScene(sceneFile("board.json", board));
    const r = await extract(scene, { solver: "direct" });
    const byHand = await extractMesh(scene.mesh, {
      solver: "direct", potentials: scene.potentials, permittivity: scene.permittivity, groundPlane: scene.groundPlane,
      floating: scene.floating, dielectrics: scene.dielectrics,
    });
    expect(Array.from(r.maxwell)).toEqual(Array.from(byHand.maxwell));
    expect(r.floatingNames).toEqual(["strip"]);
    expect(r.reference).toBe("ground plane");
    expect(r.dielectric?.bodies.map((b) => b.name)).toEqual(["slab"]);
    // The scene's probe line, evaluated on the result.
    expect(r.probes.map((p) => p.spec.name)).toEqual(["above"]);
    expect(r.probes[0].points.length).toBe(12);
    expect(r.input.scene).toContain("board.json");
    expect(r.input.unit).toBe("mm");
    // The bare mesh alone (no slab, no ground) is a different problem: the surroundings reached the solve.
    const bare = await extractMesh(scene.mesh, { solver: "direct" });
    expect(Math.abs(bare.maxwell[0] - r.maxwell[0]) / r.maxwell[0]).toBeGreaterThan(0.2);
  });

  it("adds the run's probes to the scene's", async () => {
    const scene = loadScene(sceneFile("pair.json", { conductors: board.conductors.slice(0, 2) }));
    const r = await extract(scene, { probes: [parseProbeOption("mid=point:0,0,1.1")] });
    expect(r.probes.map((p) => p.spec.name)).toEqual(["mid"]);
    // Half way between pads at 2 V and 0 V with no ground: the potential lies between them.
    const v = r.probes[0].result.potential[0];
    expect(v).toBeGreaterThan(0);
    expect(v).toBeLessThan(2);
  });

  it("refuses touching conductors with one line naming the scene file", async () => {
    const touching = sceneFile("touch.json", { conductors: [
      { name: "p", shape: { box: { size: [2, 2, 2], center: [0, 0, 0] } } },
      { name: "q", shape: { box: { size: [2, 2, 2], center: [2, 0, 0] } } },
    ] });
    const err = await extract(loadScene(touching)).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect((err as InputError).file).toBe(touching);
    expect((err as InputError).message).toMatch(/conductors p and q touch/);
  });

  it("passes the input warnings to warn before the solve, and keeps them in the result", async () => {
    const near = sceneFile("near.json", { conductors: [
      { name: "p", shape: { box: { size: [2, 2, 2], divisions: 2, center: [0, 0, 0] } } },
      { name: "q", shape: { box: { size: [2, 2, 2], divisions: 2, center: [2.05, 0, 0] } } },
    ] });
    const seen: string[] = [];
    let solvedBeforeWarning = false;
    const r = await extract(loadScene(near), {
      warn: (m) => seen.push(m),
      progress: () => { if (seen.length === 0) solvedBeforeWarning = true; },
    });
    expect(seen.some((m) => /only .* apart/.test(m))).toBe(true);
    expect(solvedBeforeWarning).toBe(false);
    expect(r.input.warnings).toEqual(expect.arrayContaining(seen));
  });

  it("stops on an AbortSignal: at once when already aborted, and mid-run at the next progress step", async () => {
    const scene = loadScene(sceneFile("abort.json", { conductors: board.conductors.slice(0, 2) }));
    const before = new AbortController();
    before.abort();
    await expect(extract(scene, { signal: before.signal })).rejects.toMatchObject({ name: "AbortError" });
    const during = new AbortController();
    let steps = 0;
    const run = extract(scene, { signal: during.signal, progress: () => { if (++steps === 1) during.abort(); } });
    await expect(run).rejects.toMatchObject({ name: "AbortError" });
    expect(steps).toBe(1);
  });
});
