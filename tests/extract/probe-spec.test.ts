/**
 * Probe requests (command line and scene), their points, their CSV, and probes through the
 * whole chain (request → points → solved charge → CSV) against closed-form fields.
 */
import { describe, it, expect, afterAll } from "vitest";
import { parseProbeOption, parseSceneProbes, probePoints, probeCsv, probePointCount, distanceAlong, fieldMagnitude, type ProbeSpec } from "../../src/extract/probe-spec.js";
import { probeExtraction } from "../../src/extract/probe.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { sphereMesh, torusMesh } from "../../src/mesh/primitives/index.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { closeSharedPool } from "../../src/linalg/pool.js";
import { parseCsv } from "../../src/report/csv.js";
import { InputError } from "../../src/io/errors.js";

afterAll(() => closeSharedPool());
/** Coulomb's constant 1/(4πε0) from CODATA 2018 ε0 (via src/extract/constants). */
const K = 1 / (4 * Math.PI * EPSILON_0);

describe("command-line requests", () => {
  it("reads points, lines and grids, with and without a name", () => {
    expect(parseProbeOption("point:1,2,3")).toEqual({ kind: "points", name: "probe1", points: [[1, 2, 3]] });
    expect(parseProbeOption("tips=point:1,2,3:-4,5e-1,.5", "--probe", 2)).toEqual({ kind: "points", name: "tips", points: [[1, 2, 3], [-4, 0.5, 0.5]] });
    expect(parseProbeOption("gap=line:0,0,0:10,0,0:11")).toEqual({ kind: "line", name: "gap", from: [0, 0, 0], to: [10, 0, 0], count: 11 });
    expect(parseProbeOption("grid:0,0,1:4,0,0:0,2,0:5,3", "--probe", 3)).toEqual({ kind: "grid", name: "probe3", origin: [0, 0, 1], u: [4, 0, 0], v: [0, 2, 0], counts: [5, 3] });
  });
  it("names the option and the fault in one line", () => {
    const cases: Array<[string, RegExp]> = [
      ["line:0,0,0:1,0,0", /--probe "line:0,0,0:1,0,0": expected line:x0,y0,z0:x1,y1,z1:n/],
      ["line:0,0,0:1,0:5", /end takes 3 coordinates/],
      ["line:0,0,0:1,0,0:1", /point count must be a whole number of at least 2, got 1/],
      ["line:0,0,0:1,0,0:2.5", /at least 2, got 2.5/],
      ["line:1,1,1:1,1,1:5", /two ends are the same point/],
      ["line:0,0,x:1,0,0:5", /start z: "x" is not a number/],
      ["grid:0,0,0:1,0,0:2,0,0:3,3", /parallel/],
      ["grid:0,0,0:0,0,0:0,1,0:3,3", /first edge vector is zero/],
      ["grid:0,0,0:1,0,0:0,1,0:3", /point counts take 2 numbers/],
      ["grid:0,0,0:1,0,0:0,1,0:2000,2000", /more than 1000000/],
      ["circle:0,0,0", /unknown probe kind "circle"/],
      ["point:", /point takes 3 coordinates/],
      ["9bad=point:0,0,0", /probe name "9bad"/],
    ];
    for (const [text, re] of cases) {
      let err: unknown;
      try { parseProbeOption(text); } catch (e) { err = e; }
      expect(err, text).toBeInstanceOf(InputError);
      expect((err as Error).message, text).toMatch(re);
      expect((err as Error).message).not.toContain("\n");
    }
  });
});

