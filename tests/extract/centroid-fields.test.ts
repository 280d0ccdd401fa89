import { describe, it, expect, afterAll } from "vitest";
import { sphereMesh, plateMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { panelSet } from "../../src/bem/panels.js";
import { imageSet } from "../../src/bem/images.js";
import { centroidFields, centroidFieldsParallel, centroidFieldsFast } from "../../src/extract/probe.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { WorkerPool } from "../../src/linalg/pool.js";

const pool = new WorkerPool(2);
afterAll(async () => { await pool.close(); });

describe("principal-value field at panel centroids (centroidFields)", () => {
  it("on a uniformly charged sphere is σ/(2ε0) along the normal (Gauss's law: σ/ε0 outside, 0 inside)", () => {
    const m = sphereMesh({ radius: 0.01, level: 4 });
    const P = panelSet(m.positions, m.triangles);
    const sigma = 1e-6, q = new Float64Array(P.n);
    for (let p = 0; p < P.n; p++) q[p] = sigma * P.areas[p];
    const list = Uint32Array.from({ length: P.n }, (_, i) => i);
    const e = centroidFields(P, q, EPSILON_0, list);
    const expected = sigma / (2 * EPSILON_0);
    let worst = 0;
    for (let p = 0; p < P.n; p++) {
      const en = e[3 * p] * P.normals[3 * p] + e[3 * p + 1] * P.normals[3 * p + 1] + e[3 * p + 2] * P.normals[3 * p + 2];
      worst = Math.max(worst, Math.abs(en / expected - 1));
    }
    // Flat panels on a curved surface: a discretisation error of a few per cent at this level.
    expect(worst).toBeLessThan(0.05);
  });

  for (const withImages of [false, true]) {
    it(`split over two workers equals the serial sum to 1e-6 (${withImages ? "with a ground-plane image" : "free space"})`, async () => {
      const m = concatMeshes([
        { ...sphereMesh({ radius: 0.004, level: 3, center: [0, 0, 0.01] }), names: ["ball"] },
        { ...plateMesh({ size: [0.02, 0.01], divisions: 12, center: [0, 0, 0.003] }), names: ["sheet"] },
      ]);
      const P = panelSet(m.positions, m.triangles);
      const q = new Float64Array(P.n);
      for (let p = 0; p < P.n; p++) q[p] = 1e-12 * Math.sin(1 + 7 * p);
      const list = Uint32Array.from({ length: P.n }, (_, i) => i).filter((p) => p % 3 !== 1);
      const images = withImages ? imageSet(P, { groundPlane: { axis: "z", offset: 0 } }) : undefined;
      const serial = centroidFields(P, q, 3 * EPSILON_0, list, images);
      const parallel = await centroidFieldsParallel(P, q, 3 * EPSILON_0, list, images, pool);
      expect(parallel.length).toBe(3 * list.length);
      let d = 0, s = 0;
      for (let i = 0; i < serial.length; i++) { d = Math.max(d, Math.abs(parallel[i] - serial[i])); s = Math.max(s, Math.abs(serial[i])); }
      expect(s).toBeGreaterThan(0);
      expect(d / s).toBeLessThan(1e-6);
    });
  }
});

describe("centroid fields through the block-tree evaluation (centroidFieldsFast)", () => {
  const m = concatMeshes([
    { ...sphereMesh({ radius: 0.004, level: 3, center: [0, 0, 0.01] }), names: ["ball"] },
    { ...plateMesh({ size: [0.02, 0.01], divisions: 14, center: [0, 0, 0.003] }), names: ["sheet"] },
    { ...plateMesh({ size: [0.006, 0.006], divisions: 10, center: [0.016, 0, 0.004] }), names: ["pad"] },
  ]);
  const P = panelSet(m.positions, m.triangles);
  const q = new Float64Array(P.n);
  for (let p = 0; p < P.n; p++) q[p] = 1e-12 * (1.5 + Math.sin(1 + 7 * p)) * P.areas[p] / 1e-6;
  const list = Uint32Array.from({ length: P.n }, (_, i) => i).filter((p) => p % 4 !== 1);

  for (const withImages of [false, true]) {
    it(`agrees with the all-pairs sum to 2e-5 of the largest field (${withImages ? "ground-plane image" : "free space"})`, async () => {
      const images = withImages ? imageSet(P, { groundPlane: { axis: "z", offset: 0 } }, { shared: true }) : undefined;
      const exact = centroidFields(P, q, 2 * EPSILON_0, list, images);
      const fast = await centroidFieldsFast(P, q, 2 * EPSILON_0, list, images, pool, 1e-5, 0);
      let d = 0, s = 0;
      for (let i = 0; i < exact.length; i++) { d = Math.max(d, Math.abs(fast[i] - exact[i])); s = Math.max(s, Math.abs(exact[i])); }
      expect(s).toBeGreaterThan(0);
      expect(d / s).toBeLessThan(2e-5);
    });
  }

  it("on a uniformly charged sphere gives σ/(2ε0) along the normal (Gauss's law), as the exact sum", async () => {
    const s = sphereMesh({ radius: 0.01, level: 4 });
    const S = panelSet(s.positions, s.triangles);
    const sigma = 1e-6, qs = new Float64Array(S.n);
    for (let p = 0; p < S.n; p++) qs[p] = sigma * S.areas[p];
    const all = Uint32Array.from({ length: S.n }, (_, i) => i);
    const e = await centroidFieldsFast(S, qs, EPSILON_0, all, undefined, pool, 1e-5, 0);
    const exact = centroidFields(S, qs, EPSILON_0, all);
    const expected = sigma / (2 * EPSILON_0);
    let worst = 0, diff = 0;
    for (let p = 0; p < S.n; p++) {
      const en = e[3 * p] * S.normals[3 * p] + e[3 * p + 1] * S.normals[3 * p + 1] + e[3 * p + 2] * S.normals[3 * p + 2];
      const ex = exact[3 * p] * S.normals[3 * p] + exact[3 * p + 1] * S.normals[3 * p + 1] + exact[3 * p + 2] * S.normals[3 * p + 2];
      worst = Math.max(worst, Math.abs(en / expected - 1));
      diff = Math.max(diff, Math.abs(en - ex) / expected);
    }
    expect(worst).toBeLessThan(0.05);
    expect(diff).toBeLessThan(2e-5);
  });
});
