import { describe, it, expect } from "vitest";
import { progressValue } from "../../cli/progress.js";

describe("progress bar value across phases and mesh levels", () => {
  const walk = (phases: string[], levels: number, compressed: boolean): number[] => {
    const out: number[] = [];
    for (let l = 0; l < levels; l++) for (const p of phases) for (const f of [0, 0.25, 0.5, 1]) out.push(progressValue(p, f, l, levels, compressed));
    return out;
  };
  for (const [name, phases, compressed] of [
    ["compressed: tree, near field, far field, solve", ["tree", "near field", "far field", "solve"], true],
    ["dense: assembly, solve", ["assembly", "solve"], false],
  ] as const) {
    it(`${name}: never steps back, starts at 0 and ends at 1`, () => {
      for (const levels of [1, 3]) {
        const v = walk([...phases], levels, compressed);
        for (let i = 1; i < v.length; i++) expect(v[i]).toBeGreaterThanOrEqual(v[i - 1]);
        expect(v[0]).toBe(0);
        expect(v[v.length - 1]).toBeCloseTo(1, 12);
      }
    });
  }

  it("a later refinement level weighs 4× the one before; bad fractions clamp", () => {
    // Two levels: the first ends at 1/5 of the run.
    expect(progressValue("solve", 1, 0, 2, true)).toBeCloseTo(0.2, 12);
    expect(progressValue("near field", Number.NaN, 0, 1, true)).toBeCloseTo(progressValue("near field", 0, 0, 1, true), 12);
    expect(progressValue("far field", 7, 0, 1, true)).toBeCloseTo(progressValue("far field", 1, 0, 1, true), 12);
  });
});
