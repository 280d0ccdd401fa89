/**
 * Probe requests (command line and scene) and their points. Probes through the whole chain
 * (request → points → solved charge → CSV) against closed-form fields: tests/extract/probe.test.ts.
 */
import { describe, it, expect } from "vitest";
import { parseProbeOption, parseSceneProbes, probePoints, probePointCount, distanceAlong } from "../../src/io/probe-spec.js";
import { InputError } from "../../src/errors.js";

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
