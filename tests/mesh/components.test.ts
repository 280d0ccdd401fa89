import { describe, it, expect } from "vitest";
import { connectedComponents } from "../../src/mesh/components.js";

describe("connectedComponents", () => {
  it("labels pieces in order of first appearance; vertex-sharing joins", () => {
    // Pieces: {0,1} share an edge, {2} alone, {3} shares only vertex 0 with triangle 0.
    const t = new Uint32Array([0, 1, 2, 1, 2, 3, 4, 5, 6, 0, 7, 8]);
    const r = connectedComponents(t, 9);
    expect(r.count).toBe(2);
    expect(Array.from(r.component)).toEqual([0, 0, 1, 0]);
  });
  it("a long chain joined last-to-first is one component", () => {
    const n = 10000;
    const t = new Uint32Array(3 * n);
    for (let k = 0; k < n; k++) { t[3 * k] = n - k; t[3 * k + 1] = n - k - 1 + n + 1; t[3 * k + 2] = n - k - 1; }
    const r = connectedComponents(t, 2 * n + 2);
    expect(r.count).toBe(1);
  });
});
