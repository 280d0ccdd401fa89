import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { parseMeshBytes } from "../../src/io/load.js";
import { InputError } from "../../src/errors.js";
import { fixtureBytes } from "./helpers.js";
import { msh41Binary, msh22Binary, msh40Ascii } from "./msh-fixtures.js";

// Corrupted real files must either load or fail with an InputError: never any other exception.
const files = ["tetra_solid_header.stl", "two_solids.stl", "tetra_quirks.stl", "parts.obj", "groups.obj", "two_tets_41.msh", "two_tets_22.msh", "two_tets_41_nophys.msh"];
// Binary MSH written byte by byte (tests/io/msh-fixtures.ts): a fault in the binary data must name its byte.
const built: Record<string, () => Uint8Array> = {
  "bin41_le8.msh": () => msh41Binary(true, 8),
  "bin41_be4.msh": () => msh41Binary(false, 4),
  "bin22_le.msh": () => msh22Binary(true),
  "bin22_be.msh": () => msh22Binary(false),
  "ascii40.msh": () => new TextEncoder().encode(msh40Ascii()),
};

const corruption = fc.oneof(
  fc.record({ kind: fc.constant("truncate" as const), at: fc.double({ min: 0, max: 1, noNaN: true }) }),
  fc.record({ kind: fc.constant("flip" as const), at: fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 8 }), bits: fc.integer({ min: 1, max: 255 }) }),
  fc.record({ kind: fc.constant("insert" as const), at: fc.double({ min: 0, max: 1, noNaN: true }), junk: fc.uint8Array({ minLength: 1, maxLength: 40 }) }),
  fc.record({ kind: fc.constant("count" as const), at: fc.double({ min: 0, max: 1, noNaN: true }), value: fc.constantFrom("0", "-1", "4294967295", "99999999999", "1e9", "3.5", "x") }),
);

function corrupt(bytes: Uint8Array, c: fc.Infer<typeof corruption>): Uint8Array {
  const n = bytes.length;
  const pos = (f: number) => Math.min(n, Math.floor(f * n));
  switch (c.kind) {
    case "truncate": return bytes.slice(0, pos(c.at));
    case "flip": { const b = bytes.slice(); for (const f of c.at) { const i = Math.min(n - 1, pos(f)); b[i] ^= c.bits; } return b; }
    case "insert": { const i = pos(c.at); const b = new Uint8Array(n + c.junk.length); b.set(bytes.subarray(0, i)); b.set(c.junk, i); b.set(bytes.subarray(i), i + c.junk.length); return b; }
    case "count": {
      // Replace the number nearest the chosen place (a count, a tag or a coordinate) with a bad one.
      const text = new TextDecoder("latin1").decode(bytes);
      const re = /-?\d+(\.\d+)?/g;
      const target = pos(c.at);
      let best: RegExpExecArray | null = null, m: RegExpExecArray | null;
      while ((m = re.exec(text)) !== null) { if (!best || Math.abs(m.index - target) < Math.abs(best.index - target)) best = m; }
      if (!best) return bytes;
      const out = text.slice(0, best.index) + c.value + text.slice(best.index + best[0].length);
      return Uint8Array.from(out, (ch) => ch.charCodeAt(0) & 255);
    }
  }
}

describe("fuzzed corruptions of real files", () => {
  for (const f of [...files, ...Object.keys(built)]) {
    it(`${f}: loads or throws InputError`, () => {
      const original = built[f]?.() ?? fixtureBytes(f);
      let failures = 0, loads = 0;
      fc.assert(fc.property(corruption, (c) => {
        const bytes = corrupt(original, c);
        try {
          const r = parseMeshBytes(bytes, f, { unit: "mm" });
          loads++;
          for (const x of r.mesh.positions) expect(Number.isFinite(x)).toBe(true);
          for (const v of r.mesh.triangles) expect(v).toBeLessThan(r.mesh.positions.length / 3);
          expect(r.mesh.conductor.length * 3).toBe(r.mesh.triangles.length);
        } catch (e) {
          if (!(e instanceof InputError)) throw e;
          failures++;
          expect(e.file).toBe(f);
          expect(e.message).not.toMatch(/\n/);
          if (f.startsWith("bin") && e.fault !== "empty file") expect(e.place ?? "").toMatch(/^(byte|line) \d+$/);
        }
      }), { numRuns: 300, seed: 20261201 });
      expect(loads + failures).toBe(300);
    });
  }
});

// CAD files go through the kernel (two triangulations a read): fewer runs.
describe("fuzzed corruptions of CAD files", () => {
  for (const f of ["cad/simple-basic-cube.stp", "cad/Cube 10x10.igs"]) {
    it(`${f}: loads or throws InputError`, () => {
      const original = fixtureBytes(f);
      fc.assert(fc.property(corruption, (c) => {
        try {
          const r = parseMeshBytes(corrupt(original, c), f, { unit: "mm" });
          for (const x of r.mesh.positions) expect(Number.isFinite(x)).toBe(true);
          expect(r.mesh.faces?.length).toBe(r.mesh.conductor.length);
        } catch (e) {
          if (!(e instanceof InputError)) throw e;
          expect(e.file).toBe(f);
          expect(e.message).not.toMatch(/\n/);
        }
      }), { numRuns: 25, seed: 20261205 });
    });
  }
});

describe("arbitrary bytes", () => {
  it("every reader, via every extension, either loads or throws InputError", () => {
    const names = ["r.stl", "r.obj", "r.msh", "r"];
    const prefixes = ["", "solid x\n", "$MeshFormat\n4.1 0 8\n$EndMeshFormat\n", "$MeshFormat\n2.2 0 8\n$EndMeshFormat\n$Nodes\n", "v 0 0 0\nf "].map((s) => new TextEncoder().encode(s));
    fc.assert(fc.property(fc.constantFrom(...names), fc.constantFrom(...prefixes), fc.uint8Array({ maxLength: 600 }), (file, pre, body) => {
      const bytes = new Uint8Array(pre.length + body.length);
      bytes.set(pre); bytes.set(body, pre.length);
      try { parseMeshBytes(bytes, file, { unit: "mm" }); } catch (e) { if (!(e instanceof InputError)) throw e; }
    }), { numRuns: 400, seed: 99 });
  });
});
