import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { mkdtempSync, readdirSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { encodeMesh, outputFormatFromPath, writeMeshFile, type OutputFormat } from "../../src/io/write.js";
import { parseMeshBytes, loadMeshFile } from "../../src/io/load.js";
import { InputError } from "../../src/errors.js";
import type { SurfaceMesh } from "../../src/mesh/model.js";
import type { LengthUnit } from "../../src/io/units.js";

/** Random meshes: conductors of well-separated, well-shaped triangles (so welding and degenerate removal keep them all). */
const meshArb = fc.record({
  conductors: fc.array(fc.record({
    name: fc.string({ unit: fc.constantFrom(..."abcXYZ_-0123456789"), minLength: 1, maxLength: 8 }),
    tris: fc.array(fc.tuple(fc.double({ min: -1, max: 1, noNaN: true }), fc.double({ min: -1, max: 1, noNaN: true }), fc.double({ min: -1, max: 1, noNaN: true }), fc.double({ min: 0.1, max: 2, noNaN: true })), { minLength: 1, maxLength: 6 }),
  }), { minLength: 2, maxLength: 4 }),
  unit: fc.constantFrom<LengthUnit>("m", "mm", "um", "in", "mil"),
}).map(({ conductors, unit }) => {
  const pos: number[] = [], tri: number[] = [], cond: number[] = [];
  const names = [...new Set(conductors.map((c) => c.name))];
  const s = 1e-3;
  conductors.forEach((c, ci) => {
    c.tris.forEach(([x, y, z, size], ti) => {
      // Each triangle in its own lattice cell, far from the others: a right triangle of legs `size`.
      const ox = (ci * 10 + ti * 3) * s + x * s * 0.1, oy = y * s * 0.1, oz = z * s * 0.1, h = size * s;
      const v = pos.length / 3;
      pos.push(ox, oy, oz, ox + h, oy, oz, ox, oy + h, oz + 0.3 * h);
      tri.push(v, v + 1, v + 2);
      cond.push(names.indexOf(c.name));
    });
  });
  const used = [...new Set(cond)].sort((a, b) => a - b);
  const mesh: SurfaceMesh = { positions: new Float64Array(pos), triangles: new Uint32Array(tri), conductor: new Uint32Array(cond.map((c) => used.indexOf(c))), names: used.map((u) => names[u]) };
  return { mesh, unit };
});

/** Triangle corner coordinates grouped by conductor name. */
function corners(m: SurfaceMesh): Map<string, number[][]> {
  const out = new Map<string, number[][]>();
  for (let t = 0; t < m.triangles.length / 3; t++) {
    const list = out.get(m.names[m.conductor[t]]) ?? [];
    const c: number[] = [];
    for (let j = 0; j < 3; j++) for (let k = 0; k < 3; k++) c.push(m.positions[3 * m.triangles[3 * t + j] + k]);
    list.push(c);
    out.set(m.names[m.conductor[t]], list);
  }
  for (const l of out.values()) l.sort((a, b) => a[0] - b[0] || a[1] - b[1]);
  return out;
}

function expectSameGeometry(a: SurfaceMesh, b: SurfaceMesh, relTol: number, names: boolean): void {
  expect(b.triangles.length).toBe(a.triangles.length);
  const ca = corners(a), cb = corners(b);
  const la = [...ca.values()].flat().sort((p, q) => p[0] - q[0]);
  const lb = [...cb.values()].flat().sort((p, q) => p[0] - q[0]);
  let scale = 0;
  for (const p of la) for (const x of p) scale = Math.max(scale, Math.abs(x));
  la.forEach((p, i) => p.forEach((x, k) => expect(Math.abs(lb[i][k] - x)).toBeLessThanOrEqual(relTol * scale)));
  // A one-conductor file is named after its stem ("r"), whatever the conductor was called.
  if (names) expect([...cb.keys()].sort()).toEqual(a.names.length === 1 ? ["r"] : [...ca.keys()].sort());
}

describe("write → read round trips (random meshes)", () => {
  const cases: Array<[OutputFormat, string, number, boolean]> = [
    // float32 has a 24-bit significand: relative rounding ≤ 2^-24 ≈ 6e-8 per coordinate.
    ["stl", "r.stl", 1.2e-7, false],
    // 15 significant digits printed: relative error ≤ 5e-15 plus unit scaling.
    ["stl-ascii", "r.stl", 1e-14, true],
    ["obj", "r.obj", 1e-14, true],
  ];
  for (const [format, file, tol, names] of cases) {
    it(`${format} preserves geometry${names ? " and names" : ""}`, () => {
      fc.assert(fc.property(meshArb, ({ mesh, unit }) => {
        const back = parseMeshBytes(encodeMesh(mesh, format, unit), file, { unit }).mesh;
        expectSameGeometry(mesh, back, tol, names);
      }), { numRuns: 150, seed: 11 });
    });
  }
});

describe("output paths and atomic writing", () => {
  it("format from extension; unknown extensions are bad input", () => {
    expect(outputFormatFromPath("a.STL")).toBe("stl");
    expect(outputFormatFromPath("a.stl", true)).toBe("stl-ascii");
    expect(outputFormatFromPath("a.obj")).toBe("obj");
    expect(() => outputFormatFromPath("a.ply")).toThrowError(InputError);
  });
  it("writes the file in the unit and leaves no temporary behind", () => {
    const dir = mkdtempSync(join(tmpdir(), "sigmesh-write-"));
    const mesh: SurfaceMesh = { positions: new Float64Array([0, 0, 0, 0.0254, 0, 0, 0, 0.0254, 0]), triangles: new Uint32Array([0, 1, 2]), conductor: new Uint32Array(1), names: ["pad"] };
    writeMeshFile(join(dir, "pad.obj"), mesh, "obj", "in");
    expect(readdirSync(dir)).toEqual(["pad.obj"]);
    expect(readFileSync(join(dir, "pad.obj"), "utf8")).toMatch(/^v 1 0 0$/m);
    expect(loadMeshFile(join(dir, "pad.obj"), { unit: "in" }).mesh.positions[3]).toBeCloseTo(0.0254, 15);
  });
});
