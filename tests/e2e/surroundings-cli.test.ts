// End to end: symmetry planes with odd and both images and per-medium breakdown strengths,
// through scene keys and --symmetry, into the JSON report and the summary; bad values refused
// with one line and exit 2.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";
function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd: dir });
  return { code: r.status, out: r.stdout, err: r.stderr };
}
const ball = { name: "p", shape: { sphere: { radius: 1, level: 2 } }, place: { translate: [1.5, 0, 0] }, potential: 1 };

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npm run build` first");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-surround-"));
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

describe("symmetry images in scenes and on the command line", () => {
  it("images both with mirrored opposite: the full pair from the half, the mirror its own net; odd gives C11 − C12", () => {
    writeFileSync(join(dir, "both.json"), JSON.stringify({ unit: "mm", symmetry: [{ x: 0, images: "both", mirrored: "opposite" }], conductors: [ball] }));
    const r = run(["extract", "both.json", "--json", "-"]);
    expect(r.code).toBe(0);
    const i = r.out.indexOf("{");
    const rep = JSON.parse(r.out.slice(i));
    expect(rep.conductors.map((c: { name: string }) => c.name)).toEqual(["p", "p~x"]);
    expect(rep.conductors.map((c: { potential: number }) => c.potential)).toEqual([1, -1]);
    expect(rep.model.symmetry).toEqual([{ axis: "x", offset: 0, images: "both", mirrored: "opposite" }]);
    expect(rep.model.mirrorNets).toBe(2);
    const [[c11, c12]] = rep.capacitance.maxwell;
    const odd = run(["extract", "both.json", "--symmetry", "x=0:odd", "--json", "-", "--quiet"]);
    expect(odd.code).toBe(0);
    const repOdd = JSON.parse(odd.out);
    expect(repOdd.model.symmetry[0].images).toBe("odd");
    expect(Math.abs(repOdd.capacitance.maxwell[0][0] / (c11 - c12) - 1)).toBeLessThan(1e-9);
  });

  it("--potential sets a mirrored conductor's working potential by its name~x", () => {
    const r = run(["extract", "both.json", "--potential", "p~x=3", "--json", "-", "--quiet"]);
    expect(r.code).toBe(0);
    const rep = JSON.parse(r.out);
    expect(rep.conductors.map((c: { potential: number }) => c.potential)).toEqual([1, 3]);
    const bad = run(["extract", "both.json", "--potential", "p~y=3"]);
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/--potential names "p~y", which is not a mirrored conductor; they are: p~x/);
    const none = run(["extract", "both.json", "--symmetry", "x=0:odd", "--potential", "p~x=3"]);
    expect(none.code).toBe(2);
    expect(none.err).toMatch(/no symmetry plane has images both/);
  });

  it("the summary names each plane's images", () => {
    const r = run(["extract", "both.json", "--symmetry", "x=0:odd"]);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/plane x = 0(\.0+)? mm, odd: its mirror half at the opposite potential, the plane at 0 V/);
    expect(r.out).toMatch(/antisymmetric excitation/);
    expect(r.out).toMatch(/reference: infinity and the odd symmetry plane \(0 V\)/);
  });

  it("bad images are refused with one line naming the key or the option", () => {
    writeFileSync(join(dir, "twin.json"), JSON.stringify({ symmetry: [{ x: 0, images: "twin" }], conductors: [ball] }));
    let r = run(["extract", "twin.json"]);
    expect(r.code).toBe(2);
    expect(r.err.trim().split("\n")).toHaveLength(1);
    expect(r.err).toMatch(/twin\.json: symmetry\[0\]\.images: expected "even", "odd" or "both"/);
    writeFileSync(join(dir, "mirr.json"), JSON.stringify({ symmetry: [{ x: 0, mirrored: "opposite" }], conductors: [ball] }));
    r = run(["extract", "mirr.json"]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/symmetry\[0\]\.mirrored: .*"both" only/);
    r = run(["extract", "both.json", "--symmetry", "x=0:twin"]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/symmetry plane "x=0:twin": images must be even, odd or both/);
  });

  it("a conductor touching an odd plane is refused by name", () => {
    writeFileSync(join(dir, "touch.json"), JSON.stringify({ unit: "mm", symmetry: [{ x: 0, images: "odd" }],
      conductors: [{ ...ball, name: "lead", place: { translate: [1, 0, 0] } }] }));
    const r = run(["extract", "touch.json"]);
    expect(r.code).toBe(2);
    expect(r.err.trim().split("\n")).toHaveLength(1);
    expect(r.err).toMatch(/conductor lead touches the odd symmetry plane x = 0.*0 V/);
  });
});

describe("breakdown strength per dielectric body", () => {
  it("the coat's breakdownField decides the check of the conductor inside it", () => {
    writeFileSync(join(dir, "coat.json"), JSON.stringify({ unit: "mm", breakdownField: 3e6,
      conductors: [{ name: "ball", shape: { sphere: { radius: 1, level: 1 } }, potential: 1000 }],
      dielectrics: [{ name: "coat", shape: { sphere: { radius: 2, level: 1 } }, permittivity: 4, breakdownField: 2e7 }] }));
    const r = run(["extract", "coat.json", "--json", "-", "--quiet"]);
    expect(r.code).toBe(0);
    const rep = JSON.parse(r.out);
    expect(rep.conductors[0].fieldCheck.medium).toBe("coat");
    expect(rep.conductors[0].fieldCheck.breakdownField).toBe(2e7);
    expect(rep.conductors[0].fieldRatio).toBeCloseTo(rep.conductors[0].fieldCheck.field / 2e7, 12);
    writeFileSync(join(dir, "badcoat.json"), JSON.stringify({ conductors: [{ name: "ball", shape: { sphere: { radius: 1, level: 1 } } }],
      dielectrics: [{ name: "coat", shape: { sphere: { radius: 2, level: 1 } }, permittivity: 4, breakdownField: "strong" }] }));
    const bad = run(["extract", "badcoat.json"]);
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/badcoat\.json: dielectrics\[0\]\.breakdownField: expected a positive number in V\/m/);
  });
});
