// End to end: `node dist/cli/main.js extract ...` on meshes written in the test,
// the JSON report's fields and units, and bad input refused with one line, exit 2, no report.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, readdirSync, writeFileSync, readFileSync, mkdirSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { sphereMesh, plateMesh } from "../../src/mesh/primitives/index.js";
import { writeMeshFile } from "../../src/io/write.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { mutualFromSpice } from "../../src/report/spice.js";
import { parseCsv } from "../../src/report/csv.js";
import { embeddedResults } from "../../src/report/html.js";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";

function run(args: string[], cwd?: string) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npx tsc -p tsconfig.json` first");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-extract-"));
  // Two spheres of 5 mm radius, centres 15 mm apart, written in millimetres.
  const a = sphereMesh({ radius: 5e-3, level: 2, center: [-7.5e-3, 0, 0], name: "anode" });
  const b = sphereMesh({ radius: 5e-3, level: 2, center: [7.5e-3, 0, 0], name: "cathode" });
  writeMeshFile(join(dir, "anode.stl"), a, "stl", "mm");
  writeMeshFile(join(dir, "cathode.stl"), b, "stl", "mm");
  writeMeshFile(join(dir, "overlap.stl"), sphereMesh({ radius: 5e-3, level: 2, center: [-4e-3, 0, 0], name: "overlap" }), "stl", "mm");
  writeMeshFile(join(dir, "sheet.obj"), plateMesh({ size: [0.01, 0.01], divisions: 6, name: "sheet" }), "obj", "mm");
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

describe("sigmesh extract", () => {
  it("extracts two mesh files, prints the summary with the assumed unit, writes the JSON report in SI units", () => {
    const json = join(dir, "pair.json");
    const r = run(["extract", join(dir, "anode.stl"), join(dir, "cathode.stl"), "--potential", "anode=100", "--potential", "cathode=-100", "--json", json]);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/length unit mm \(assumed; set with --unit\)/);
    expect(r.out).toMatch(/Maxwell capacitance matrix/);
    expect(r.out).toMatch(/fF/);
    expect(r.out).toMatch(/Cautions/);
    // The whole run's time, the reports' writing counted: in all ≥ solve + reports.
    const time = /Time: (\S+) s in all \(solve and fields (\S+) s, reports (\S+) s, reading and checks (\S+) s\)/.exec(r.out);
    expect(time, r.out).not.toBeNull();
    const [all, solve, reports] = time!.slice(1, 4).map(Number);
    expect(all).toBeGreaterThanOrEqual(0.99 * (solve + reports));
    const rep = JSON.parse(readFileSync(json, "utf8"));
    expect(rep.format).toBe("sigmesh-extraction/1");
    expect(rep.conductors.map((c: { name: string }) => c.name)).toEqual(["anode", "cathode"]);
    const c11 = rep.capacitance.maxwell[0][0];
    // A 5 mm sphere alone is 4π ε0 R = 0.556 pF; its neighbour raises the self term a little.
    expect(c11).toBeGreaterThan(4 * Math.PI * EPSILON_0 * 5e-3 * 0.98);
    expect(c11).toBeLessThan(4 * Math.PI * EPSILON_0 * 5e-3 * 1.2);
    expect(rep.capacitance.maxwell[0][1]).toBeLessThan(0);
    expect(rep.capacitance.mutual[0][1]).toBeCloseTo(-rep.capacitance.maxwell[0][1], 20);
    expect(rep.conductors[0].potential).toBe(100);
    expect(rep.conductors[0].charge).toBeCloseTo(100 * rep.capacitance.maxwell[0][0] - 100 * rep.capacitance.maxwell[0][1], 20);
    expect(rep.conductors[0].peakFieldAt).toHaveLength(3);
    expect(rep.energy).toBeGreaterThan(0);
    expect(rep.solver.panels).toBe(640);
    expect(rep.solver.method).toBe("galerkin");
    expect(rep.fieldCheck.cautions.length).toBeGreaterThan(2);
    expect(rep.fieldCheck.cautions[0]).toMatch(/Hazardous voltages/);
  });

  it("reads a scene file with mesh paths relative to it, and --refine gives an error estimate", () => {
    writeFileSync(join(dir, "scene.json"), JSON.stringify({ unit: "mm", conductors: [{ name: "ball", mesh: "anode.stl", potential: 2 }] }));
    const r = run(["extract", "scene.json", "--refine", "1", "--json", "-", "--quiet"], dir);
    if (r.code !== 0) console.log(r.err);
    expect(r.code).toBe(0);
    const rep = JSON.parse(r.out);
    expect(rep.accuracy.levels.map((l: { panels: number }) => l.panels)).toEqual([320, 1280]);
    expect(rep.accuracy.relativeError).toBeGreaterThan(0);
    const exact = 4 * Math.PI * EPSILON_0 * 5e-3;
    expect(Math.abs(rep.capacitance.maxwell[0][0] - exact) / exact).toBeLessThan(rep.accuracy.relativeError);
    expect(rep.conductors[0].charge).toBeCloseTo(2 * rep.capacitance.maxwell[0][0], 20);
  });

  it("probes named in a scene are evaluated like --probe", () => {
    writeFileSync(join(dir, "probed.json"), JSON.stringify({ unit: "mm", conductors: [{ name: "ball", mesh: "anode.stl", potential: 1 }],
      probes: [{ name: "axis", line: { from: [-7.5, 0, 6], to: [-7.5, 0, 20], points: 8 } }] }));
    const r = run(["extract", "probed.json", "--probe-csv", "p.csv", "--quiet"], dir);
    expect(r.code).toBe(0);
    const rows = parseCsv(readFileSync(join(dir, "p.csv"), "utf8"));
    expect(rows).toHaveLength(9);
    // Outside a sphere at 1 V: φ = R/r (5 mm sphere; 6 mm and 20 mm from its centre), within the
    // 320-panel mesh's capacitance error (about 1 % low).
    const v = rows[0].indexOf("potential (V)");
    expect(Math.abs(Number(rows[1][v]) / (5 / 6) - 1)).toBeLessThan(0.02);
    expect(Math.abs(Number(rows[8][v]) / (5 / 20) - 1)).toBeLessThan(0.02);
  });

  it("without --probe-csv, a scene's probes go beside the report, named after the scene, and the summary lists every file written", () => {
    mkdirSync(join(dir, "out"), { recursive: true });
    const r = run(["extract", "probed.json", "--json", "out/r.json", "--html", "out/r.html"], dir);
    expect(r.code, r.err).toBe(0);
    expect(existsSync(join(dir, "out", "probed-probes.csv"))).toBe(true);
    expect(existsSync(join(dir, "out", "probed-probes-axis.svg"))).toBe(true);
    expect(existsSync(join(dir, "probes.csv"))).toBe(false);
    const line = r.out.split("\n").find((l) => l.startsWith("Written: "));
    expect(line).toBeDefined();
    expect(line!.slice("Written: ".length).split(", ").sort()).toEqual(["out/probed-probes-axis.svg", "out/probed-probes.csv", "out/r.html", "out/r.json"]);
    // Without a report file, into the current folder, still named after the scene.
    const bare = run(["extract", "probed.json", "--quiet"], dir);
    expect(bare.code, bare.err).toBe(0);
    expect(existsSync(join(dir, "probed-probes.csv"))).toBe(true);
    expect(bare.out).toBe("");
  });

  it("a scene with a dielectric coat matches two spherical capacitors in series (exact closed form)", () => {
    // C = 4π ε0 / ((1/a − 1/b)/εr + 1/b) for a sphere of radius a coated out to b with εr.
    writeFileSync(join(dir, "coat.json"), JSON.stringify({ unit: "mm",
      conductors: [{ name: "ball", shape: { sphere: { radius: 1, level: 2 } }, potential: 1 }],
      dielectrics: [{ name: "coat", shape: { sphere: { radius: 2, level: 2 } }, permittivity: 4 }] }));
    const r = run(["extract", "coat.json", "--json", "-", "--quiet"], dir);
    expect(r.code).toBe(0);
    const rep = JSON.parse(r.out);
    const a = 1e-3, b = 2e-3;
    const exact = 4 * Math.PI * EPSILON_0 / ((1 / a - 1 / b) / 4 + 1 / b);
    expect(Math.abs(rep.capacitance.maxwell[0][0] / exact - 1)).toBeLessThan(0.02);
    expect(rep.dielectrics.bodies[0].name).toBe("coat");
    expect(rep.dielectrics.interfacePanels).toBe(320);
  });

  it("refuses a dielectric entry without a permittivity, naming the key", () => {
    writeFileSync(join(dir, "nodiel.json"), JSON.stringify({ conductors: [{ mesh: "anode.stl" }], dielectrics: [{ name: "x", mesh: "cathode.stl" }] }));
    const r = run(["extract", "nodiel.json"], dir);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/nodiel\.json: dielectrics\[0\]\.permittivity: missing/);
  });

  it("an open sheet is reported as such and gets its two-sided field", () => {
    const r = run(["extract", join(dir, "sheet.obj"), "--json", "-", "--quiet"]);
    expect(r.code).toBe(0);
    const rep = JSON.parse(r.out);
    expect(rep.conductors[0].closed).toBe(false);
    expect(rep.forcesComplete).toBe(true);
    expect(rep.conductors[0].peakField).toBeGreaterThan(0);
  });

  it("writes SPICE, CSV, Markdown, probe CSV and plots that agree with the JSON report", () => {
    const out = join(dir, "outs");
    const r = run(["extract", join(dir, "anode.stl"), join(dir, "cathode.stl"), "--potential", "anode=10", "--json", join(out, "r.json"),
      "--spice", join(out, "pair.cir"), "--csv", join(out, "pair.csv"), "--markdown", join(out, "pair.md"),
      "--probe", "gap=line:-2.5,0,0:2.5,0,0:11", "--probe-csv", join(out, "probes.csv"), "--quiet"]);
    expect(r.code).toBe(0);
    const rep = JSON.parse(readFileSync(join(out, "r.json"), "utf8"));
    const names = rep.conductors.map((c: { name: string }) => c.name);
    const rebuilt = mutualFromSpice(readFileSync(join(out, "pair.cir"), "utf8"), names);
    for (let i = 0; i < 2; i++) for (let j = 0; j < 2; j++) {
      expect(Math.abs(rebuilt[2 * i + j] - rep.capacitance.mutual[i][j]) / rep.capacitance.mutual[0][0]).toBeLessThan(1e-5);
    }
    const csv = parseCsv(readFileSync(join(out, "pair.csv"), "utf8"));
    expect(csv.some((row) => row.includes("anode"))).toBe(true);
    expect(readFileSync(join(out, "pair.md"), "utf8")).toMatch(/\| anode \|/);
    const probes = parseCsv(readFileSync(join(out, "probes.csv"), "utf8"));
    expect(probes[0]).toContain("potential (V)");
    expect(probes).toHaveLength(12);
    // On the anode's surface the potential is its own 10 V (Dirichlet condition), within the mesh error.
    const vcol = probes[0].indexOf("potential (V)");
    expect(Number(probes[1][vcol])).toBeGreaterThan(9.8);
    expect(Number(probes[1][vcol])).toBeLessThan(10.2);
    expect(readFileSync(join(out, "probes-gap.svg"), "utf8")).toMatch(/^<svg|<\?xml/);
  });

  it("--html writes one self-contained page whose embedded results are the JSON report's", () => {
    const out = join(dir, "html");
    const r = run(["extract", join(dir, "anode.stl"), join(dir, "cathode.stl"), "--html", join(out, "r.html"), "--json", join(out, "r.json"), "--json-panels", "--quiet"]);
    expect(r.code).toBe(0);
    const html = readFileSync(join(out, "r.html"), "utf8");
    expect(html).not.toMatch(/<script[^>]+src=/); // nothing loaded from elsewhere
    const emb = embeddedResults(html)!;
    const rep = JSON.parse(readFileSync(join(out, "r.json"), "utf8"));
    expect((emb.report as { capacitance: { maxwell: number[][] } }).capacitance.maxwell).toEqual(rep.capacitance.maxwell);
    expect(rep.viewer.format).toBe("sigmesh-viewer/1");
  });

  it("--html carries the probe-line and convergence plots", () => {
    const out = join(dir, "htmlplots");
    const r = run(["extract", join(dir, "anode.stl"), "--probe", "radial=line:-2,0,0:10,0,0:9", "--probe-csv", join(out, "p.csv"), "--refine", "1", "--html", join(out, "r.html"), "--quiet"]);
    expect(r.code).toBe(0);
    const html = readFileSync(join(out, "r.html"), "utf8");
    expect(html).toMatch(/id="sigmesh-plots"/);
    expect(html).toMatch(/Field along probe line radial/);
    expect(html).toMatch(/Convergence of C\(anode\)/);
    expect((html.match(/<svg/g) ?? []).length).toBe(2);
  });

  it("writes all outputs or none: a failing output leaves no other file behind", () => {
    const out = join(dir, "allornone");
    // An existing directory where the SPICE file should go makes that rename fail.
    mkdirSync(join(out, "pair.cir"), { recursive: true });
    const r = run(["extract", join(dir, "anode.stl"), "--json", join(out, "r.json"), "--spice", join(out, "pair.cir"), "--quiet"]);
    expect(r.code).not.toBe(0);
    expect(r.err.trim().split("\n")).toHaveLength(1);
    expect(existsSync(join(out, "r.json"))).toBe(false);
    expect(readdirSync(out).filter((f) => f.endsWith(".tmp"))).toEqual([]);
  });

  const bad: Array<[string, string[], RegExp]> = [
    ["a missing file", ["missing.stl"], /missing\.stl: no such file/],
    ["an unknown conductor in --potential", ["anode.stl", "--potential", "nosuch=1"], /--potential names "nosuch"/],
    ["a malformed --potential", ["anode.stl", "--potential", "anode"], /NAME=VOLTS/],
    ["an unknown method", ["anode.stl", "--method", "fem"], /--method "fem"/],
    ["a bad --refine", ["anode.stl", "--refine", "1.5"], /--refine "1\.5"/],
    ["a bad --probe", ["anode.stl", "--probe", "line:0,0,0:1,1"], /--probe/],
    ["intersecting conductors", ["anode.stl", "overlap.stl"], /anode and overlap intersect/],
    ["a scene with a bad key", ["badscene.json"], /badscene\.json: conductors\[0\]\.potential: expected a number/],
    ["a scene that is not JSON", ["broken.json"], /broken\.json: line 2, column \d+: not valid JSON/],
    ["a scene whose plate holes overlap", ["badholes.json"], /badholes\.json: conductors\[0\]\.shape\.plate\.holes: hole 2 overlaps or touches hole 1$/m],
    ["a scene whose box fillet is too large", ["badfillet.json"], /badfillet\.json: conductors\[0\]\.shape\.box\.fillet must be at most half the smallest side \(0\.5\), got 1$/m],
    ["a scene whose washer's edge radius is too large", ["badwasher.json"], /badwasher\.json: conductors\[0\]\.shape\.washer\.edgeRadius must be at most half the thickness and half the ring's width \(0\.5\), got 0\.75$/m],
    ["a scene whose capsule has a negative length", ["badcapsule.json"], /badcapsule\.json: conductors\[0\]\.shape\.capsule\.length must be 0 or more, got -3$/m],
  ];
  for (const [what, args, message] of bad) {
    it(`refuses ${what} with one line, exit code 2, and writes no report`, () => {
      writeFileSync(join(dir, "badscene.json"), JSON.stringify({ conductors: [{ mesh: "anode.stl", potential: "high" }] }));
      writeFileSync(join(dir, "broken.json"), '{ "conductors": [\n  { "mesh": "anode.stl" ]\n}');
      writeFileSync(join(dir, "badholes.json"), JSON.stringify({ conductors: [{ shape: { plate: { size: [10, 6], holes: [[0, 0, 1], [1, 0, 1]] } } }] }));
      writeFileSync(join(dir, "badfillet.json"), JSON.stringify({ conductors: [{ shape: { box: { size: [4, 4, 1], fillet: 1 } } }] }));
      writeFileSync(join(dir, "badwasher.json"), JSON.stringify({ conductors: [{ shape: { washer: { innerRadius: 1, outerRadius: 4, thickness: 1, edgeRadius: 0.75 } } }] }));
      writeFileSync(join(dir, "badcapsule.json"), JSON.stringify({ conductors: [{ shape: { capsule: { radius: 1, length: -3 } } }] }));
      const out = join(dir, "never.json");
      const r = run(["extract", ...args, "--json", out], dir);
      expect(r.code).toBe(2);
      const lines = r.err.trim().split("\n");
      expect(lines.filter((l) => l.startsWith("sigmesh: error:"))).toHaveLength(1);
      expect(r.err).toMatch(message);
      expect(r.err).not.toMatch(/\bat .*\.js:\d+/); // no stack trace
      expect(existsSync(out)).toBe(false);
      expect(readdirSync(dir).filter((f) => f.endsWith(".tmp"))).toEqual([]);
    });
  }

  it("sends one output to standard output with -, the summary then to stderr; two are refused", () => {
    const spice = run(["extract", join(dir, "anode.stl"), join(dir, "cathode.stl"), "--spice", "-"], dir);
    expect(spice.code).toBe(0);
    expect(spice.out).toMatch(/^\.SUBCKT /m);
    expect(spice.err).toMatch(/Maxwell capacitance matrix/);
    expect(existsSync(join(dir, "-"))).toBe(false);
    const two = run(["extract", join(dir, "anode.stl"), "--spice", "-", "--csv", "-"], dir);
    expect(two.code).toBe(2);
    expect(two.err.trim().split("\n")).toHaveLength(1);
    expect(two.err).toMatch(/--spice and --csv ask for standard output/);
  });

  it("names the subcircuit after the netlist file, so two netlists can share a deck", () => {
    const out = join(dir, "decks");
    const r = run(["extract", join(dir, "anode.stl"), join(dir, "cathode.stl"), "--spice", join(out, "pair-a.cir"), "--quiet"]);
    expect(r.code).toBe(0);
    expect(readFileSync(join(out, "pair-a.cir"), "utf8")).toMatch(/^\.SUBCKT pair_a /m);
  });

  it("probe requests of different kinds share one CSV header (distance, i, j empty where they do not apply)", () => {
    const out = join(dir, "mixed");
    const r = run(["extract", join(dir, "anode.stl"), join(dir, "cathode.stl"), "--potential", "anode=1",
      "--probe", "gap=line:-2.5,0,0:2.5,0,0:3", "--probe", "top=point:0,0,10", "--probe", "plane=grid:-1,-1,8:2,0,0:0,2,0:2,2",
      "--probe-csv", join(out, "p.csv"), "--quiet"]);
    expect(r.code, r.err).toBe(0);
    const rows = parseCsv(readFileSync(join(out, "p.csv"), "utf8"));
    const h = rows[0];
    expect(h).toContain("distance (mm)");
    expect(h).toContain("i");
    expect(rows.every((row) => row.length === h.length)).toBe(true);
    const point = rows.find((row) => row[0] === "top")!;
    expect(point[h.indexOf("distance (mm)")]).toBe("");
    expect(Number(point[h.indexOf("z (mm)")])).toBe(10);
    const grid = rows.filter((row) => row[0] === "plane");
    expect(grid.map((row) => row[h.indexOf("j")])).toEqual(["0", "0", "1", "1"]);
  });

  it("a compressed run reports its compression and preconditioner in the JSON report", () => {
    const r = run(["extract", join(dir, "anode.stl"), join(dir, "cathode.stl"), "--solver", "compressed", "--json", "-", "--quiet"]);
    expect(r.code, r.err).toBe(0);
    const s = JSON.parse(r.out).solver;
    expect(s.solver).toBe("compressed");
    expect(s.compression.ratio).toBeGreaterThan(0);
    expect(s.compression.ratio).toBeLessThanOrEqual(1);
    expect(s.preconditioner.cluster).toBeGreaterThan(0);
    expect(s.krylovTolerance).toBeGreaterThan(0);
    expect(s.residual).toBeLessThanOrEqual(s.krylovTolerance);
  });
});
