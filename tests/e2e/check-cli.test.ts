import { describe, it, expect, beforeAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync, readFileSync, existsSync, readdirSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";

const root = fileURLToPath(new URL("../..", import.meta.url));
const cli = join(root, "dist/cli/main.js");
let dir = "";

/** The 12 facets of the box [o, o+s], outward unless inward. */
function boxFaces(o: number[], s: number, inward = false): number[][][] {
  const v = (dx: number, dy: number, dz: number) => [o[0] + dx * s, o[1] + dy * s, o[2] + dz * s];
  const faces: number[][][] = [];
  for (let k = 0; k < 3; k++) {
    const a = (k + 1) % 3, b = (k + 2) % 3;
    for (const side of [0, 1]) {
      const at = (i: number, j: number) => { const c = [0, 0, 0]; c[k] = side; c[a] = i; c[b] = j; return v(c[0], c[1], c[2]); };
      const q = [at(0, 0), at(1, 0), at(1, 1), at(0, 1)];
      const out = (side === 1) !== inward;
      faces.push(out ? [q[0], q[1], q[2]] : [q[0], q[2], q[1]], out ? [q[0], q[2], q[3]] : [q[0], q[3], q[2]]);
    }
  }
  return faces;
}

/** ASCII STL of the box [o, o+s] (12 facets, outward unless inward). */
function boxStl(name: string, o: number[], s: number, inward = false): string {
  const faces = boxFaces(o, s, inward);
  const body = faces.map((f) => `  facet normal 0 0 0\n    outer loop\n${f.map((p) => `      vertex ${p.join(" ")}\n`).join("")}    endloop\n  endfacet\n`).join("");
  return `solid ${name}\n${body}endsolid ${name}\n`;
}

/**
 * Binary STL of several boxes as blocks end to end, as Gmsh writes one solid per physical
 * group: per block an 80-byte header (text, zero padded), a uint32 count, 50-byte records.
 */
function boxBlocksStl(blocks: Array<{ header: string; o: number[] }>): Uint8Array {
  const size = 84 + 50 * 12;
  const out = new Uint8Array(size * blocks.length);
  const dv = new DataView(out.buffer);
  blocks.forEach((b, i) => {
    out.set(new TextEncoder().encode(b.header).subarray(0, 80), size * i);
    dv.setUint32(size * i + 80, 12, true);
    boxFaces(b.o, 1).forEach((f, t) => f.flat().forEach((v, k) => dv.setFloat32(size * i + 84 + 50 * t + 12 + 4 * k, v, true)));
  });
  return out;
}

function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd: dir });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js is missing: run `npx tsc -p tsconfig.json` (npm test builds first)");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-check-"));
  writeFileSync(join(dir, "a.stl"), boxStl("a", [0, 0, 0], 1));
  writeFileSync(join(dir, "far.stl"), boxStl("far", [3, 0, 0], 1, true));
  writeFileSync(join(dir, "over.stl"), boxStl("over", [0.5, 0.5, 0.5], 1));
  writeFileSync(join(dir, "near.stl"), boxStl("near", [1.05, 0, 0], 1));
  writeFileSync(join(dir, "solids.stl"), boxBlocksStl([
    { header: "solid electrode", o: [0, 0, 0] }, { header: "plate", o: [3, 0, 0] }, { header: "\0".repeat(80), o: [6, 0, 0] },
  ]));
  writeFileSync(join(dir, "broken.stl"), "solid x\n  facet normal 0 0 1\n    outer loop\n      vertex 0 0 0\n      vertex 1 zero 0\n      vertex 0 1 0\n    endloop\n  endfacet\nendsolid x\n");
});

describe("sigmesh check", () => {
  it("passes clean conductors, reports a flipped one, and echoes the assumed unit", () => {
    const r = run(["check", "a.stl", "far.stl"]);
    expect(r.code).toBe(0);
    expect(r.out).toContain("unit: mm (assumed; set with --unit)");
    expect(r.out).toMatch(/^far .* inward-flipped/m);
    expect(r.out).toContain("OK:");
    expect(r.err).toBe("");
  });

  it("lists each solid of a binary STL written as blocks end to end as a conductor", () => {
    const r = run(["check", "solids.stl", "--json", "-"]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.conductors.map((c: { name: string }) => c.name)).toEqual(["electrode", "plate", "solids_1"]);
    expect(j.conductors.map((c: { triangles: number }) => c.triangles)).toEqual([12, 12, 12]);
    expect(j.ok).toBe(true);
    expect(r.err).not.toMatch(/ignored/);
  });

  it("writes JSON to stdout with --json - in SI units", () => {
    const r = run(["check", "a.stl", "far.stl", "--json", "-", "--unit", "cm"]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.conductors.map((c: { name: string }) => c.name)).toEqual(["a", "far"]);
    expect(j.conductors[0].triangles).toBe(12);
    expect(j.conductors[0].area).toBeCloseTo(6e-4, 15); // 6 cm² in m²
    expect(j.conductors[0].closed).toBe(true);
    expect(j.conductors[1].orientation).toBe("inward-flipped");
    expect(j.inputUnit).toBe("cm");
    expect(j.ok).toBe(true);
    // The human summary moves to stderr so that stdout stays JSON.
    expect(r.err).toContain("unit: cm (given with --unit)");
  });

  it("fails with exit 2 on intersecting conductors, still writing the report", () => {
    const r = run(["check", "a.stl", "over.stl", "--json", "over.json"]);
    expect(r.code).toBe(2);
    expect(r.out).toMatch(/FAILED: conductors a and over intersect at \(.*\) mm/);
    const j = JSON.parse(readFileSync(join(dir, "over.json"), "utf8"));
    expect(j.ok).toBe(false);
    expect(j.pairs[0]).toMatchObject({ kind: "intersect", severity: "error", a: "a", b: "over" });
  });

  it("warns on a narrow gap and exits 0", () => {
    const r = run(["check", "a.stl", "near.stl"]);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/warning: conductors a and near are only 0\.05000 mm apart/);
  });

  it("with --quiet prints only the failure", () => {
    const r = run(["check", "a.stl", "over.stl", "--quiet"]);
    expect(r.code).toBe(2);
    expect(r.out).toBe("");
    expect(r.err.trim().split("\n")).toHaveLength(1);
    expect(r.err).toContain("FAILED: conductors a and over intersect");
  });

  it("rejects a broken file in one line, exit 2, and writes no JSON", () => {
    const r = run(["check", "a.stl", "broken.stl", "--json", "broken.json"]);
    expect(r.code).toBe(2);
    const lines = r.err.trim().split("\n");
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/broken\.stl.*line 5/);
    expect(r.err).not.toMatch(/\n\s+at /);
    expect(existsSync(join(dir, "broken.json"))).toBe(false);
    expect(readdirSync(dir).filter((f) => f.endsWith(".tmp"))).toEqual([]);
  });

  it("rejects a missing file and an unknown unit with exit 2", () => {
    expect(run(["check", "nope.stl"]).code).toBe(2);
    const u = run(["check", "a.stl", "--unit", "furlong"]);
    expect(u.code).toBe(2);
    expect(u.err).toContain("unknown length unit");
  });
});
