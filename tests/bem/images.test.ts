/**
 * Image kernels: mirrored panels, their Galerkin entries P − P* (ground) and P + P* (symmetry)
 * against direct quadrature of explicitly reflected triangles, dense rows against entries,
 * positive definiteness, and the plane checks.
 */
import { describe, it, expect } from "vitest";
import { panelSet } from "../../src/bem/panels.js";
import { assembleRows, assembleBlock } from "../../src/bem/assembly.js";
import { galerkinEntry, RHO_MID } from "../../src/bem/galerkin.js";
import { trianglePotential } from "../../src/bem/triangle-potential.js";
import { dunavantRule } from "../../src/bem/dunavant.js";
import { imageSet, kernelPlanes, checkSides, conductorRanges, trianglesInSymmetryPlanes } from "../../src/bem/images.js";
import { potentialAt, fieldAt } from "../../src/bem/field.js";
import { choleskyFactorSerial } from "../../src/linalg/cholesky.js";
import { boxMesh } from "../../src/mesh/primitives/index.js";
import { icosphere } from "./icosphere.js";

const R10 = dunavantRule(10);

/**
 * Reference (1/(A_i A_j)) ∫_{T_i} ∫_{T'} dS dS / |x − y| for the triangle T' given by its nine
 * coordinates: the analytic inner integral (Wilton et al. 1984, as triangle-potential.ts) and
 * the degree-10 Dunavant rule on T_i split 4^depth times — independent of the Galerkin ladder.
 */
function referenceEntry(vi: ArrayLike<number>, tj: number[], depth: number): number {
  const areaOf = (v: ArrayLike<number>, o: number) => {
    const ux = v[o + 3] - v[o], uy = v[o + 4] - v[o + 1], uz = v[o + 5] - v[o + 2];
    const wx = v[o + 6] - v[o], wy = v[o + 7] - v[o + 1], wz = v[o + 8] - v[o + 2];
    return 0.5 * Math.hypot(uy * wz - uz * wy, uz * wx - ux * wz, ux * wy - uy * wx);
  };
  const pieces: number[][] = [Array.from(vi)];
  for (let d = 0; d < depth; d++) {
    const next: number[][] = [];
    for (const t of pieces) {
      const m = (a: number, b: number) => [0, 1, 2].map((k) => 0.5 * (t[3 * a + k] + t[3 * b + k]));
      const A = t.slice(0, 3), B = t.slice(3, 6), C = t.slice(6, 9), ab = m(0, 1), bc = m(1, 2), ca = m(2, 0);
      next.push([...A, ...ab, ...ca], [...ab, ...B, ...bc], [...ca, ...bc, ...C], [...ab, ...bc, ...ca]);
    }
    pieces.splice(0, pieces.length, ...next);
  }
  let s = 0;
  for (const t of pieces) {
    const a = areaOf(t, 0);
    for (let k = 0; k < R10.n; k++) {
      const l1 = R10.l1[k], l2 = R10.l2[k], l3 = R10.l3[k];
      s += a * R10.w[k] * trianglePotential(tj, 0, l1 * t[0] + l2 * t[3] + l3 * t[6], l1 * t[1] + l2 * t[4] + l3 * t[7], l1 * t[2] + l2 * t[5] + l3 * t[8]);
    }
  }
  return s / (areaOf(vi, 0) * areaOf(tj, 0));
}

/** Triangle j of P reflected in z = c (written independently of images.ts: same corner order). */
function reflectZ(P: ReturnType<typeof panelSet>, j: number, c: number): number[] {
  const t = Array.from(P.vertices.subarray(9 * j, 9 * j + 9));
  for (let k = 2; k < 9; k += 3) t[k] = 2 * c - t[k];
  return t;
}

describe("mirrored triangles", () => {
  it("the closed-form potential integral does not depend on the winding (so mirrored panels may be wound either way)", () => {
    let worst = 0;
    let seed = 7;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648) - 0.5;
    for (let t = 0; t < 200; t++) {
      const v = Array.from({ length: 9 }, rnd);
      const w = [...v.slice(0, 3), ...v.slice(6, 9), ...v.slice(3, 6)];
      // Points off the plane, near the plane and on it (centroid and an edge midpoint).
      const pts = [[rnd(), rnd(), rnd()], [(v[0] + v[3] + v[6]) / 3, (v[1] + v[4] + v[7]) / 3, (v[2] + v[5] + v[8]) / 3],
        [(v[0] + v[3]) / 2, (v[1] + v[4]) / 2, (v[2] + v[5]) / 2]];
      for (const p of pts) {
        const a = trianglePotential(v, 0, p[0], p[1], p[2]), b = trianglePotential(w, 0, p[0], p[1], p[2]);
        worst = Math.max(worst, Math.abs(a - b) / Math.abs(a));
      }
    }
    expect(worst).toBeLessThan(1e-13);
  });

  it("image panels are the reflected triangles, wound counter-clockwise about the reflected outward normal", () => {
    const s = icosphere(1);
    for (let i = 2; i < s.positions.length; i += 3) s.positions[i] += 3;
    const P = panelSet(s.positions, s.triangles);
    const S = imageSet(P, { groundPlane: { axis: "z", offset: 0.5 } });
    expect(S.count).toBe(1);
    expect(S.signs[0]).toBe(-1);
    for (let j = 0; j < P.n; j++) {
      const o = P.n + j;
      expect(S.panels.areas[o]).toBeCloseTo(P.areas[j], 14);
      expect(S.panels.centroids[3 * o + 2]).toBeCloseTo(1 - P.centroids[3 * j + 2], 12);
      // Outward normal of the mirrored sphere: the reflection of the original normal.
      expect(S.panels.normals[3 * o]).toBeCloseTo(P.normals[3 * j], 12);
      expect(S.panels.normals[3 * o + 2]).toBeCloseTo(-P.normals[3 * j + 2], 12);
    }
  });
});