describe("scene requests", () => {
  it("reads the scene forms", () => {
    const specs = parseSceneProbes([
      { name: "tip", point: [0, 0, 5] },
      { points: [[1, 0, 0], [2, 0, 0]] },
      { name: "gap", line: { from: [0, 0, 0], to: [0, 0, 10], points: 50 } },
      { name: "above pad", grid: { origin: [-5, -5, 1], u: [10, 0, 0], v: [0, 10, 0], points: [20, 10] } },
    ]);
    expect(specs.map((s) => s.name)).toEqual(["tip", "probe2", "gap", "above pad"]);
    expect(specs.map(probePointCount)).toEqual([1, 2, 50, 200]);
  });
  it("names the file and key path of a fault", () => {
    const at = (v: unknown): string => { try { parseSceneProbes(v, { file: "job.json" }); } catch (e) { expect(e).toBeInstanceOf(InputError); return (e as Error).message; } return "no error"; };
    expect(at({})).toBe("job.json: probes: expected an array of probe objects");
    expect(at([{ line: { from: [0, 0, 0], to: [1, 0, 0], points: 1 } }])).toBe("job.json: probes[0].line.points: the point count must be a whole number of at least 2, got 1");
    expect(at([{ point: [0, 0] }])).toBe("job.json: probes[0].point: expected [x, y, z], three numbers");
    expect(at([{ name: "a", point: [0, 0, 0] }, { name: "a", point: [1, 0, 0] }])).toBe('job.json: probes[1].name: "a" is used by an earlier probe');
    expect(at([{ point: [0, 0, 0], line: {} }])).toMatch(/probes\[0\]: give only one of "point" and "line"/);
    expect(at([{ grid: { origin: [0, 0, 0], u: [1, 0, 0], v: [0, 1, 0], points: [3, 3], w: 1 } }])).toBe("job.json: probes[0].grid.w: unknown key (expected origin, u, v, points)");
    expect(at([{ line: { from: [0, 0, 0], to: [0, 0, 0], points: 3 } }])).toBe("job.json: probes[0]: the line's two ends are the same point");
    expect(at([{ colour: "red", point: [0, 0, 0] }])).toMatch(/unknown key "colour"/);
  });
});

describe("points", () => {
  it("lines are evenly spaced with exact ends; grids vary fastest along u; lengths scale to metres", () => {
    const line = parseProbeOption("line:1,2,3:4,-2,3:6");
    const p = probePoints(line, 1e-3);
    expect(Array.from(p.subarray(0, 3))).toEqual([1e-3, 2e-3, 3e-3]);
    expect(Array.from(p.subarray(15, 18))).toEqual([4e-3, -2e-3, 3e-3]);
    const d = distanceAlong(p);
    for (let i = 0; i < 6; i++) expect(d[i]).toBeCloseTo(i * 1e-3, 15); // |(3,-4,0)| = 5 mm in 5 steps
    const grid = probePoints(parseProbeOption("grid:0,0,1:2,0,0:0,3,0:3,2"), 25.4e-3);
    expect(grid.length).toBe(18);
    const inches = (o: number): number[] => Array.from(grid.subarray(o, o + 3)).map((x) => x / 25.4e-3);
    inches(3).forEach((x, c) => expect(x).toBeCloseTo([1, 0, 1][c], 12));
    inches(9).forEach((x, c) => expect(x).toBeCloseTo([0, 3, 1][c], 12));
  });
});

