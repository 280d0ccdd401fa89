// End to end: every broken input gives exactly one line on stderr naming the file, the place
// (line or byte) and the fault, exit code 2, no stack trace (unless --debug), and no output
// file even when --json, --html and --spice are asked for. Odd but legal names reach the report.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, readdirSync, writeFileSync, readFileSync, mkdirSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { sphereMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { writeStlAscii } from "../../src/io/stl.js";
import { embeddedResults } from "../../src/report/html.js";
import { msh41Binary, msh22Binary } from "../io/msh-fixtures.js";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";
const enc = (s: string) => new TextEncoder().encode(s);

function run(args: string[], cwd: string) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

function binaryStl(tris: number[][], claimed = tris.length): Uint8Array {
  const out = new Uint8Array(84 + 50 * tris.length);
  out.set(enc("broken"));
  const dv = new DataView(out.buffer);
  dv.setUint32(80, claimed, true);
  tris.forEach((t, i) => t.forEach((v, k) => dv.setFloat32(84 + 50 * i + 12 + 4 * k, v, true)));
  return out;
}
const TRI = [0, 0, 0, 1, 0, 0, 0, 1, 0];
const FACET = (v: string) => `facet normal 0 0 1\nouter loop\nvertex 0 0 0\n${v}\nvertex 0 1 0\nendloop\nendfacet\n`;
const MSH22 = "$MeshFormat\n2.2 0 8\n$EndMeshFormat\n$Nodes\n3\n1 0 0 0\n2 1 0 0\n3 0 1 0\n$EndNodes\n$Elements\n1\n1 2 2 1 1 1 2 3\n$EndElements\n";
const cut = (b: Uint8Array, n: number) => b.subarray(0, b.length - n);
const setByte = (b: Uint8Array, at: number, v: number) => { const c = b.slice(); c[at] = v; return c; };
const oneAt = enc("$MeshFormat\n4.1 1 8\n").length;