describe("image entries against direct quadrature", () => {
  // A sphere of radius 1 at height 1.08 above z = 0: its lowest panels face their images 0.16 apart.
  const s = icosphere(2);
  for (let i = 2; i < s.positions.length; i += 3) s.positions[i] += 1.08;
  const P = panelSet(s.positions, s.triangles);
  const n = P.n;
  const S = imageSet(P, { groundPlane: { axis: "z", offset: 0 } });
  const A = new Float64Array(n * n);
  assembleRows(P, "galerkin", 0, n, A, S);
  // Pairs from the bottom (near the plane, near rungs of the image entry) and far ones.
  const order = Array.from({ length: n }, (_, j) => j).sort((a, b) => P.centroids[3 * a + 2] - P.centroids[3 * b + 2]);
  const pairs: Array<[number, number]> = [[order[0], order[0]], [order[0], order[1]], [order[0], order[5]], [order[2], order[40]],
    [order[3], order[n - 1]], [order[100], order[200]]];

  it("P_ij − P(T_i, T_j*) equals the free entry minus the quadrature of the reflected triangle (to the ladder's bounds)", () => {
    let near = 0;
    for (const [i, j] of pairs) {
      const image = referenceEntry(P.vertices.subarray(9 * i, 9 * i + 9), reflectZ(P, j, 0), 3);
      const got = A[i * n + j] - galerkinEntry(P, i, j);
      // Bounds documented in galerkin.ts: near rungs (ρ < RHO_MID) 1e-6, far rungs 1e-5.
      const c = S.panels.centroids, o = n + j;
      const rho = Math.hypot(c[3 * i] - c[3 * o], c[3 * i + 1] - c[3 * o + 1], c[3 * i + 2] - c[3 * o + 2]) / (P.radii[i] + S.panels.radii[o]);
      if (rho < RHO_MID) near++;
      expect(Math.abs(-got - image) / image).toBeLessThan(rho < RHO_MID ? 1e-6 : 1e-5);
    }
    expect(near).toBeGreaterThanOrEqual(3);
  });

  it("the matrix is symmetric, equals assembleBlock entry for entry, and stays positive definite", () => {
    let asym = 0;
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) asym = Math.max(asym, Math.abs(A[i * n + j] - A[j * n + i]));
    expect(asym).toBe(0);
    const rows = Uint32Array.from(pairs.map((p) => p[0])), cols = Uint32Array.from(pairs.map((p) => p[1]));
    const block = new Float64Array(rows.length * cols.length);
    assembleBlock(P, rows, cols, block, "galerkin", S);
    for (let a = 0; a < rows.length; a++) for (let b = 0; b < cols.length; b++) expect(block[a * cols.length + b]).toBe(A[rows[a] * n + cols[b]]);
    // G − G* is the Dirichlet Green's function of the half space, a positive operator (Jackson §1.10).
    const L = A.slice();
    expect(() => choleskyFactorSerial(L, n)).not.toThrow();
  });

  it("potential of panel charges plus images vanishes on the plane (odd images), and the field there is normal", () => {
    const q = new Float64Array(n);
    for (let j = 0; j < n; j++) q[j] = P.areas[j] * (1 + 0.3 * Math.sin(5 * j));
    const pts = Float64Array.from([0, 0, 0, 0.3, -0.2, 0, 2, 1, 0]);
    const phi = new Float64Array(3), free = new Float64Array(3), e = new Float64Array(9);
    potentialAt(P, q, pts, phi, S);
    potentialAt(P, q, pts, free);
    fieldAt(P, q, pts, e, S);
    for (let k = 0; k < 3; k++) {
      expect(Math.abs(phi[k]) / free[k]).toBeLessThan(1e-12);
      expect(Math.hypot(e[3 * k], e[3 * k + 1]) / Math.abs(e[3 * k + 2])).toBeLessThan(1e-10);
    }
  });
});