describe("probes against closed forms", async () => {
  const R = 2, V = 100; // a 2 mm sphere at 100 V, probed in millimetres
  const sphere = await extractMesh(sphereMesh({ radius: R * 1e-3, level: 2 }), { potentials: [V] });
  const Q = sphere.conductors[0].charge;

  it("along a radial line outside a charged sphere: φ = kQ/r, E = kQ/r² radial (Gauss's law; point-charge field)", () => {
    // From r = 2R outward: nearer, the faceted level-2 surface's charge departs from spherical
    // symmetry by more than the 5e-4 asked here (1.6e-3 measured at r = 1.25R).
    const spec = parseProbeOption("radial=line:2.4,3.2,0:6,8,0:12");
    const pts = probePoints(spec, 1e-3);
    const pr = probeExtraction(sphere, pts);
    for (let i = 0; i < 12; i++) {
      const x = pts[3 * i], y = pts[3 * i + 1], z = pts[3 * i + 2], r = Math.hypot(x, y, z);
      expect(pr.potential[i] / (K * Q / r)).toBeCloseTo(1, 3);
      const er = (pr.field[3 * i] * x + pr.field[3 * i + 1] * y + pr.field[3 * i + 2] * z) / r;
      expect(er / (K * Q / (r * r))).toBeCloseTo(1, 3);
      expect(fieldMagnitude(pr)[i] / Math.abs(er)).toBeCloseTo(1, 4);
      // and V·R/r of the ideal sphere, within the level-2 mesh's capacitance error (about 1 %)
      expect(Math.abs(pr.potential[i] / (V * (R * 1e-3) / r) - 1)).toBeLessThan(2e-2);
    }
  });

  it("the CSV carries the same values, lengths in the user's unit", () => {
    const spec = parseProbeOption("radial=line:3,0,0:9,0,0:4");
    const pts = probePoints(spec, 1e-3);
    const pr = probeExtraction(sphere, pts);
    const recs = parseCsv(probeCsv(spec, pts, pr, "mm"));
    expect(recs[0]).toEqual(["probe", "index", "x (mm)", "y (mm)", "z (mm)", "distance (mm)", "potential (V)", "Ex (V/m)", "Ey (V/m)", "Ez (V/m)", "|E| (V/m)"]);
    expect(recs.length).toBe(5);
    for (let i = 0; i < 4; i++) {
      const r = recs[1 + i];
      expect(r[0]).toBe("radial");
      expect(Number(r[2])).toBeCloseTo(3 + 2 * i, 12);
      expect(Number(r[5])).toBeCloseTo(2 * i, 12);
      expect(Number(r[6])).toBe(pr.potential[i]);
      expect(Number(r[7])).toBe(pr.field[3 * i]);
      // closed form at x = 3 + 2i mm on the axis
      expect(Number(r[6]) / (K * Q / ((3 + 2 * i) * 1e-3))).toBeCloseTo(1, 3);
    }
    const g: ProbeSpec = parseProbeOption("plane=grid:3,-1,0:0,2,0:0,0,2:2,2");
    const gp = probePoints(g, 1e-3);
    const grecs = parseCsv(probeCsv(g, gp, probeExtraction(sphere, gp), "mm"));
    expect(grecs[0].slice(5, 7)).toEqual(["i", "j"]);
    expect(grecs.slice(1).map((r) => `${r[5]},${r[6]}`)).toEqual(["0,0", "1,0", "0,1", "1,1"]);
  });

  it("on the axis of a thin charged ring: E_z = kQz/(R² + z²)^{3/2}, φ = kQ/√(R² + z²) (Griffiths, Introduction to Electrodynamics, ring of charge)", async () => {
    const Rr = 1, a = 0.02;
    const ring = await extractMesh(torusMesh({ majorRadius: Rr, minorRadius: a, divisions: [48, 6] }), { potentials: [1] });
    const Qr = ring.conductors[0].charge;
    const spec = parseProbeOption("axis=line:0,0,0.25:0,0,3:12");
    const pts = probePoints(spec, 1);
    const pr = probeExtraction(ring, pts);
    for (let i = 0; i < 12; i++) {
      const z = pts[3 * i + 2], s = Rr * Rr + z * z;
      // Tube radius and the 48-gon change the on-axis values by O((a/R)²) and O((π/48)²), both < 3e-3.
      expect(pr.potential[i] / (K * Qr / Math.sqrt(s))).toBeCloseTo(1, 2);
      expect(pr.field[3 * i + 2] / (K * Qr * z / Math.pow(s, 1.5))).toBeCloseTo(1, 2);
      expect(Math.hypot(pr.field[3 * i], pr.field[3 * i + 1])).toBeLessThan(1e-3 * Math.abs(pr.field[3 * i + 2]));
    }
  });
});