/** [file name, content, expected place ("" for a whole-file fault), fault pattern]. */
const BROKEN: Array<[string, Uint8Array | string, string, RegExp]> = [
  ["truncated.stl", cut(binaryStl([TRI, TRI]), 30), "byte 80", /claims 2 triangles .*truncated/],
  ["overcount.stl", binaryStl([TRI], 7), "byte 80", /claims 7 triangles/],
  ["nan.stl", binaryStl([TRI, [0, 0, 0, NaN, 0, 0, 0, 1, 0]]), `byte ${84 + 50 + 24}`, /triangle 2: vertex 2 coordinate x is NaN/],
  ["bad vertex.stl", `solid a\n${FACET("vertex 1 zz 0")}endsolid a\n`, "line 5", /vertex y coordinate "zz" is not a finite number/],
  ["no endloop.stl", `solid a\n${FACET("vertex 1 0 0").replace("endloop\n", "")}endsolid a\n`, "line 7", /expected "endloop"/],
  ["range.obj", "v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\nf 1 2 9\n", "line 5", /face refers to vertex 9 but the file defines 3 vertices/],
  ["zero.obj", "v 0 0 0\nv 1 0 0\nv 0 1 0\nf 0 1 2\n", "line 4", /vertex index 0/],
  ["coord.obj", "v 0 0 0\nv 1 0 nan\n", "line 2", /not all finite numbers/],
  ["node.msh", MSH22.replace("1 1 2 3\n$End", "1 1 2 7\n$End"), "line 12", /element refers to node 7/],
  ["early.msh", MSH22.replace("$Nodes\n3", "$Nodes\n4"), "line 9", /\$Nodes ends early/],
  ["version.msh", MSH22.replace("2.2 0 8", "5.0 0 8"), "line 2", /MSH version 5\.0 not supported/],
  ["cut41.msh", cut(msh41Binary(), 60), "byte", /number of elements in block 1 is more than the file can hold \(14 bytes left\)/],
  // 9 is a tab: the reader must not take it for white space after the format line.
  ["order41.msh", setByte(msh41Binary(), oneAt, 9), `byte ${oneAt}`, /expected the int 1 after the format line/],
  ["cut22.msh", cut(msh22Binary(false), 40), "byte", /file ends inside \$Elements|expected \$EndElements/],
  ["empty.stl", "", "", /^empty file$/],
  ["empty.obj", "\n  \n", "", /^empty file/],
  ["flat.stl", `solid flat\n${FACET("vertex 2 0 0").replace("vertex 0 1 0", "vertex 3 0 0")}endsolid\n`, "", /no valid triangle left.*degenerate/],
  ["lines.msh", MSH22.replace("1 2 2 1 1 1 2 3", "1 1 2 1 1 1 2"), "", /no triangles in the file \(no surface elements .*1 line element/],
  ["junk.dat", "hello world\n", "", /unknown mesh format/],
  // STEP: the kernel's parser names the line where the file stops making sense.
  ["cut part.step", readFileSync(fileURLToPath(new URL("../fixtures/cad/rounded-cube.step", import.meta.url)), "latin1").slice(0, 9000), "line", /not a readable STEP file \(unexpected end of file/],
  ["junk.igs", "not an IGES file\n", "", /not a readable IGES file/],
  ["external.stp", readFileSync(fileURLToPath(new URL("../fixtures/cad/s1_pe_214-external-parts.stp", import.meta.url)), "latin1"), "", /no part with a solid or surface in the STEP file/],
];

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npm run build` first");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-broken-"));
  for (const [name, content] of BROKEN) writeFileSync(join(dir, name), typeof content === "string" ? enc(content) : content);
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

describe("broken inputs to sigmesh extract", () => {
  for (const [name, , place, fault] of BROKEN) {
    it(`${name}: one line with file, place and fault; exit 2; no output files`, () => {
      const out = join(dir, `out-${name.replace(/\W/g, "_")}`);
      mkdirSync(out);
      const r = run(["extract", join(dir, name), "--json", join(out, "r.json"), "--html", join(out, "r.html"), "--spice", join(out, "r.cir")], dir);
      expect(r.code).toBe(2);
      const lines = r.err.split("\n").filter((l) => l !== "");
      expect(lines).toHaveLength(1);
      const prefix = `sigmesh: error: ${join(dir, name)}: `;
      expect(lines[0].startsWith(prefix)).toBe(true);
      const rest = lines[0].slice(prefix.length);
      if (place === "byte") expect(rest).toMatch(/^byte \d+: /);
      else if (place === "line") expect(rest).toMatch(/^line \d+: /);
      else if (place !== "") expect(rest.startsWith(`${place}: `)).toBe(true);
      expect(rest.replace(/^(line|byte) \d+: /, "")).toMatch(fault);
      expect(r.err).not.toMatch(/\n\s+at /);
      expect(readdirSync(out)).toEqual([]);
    });
  }
  it("a missing file and a directory are one line each", () => {
    for (const [path, why] of [[join(dir, "nope.stl"), "no such file"], [dir, "is a directory"]]) {
      const r = run(["extract", path, "--json", join(dir, "never.json")], dir);
      expect(r.code).toBe(2);
      expect(r.err.trim()).toBe(`sigmesh: error: ${path}: ${why}${why === "is a directory" ? ", not a mesh file" : ""}`);
      expect(existsSync(join(dir, "never.json"))).toBe(false);
    }
  });
  it("a wrong --unit names the allowed set", () => {
    const r = run(["extract", join(dir, "nan.stl"), "--unit", "furlong"], dir);
    expect(r.code).toBe(2);
    expect(r.err.trim()).toMatch(/^sigmesh: error: --unit: unknown length unit "furlong" \(use m, cm, mm, um \(µm, micron\), in \(inch\), mil \(thou\)/);
  });
  it("--debug adds the stack trace", () => {
    const r = run(["--debug", "extract", join(dir, "nan.stl")], dir);
    expect(r.code).toBe(2);
    expect(r.err.split("\n")[0]).toMatch(/byte 158: triangle 2/);
    expect(r.err).toMatch(/\n\s+at /);
  });
});

describe("odd names reach the report", () => {
  it("solid names with spaces, unicode and markup survive to JSON and HTML; the file name has spaces too", () => {
    const a = sphereMesh({ radius: 1, level: 1, center: [-3, 0, 0], name: "HV électrode <A&B> \"1\"" });
    const b = sphereMesh({ radius: 1, level: 1, center: [3, 0, 0], name: "guard ring ✓" });
    const file = join(dir, "odd names é.stl");
    writeFileSync(file, "\uFEFF" + writeStlAscii(concatMeshes([a, b]), 1).replace(/\n/g, "\r\n"));
    const json = join(dir, "odd.json"), html = join(dir, "odd.html");
    const r = run(["extract", file, "--unit", "Millimetres", "--json", json, "--html", html, "--quiet"], dir);
    expect(r.err).toBe("");
    expect(r.code).toBe(0);
    const rep = JSON.parse(readFileSync(json, "utf8"));
    expect(rep.conductors.map((c: { name: string }) => c.name)).toEqual(["HV électrode <A&B> \"1\"", "guard ring ✓"]);
    const page = readFileSync(html, "utf8");
    expect(page).not.toContain("<A&B>");
    const embedded = embeddedResults(page)?.report as { conductors: Array<{ name: string }> };
    expect(embedded.conductors.map((c) => c.name)).toEqual(["HV électrode <A&B> \"1\"", "guard ring ✓"]);
  });
});