describe("symmetry images of a half model", () => {
  // Upper half (z > 0) of a box centred at the origin: cut open along z = 0.
  const box = boxMesh({ size: [1, 1, 1], divisions: 4 });
  const keep: number[] = [];
  for (let t = 0; t < box.conductor.length; t++) {
    const zc = (box.positions[3 * box.triangles[3 * t] + 2] + box.positions[3 * box.triangles[3 * t + 1] + 2] + box.positions[3 * box.triangles[3 * t + 2] + 2]) / 3;
    if (zc > 0) keep.push(box.triangles[3 * t], box.triangles[3 * t + 1], box.triangles[3 * t + 2]);
  }
  const P = panelSet(box.positions, Uint32Array.from(keep));
  const S = imageSet(P, { symmetry: [{ axis: "z", offset: 0 }] });

  it("corners on the plane keep their vertex index, so panels meeting their image there take the touching rung", () => {
    let touching = 0, worst = 0;
    for (let j = 0; j < P.n; j++) {
      for (let k = 0; k < 3; k++) {
        const onPlane = Math.abs(P.vertices[9 * j + 3 * k + 2]) < 1e-15;
        const mirrored = S.panels.corners[3 * (P.n + j) + (k === 0 ? 0 : 3 - k)];
        expect(mirrored === P.corners[3 * j + k]).toBe(onPlane);
      }
      const low = [0, 1, 2].filter((k) => Math.abs(P.vertices[9 * j + 3 * k + 2]) < 1e-15).length;
      if (low === 2) {
        // Panel sharing an edge with its own image (sides of the box): compare with quadrature.
        touching++;
        const ref = referenceEntry(P.vertices.subarray(9 * j, 9 * j + 9), reflectZ(P, j, 0), 4);
        worst = Math.max(worst, Math.abs(galerkinEntry(S.panels, j, P.n + j) - ref) / ref);
      }
    }
    expect(touching).toBeGreaterThan(0);
    // The subdivided reference converges slowly at the shared edge (r ln r); 1e-5 is its floor at depth 4.
    expect(worst).toBeLessThan(1e-5);
  });

  it("the half-model matrix P + P* equals the even combination of the full model's matrix", () => {
    // Full box: the kept half and its mirror; for an even charge x on both halves, (A_full x)_half = (P + P*) x.
    const n = P.n;
    const A = new Float64Array(n * n);
    assembleRows(P, "galerkin", 0, n, A, S);
    for (const [i, j] of [[0, 1], [3, n - 1], [10, 20]]) {
      const direct = galerkinEntry(P, i, j) + galerkinEntry(S.panels, i, P.n + j);
      expect(A[i * n + j]).toBe(direct);
    }
  });
});

describe("plane checks", () => {
  it("refuses two planes on one axis and a symmetry plane parallel to the ground plane", () => {
    expect(() => kernelPlanes({ symmetry: [{ axis: "x", offset: 0 }, { axis: "x", offset: 1 }] })).toThrow(/already a symmetry plane normal to x/);
    expect(() => kernelPlanes({ groundPlane: { axis: "z", offset: 0 }, symmetry: [{ axis: "z", offset: 1 }] })).toThrow(/ground plane normal to z/);
    const k = kernelPlanes({ groundPlane: { axis: "z", offset: -1 }, symmetry: [{ axis: "x", offset: 0 }, { axis: "y", offset: 2 }] });
    expect(Array.from(k.signs)).toEqual([1, 1, -1]);
  });

  it("names the conductor and the side when a conductor crosses or touches the ground plane", () => {
    const pos = Float64Array.from([0, 0, 1, 1, 0, 1, 0, 1, 1, 0, 0, 2, 1, 0, 2, 0, 1, -0.1]);
    const tri = Uint32Array.from([0, 1, 2, 3, 4, 5]);
    const cond = Uint32Array.from([0, 1]);
    const r = conductorRanges(pos, tri, cond, 2);
    const f = checkSides({ groundPlane: { axis: "z", offset: 0 } }, r, ["pad", "lead"]);
    expect(f.fault).toMatch(/conductor lead crosses the ground plane z = 0 m .* lowest point is at z = -0.1 m.*strictly above/);
    const touch = Float64Array.from(pos); touch[17] = 0;
    expect(checkSides({ groundPlane: { axis: "z", offset: 0 } }, conductorRanges(touch, tri, cond, 2), ["pad", "lead"]).fault).toMatch(/lead touches/);
    // A symmetry plane may be met but not crossed.
    expect(checkSides({ symmetry: [{ axis: "z", offset: 0 }] }, conductorRanges(touch, tri, cond, 2), ["pad", "lead"]).fault).toBeUndefined();
    expect(checkSides({ symmetry: [{ axis: "z", offset: 0 }] }, r, ["pad", "lead"]).fault).toMatch(/lead crosses the symmetry plane/);
  });

  it("finds the triangles lying in a symmetry plane", () => {
    const pos = Float64Array.from([0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1]);
    const tri = Uint32Array.from([0, 1, 2, 0, 1, 3]);
    const c = trianglesInSymmetryPlanes({ symmetry: [{ axis: "z", offset: 0 }] }, pos, tri);
    expect(c.count).toBe(1);
    expect(Array.from(c.flags)).toEqual([1, 0]);
  });
});
