// A real circuit simulator reads the SPICE export: ngspice (Debian package `ngspice`, installed
// by .ci/run) runs an AC analysis of the written subcircuit with one port driven at a time and
// the others held at 0 V; the port currents give the Maxwell matrix column by column
// (I_i = jω Σ_j C_ij V_j, so C_ij = −Im(I through source i)/ω with V_j = 1, ngspice's branch
// current flowing into the source's + node), and the two-terminal matrix follows from it.
// Both must equal the JSON report's matrices within the rounding of the six digits the netlist
// carries.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, writeFileSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
let dir = "";

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npm run build` first");
  const probe = spawnSync("ngspice", ["--version"], { encoding: "utf8" });
  if (probe.error || probe.status !== 0) throw new Error("ngspice is not installed: `apt-get install -y ngspice` (.ci/run does this)");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-ngspice-"));
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

const FREQUENCY = 1e6;

/** The subcircuit's name and ports from its .SUBCKT line (continuation lines joined). */
function subcircuitPorts(netlist: string): { name: string; ports: string[] } {
  const text = netlist.replace(/\n\+/g, " ");
  const m = /^\.SUBCKT\s+(\S+)\s+(.+)$/m.exec(text);
  if (!m) throw new Error("no .SUBCKT line");
  return { name: m[1], ports: m[2].trim().split(/\s+/) };
}

/** The Maxwell matrix as ngspice measures it: one AC run per driven port, the reference port tied to ground. */
function maxwellFromNgspice(netlistFile: string): { names: string[]; c: number[][] } {
  const { name, ports } = subcircuitPorts(readFileSync(netlistFile, "utf8"));
  const terminals = ports.slice(0, -1); // the last port is the reference
  const k = terminals.length;
  const c = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (let j = 0; j < k; j++) {
    const bench = [
      "* sigmesh export under test: port " + terminals[j] + " driven",
      `.include ${netlistFile}`,
      `X1 ${terminals.map((_, i) => `n${i}`).join(" ")} 0 ${name}`,
      ...terminals.map((_, i) => `V${i} n${i} 0 DC 0 AC ${i === j ? 1 : 0}`),
      ".control",
      `ac lin 1 ${FREQUENCY} ${FREQUENCY}`,
      "set numdgt=12",
      `print ${terminals.map((_, i) => `imag(v${i}#branch)`).join(" ")}`,
      // Batch mode with a control block and no .print line ends with status 1 otherwise.
      "quit 0",
      ".endc",
      ".end",
    ].join("\n");
    const file = join(dir, `bench${j}.cir`);
    writeFileSync(file, bench + "\n");
    const r = spawnSync("ngspice", ["-b", file], { encoding: "utf8", cwd: dir });
    expect(r.status, r.stderr).toBe(0);
    for (let i = 0; i < k; i++) {
      const m = new RegExp(`imag\\(v${i}#branch\\)\\s*=\\s*(\\S+)`).exec(r.stdout);
      if (!m) throw new Error(`ngspice printed no current for port ${terminals[i]}:\n${r.stdout}`);
      c[i][j] = -Number(m[1]) / (2 * Math.PI * FREQUENCY);
    }
  }
  return { names: terminals, c };
}

function mutualOf(maxwell: number[][]): number[][] {
  return maxwell.map((row, i) => row.map((v, j) => (i === j ? row.reduce((s, x) => s + x, 0) : -v)));
}

/** Half a unit in the sixth significant digit of v: how far the netlist's rounding may move it. */
function halfUnit(v: number): number {
  return v === 0 ? 0 : 0.5 * 10 ** (Math.floor(Math.log10(Math.abs(v))) - 5);
}

/**
 * The ngspice Maxwell matrix against the report's, entry by entry within the rounding of the
 * capacitors it sums: C_ij = −C^m_ij off the diagonal, C_ii = Σ_j C^m_ij (j = i: to the reference),
 * plus 1e-9 relative for ngspice's solve and its 12 printed digits.
 */
function expectMaxwellClose(actual: number[][], maxwell: number[][], mutual: number[][]): void {
  const k = maxwell.length;
  for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) {
    const bound = (i === j ? mutual[i].reduce((s, v) => s + halfUnit(v), 0) : halfUnit(mutual[i][j])) + 1e-9 * Math.abs(maxwell[i][i]);
    expect(Math.abs(actual[i][j] - maxwell[i][j]), `Maxwell ${i},${j}: ${actual[i][j]} vs ${maxwell[i][j]}`).toBeLessThanOrEqual(bound);
  }
}

/** The two-terminal matrix recovered from the ngspice currents: each capacitor within its own rounding. */
function expectMutualClose(actual: number[][], mutual: number[][]): void {
  const k = mutual.length;
  for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) {
    // The diagonal comes back as a row sum of the currents: the rounding of the row's capacitors.
    const bound = (i === j ? mutual[i].reduce((s, v) => s + halfUnit(v), 0) : halfUnit(mutual[i][j])) + 1e-9 * Math.abs(mutual[i][i]);
    expect(Math.abs(actual[i][j] - mutual[i][j]), `two-terminal ${i},${j}: ${actual[i][j]} vs ${mutual[i][j]}`).toBeLessThanOrEqual(bound);
  }
}

const scene = {
  title: "three electrodes over a ground plane (test)",
  unit: "mm",
  conductors: [
    { name: "ball", potential: 1, shape: { sphere: { radius: 2, center: [0, 0, 5] } } },
    { name: "bar", potential: 0, shape: { box: { size: [6, 2, 2], center: [6, 0, 4], divisions: 4 } } },
    { name: "pad", potential: 0, shape: { plate: { size: [5, 5], center: [-6, 0, 2], divisions: 8 } } },
  ],
};

function extractWithSpice(sceneObject: object, extra: string[]): { report: any; netlist: string } {
  const file = join(dir, `scene${extra.length}.json`);
  writeFileSync(file, JSON.stringify(sceneObject));
  const netlist = join(dir, `net${extra.length}.cir`), json = join(dir, `rep${extra.length}.json`);
  const r = spawnSync(process.execPath, [cli, "extract", file, "--json", json, "--spice", netlist, "--spice-threshold", "0", "--quiet", ...extra], { encoding: "utf8", cwd: dir });
  expect(r.status, r.stderr).toBe(0);
  return { report: JSON.parse(readFileSync(json, "utf8")), netlist };
}

describe("ngspice reads the SPICE export", () => {
  it("over a ground plane: the AC port currents give the report's Maxwell and two-terminal matrices", () => {
    const { report, netlist } = extractWithSpice({ ...scene, groundPlane: { z: 0 } }, []);
    expect(report.capacitance.reference).toBe("ground plane");
    const measured = maxwellFromNgspice(netlist);
    expect(measured.names).toEqual(["ball", "bar", "pad"]);
    expectMaxwellClose(measured.c, report.capacitance.maxwell, report.capacitance.mutual);
    expectMutualClose(mutualOf(measured.c), report.capacitance.mutual);
  });

  it("in free space with a floating conductor: the reduced matrices, the floating one no port", () => {
    const { report, netlist } = extractWithSpice(scene, ["--floating", "pad"]);
    const reduced = report.capacitance.reduced;
    expect(reduced.names).toEqual(["ball", "bar"]);
    const measured = maxwellFromNgspice(netlist);
    expect(measured.names).toEqual(["ball", "bar"]);
    expectMaxwellClose(measured.c, reduced.maxwell, reduced.mutual);
    expectMutualClose(mutualOf(measured.c), reduced.mutual);
  });
});
