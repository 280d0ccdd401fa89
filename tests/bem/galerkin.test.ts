import { describe, it, expect } from "vitest";
import { panelSet, type PanelSet } from "../../src/bem/panels.js";
import { galerkinEntry, selfTerm, farTerm, doubleQuadrature, sharedCorner, RHO_FAR, RHO_MID, RHO_NEAR, RHO_QQ3, RHO_QUADRUPOLE } from "../../src/bem/galerkin.js";
import { trianglePotential, sourceFrame, frameDistance, FRAME_SIZE } from "../../src/bem/triangle-potential.js";
import { plateMesh } from "../../src/mesh/primitives/index.js";
import { dunavantRule } from "../../src/bem/dunavant.js";
import { icosphere } from "./icosphere.js";

/**
 * Reference: analytic inner integral (Wilton et al. 1984, tested in triangle-potential.test.ts)
 * and the degree-10 Dunavant rule on T_i cut into 4^levels congruent pieces. For pairs whose
 * outer integrand is smooth this converges fast; for touching pairs and the self term the
 * error falls as h² (log-type edge behaviour), so two levels are combined by Richardson
 * extrapolation (common practice).
 */
const R10 = dunavantRule(10);
function subdivided(P: PanelSet, i: number, j: number, levels: number): number {
  const v = P.vertices;
  let s = 0;
  const rec = (a: number[], b: number[], c: number[], l: number): void => {
    if (l === 0) {
      for (let k = 0; k < R10.n; k++) {
        s += R10.w[k] * trianglePotential(v, 9 * j, R10.l1[k] * a[0] + R10.l2[k] * b[0] + R10.l3[k] * c[0],
          R10.l1[k] * a[1] + R10.l2[k] * b[1] + R10.l3[k] * c[1], R10.l1[k] * a[2] + R10.l2[k] * b[2] + R10.l3[k] * c[2]);
      }
      return;
    }
    const ab = a.map((x, q) => (x + b[q]) / 2), bc = b.map((x, q) => (x + c[q]) / 2), ca = c.map((x, q) => (x + a[q]) / 2);
    rec(a, ab, ca, l - 1); rec(ab, b, bc, l - 1); rec(ca, bc, c, l - 1); rec(ab, bc, ca, l - 1);
  };
  const o = 9 * i;
  rec([v[o], v[o + 1], v[o + 2]], [v[o + 3], v[o + 4], v[o + 5]], [v[o + 6], v[o + 7], v[o + 8]], levels);
  return s / 4 ** levels / P.areas[j];
}
const richardson = (P: PanelSet, i: number, j: number, l: number) => { const a = subdivided(P, i, j, l), b = subdivided(P, i, j, l + 1); return b + (b - a) / 3; };
const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

let seed = 12345;
const rnd = () => { seed = (seed * 16807) % 2147483647; return seed / 2147483647; };

/** Two random triangles whose centroids are ρ·(r_i + r_j) apart in a random direction. */
function pairAt(rho: number): PanelSet {
  const pos = new Float64Array(18);
  for (let k = 0; k < 18; k++) pos[k] = rnd() - 0.5;
  const tris = new Uint32Array([0, 1, 2, 3, 4, 5]);
  const P0 = panelSet(pos, tris);
  const d = [rnd() - 0.5, rnd() - 0.5, rnd() - 0.5], dn = Math.hypot(...d);
  const s = rho * (P0.radii[0] + P0.radii[1]);
  for (let k = 3; k < 6; k++) for (let q = 0; q < 3; q++) pos[3 * k + q] += P0.centroids[q] - P0.centroids[3 + q] + (s * d[q]) / dn;
  return panelSet(pos, tris);
}
function wellShaped(P: PanelSet): boolean {
  for (let t = 0; t < P.n; t++) if (P.areas[t] < 0.2 * P.radii[t] ** 2) return false;
  return true;
}

describe("Galerkin self term", () => {
  it("closed form (4/3)Σ(1/a)ln(p/(p−2a)) agrees with converged numerical integration to 1e-9", () => {
    for (const v of [[0, 0, 0, 1, 0, 0, 0.5, Math.sqrt(3) / 2, 0], [0, 0, 0, 1, 0.1, 0, 0.3, 0.8, 0.05], [0, 0, 0, 3, 0, 0, 0.2, 0.3, 0]]) {
      const P = panelSet(Float64Array.from(v), new Uint32Array([0, 1, 2]));
      expect(rel(selfTerm(P, 0), richardson(P, 0, 0, 5))).toBeLessThan(1e-9);
    }
  });
  it("scales as 1/length", () => {
    const v = [0, 0, 0, 1, 0.1, 0, 0.3, 0.8, 0.05];
    const a = selfTerm(panelSet(Float64Array.from(v), new Uint32Array([0, 1, 2])), 0);
    const b = selfTerm(panelSet(Float64Array.from(v.map((x) => x * 1e-3)), new Uint32Array([0, 1, 2])), 0);
    expect(rel(b, a * 1e3)).toBeLessThan(1e-14);
  });
});

describe("Galerkin touching pairs (homogeneity reduction)", () => {
  it("edge- and vertex-sharing pairs, coplanar and folded, agree with the extrapolated reference to 1e-8", () => {
    const cases: number[][] = [
      [0, 0, 0, 1, 0, 0, 0.4, 0.9, 0, 0.6, -0.8, 0],          // shared edge, coplanar
      [0, 0, 0, 1, 0, 0, 0.4, 0.9, 0, 0.5, -0.5, 0.6],        // shared edge, folded
      [0, 0, 0, 1, 0, 0, 0.4, 0.9, 0, 0.5, -0.2, -0.9],       // shared edge, folded the other way
    ];
    for (const c of cases) {
      const P = panelSet(Float64Array.from(c), new Uint32Array([0, 1, 2, 1, 0, 3]));
      const ref = richardson(P, 0, 1, 5);
      expect(rel(galerkinEntry(P, 0, 1), ref)).toBeLessThan(1e-8);
    }
    const vcases: number[][] = [
      [0, 0, 0, 1, 0, 0, 0.4, 0.9, 0, -1, 0.2, 0, -0.6, -0.7, 0.1],   // shared vertex 0
      [0, 0, 0, 1, 0, 0, 0.4, 0.9, 0, -0.3, -0.9, 0.4, 0.5, -0.6, -0.2],
    ];
    for (const c of vcases) {
      const P = panelSet(Float64Array.from(c), new Uint32Array([0, 1, 2, 0, 3, 4]));
      const ref = richardson(P, 0, 1, 5);
      expect(rel(galerkinEntry(P, 0, 1), ref)).toBeLessThan(1e-8);
    }
  });
});

describe("Galerkin ladder errors on random pairs vs the subdivided reference", () => {
  // Bounds per rung as documented in galerkin.ts: ≤ 1e-6 below RHO_MID, ≤ 2e-6 up to RHO_QQ3, ≤ 1e-5 beyond.
  const bins: [number, number, number, number][] = [
    [0.35, RHO_NEAR, 1e-6, 5], [RHO_NEAR, RHO_MID, 1e-6, 3], [RHO_MID, RHO_QQ3, 2e-6, 3], [RHO_QQ3, RHO_FAR, 1e-5, 3],
    [RHO_FAR, 8, 1e-5, 2], [8, RHO_QUADRUPOLE, 1e-5, 2], [RHO_QUADRUPOLE, 60, 1e-5, 1],
  ];
  for (const [lo, hi, tol, levels] of bins) {
    it(`ρ in [${lo}, ${hi}): relative error < ${tol}`, () => {
      let worst = 0, count = 0;
      while (count < 25) {
        const P = pairAt(lo + (hi - lo) * rnd());
        if (!wellShaped(P)) continue;
        count++;
        worst = Math.max(worst, rel(galerkinEntry(P, 0, 1), subdivided(P, 0, 1, levels)));
      }
      expect(worst).toBeLessThan(tol);
    });
  }
  it("the far rung is not over-trusted: the expansion at ρ = 1.5 is visibly worse than 1e-5", () => {
    let worst = 0;
    for (let k = 0; k < 10; k++) { const P = pairAt(1.5); worst = Math.max(worst, rel(farTerm(P, 0, 1), subdivided(P, 0, 1, 3))); }
    expect(worst).toBeGreaterThan(1e-5);
  });
  it("double quadrature and far expansion agree where both apply", () => {
    const P = pairAt(12);
    expect(rel(farTerm(P, 0, 1), doubleQuadrature(P, 0, 1, dunavantRule(8)))).toBeLessThan(1e-6);
  });
});

describe("Galerkin symmetry", () => {
  it("P_ij and P_ji are the same number on an icosphere, every rung", () => {
    const s = icosphere(2);
    const P = panelSet(s.positions, s.triangles);
    for (let i = 0; i < P.n; i += 7) for (let j = 0; j < P.n; j += 3) expect(galerkinEntry(P, i, j)).toBe(galerkinEntry(P, j, i));
  });
});

describe("Galerkin near rung on graded, coplanar and sliver pairs (distance-split outer rule)", () => {
  // Reference: the subdivided degree-10 outer rule above at 4^5 pieces, its own convergence
  // checked against 4^4 pieces (the pairs do not touch, so it converges geometrically).
  const checkPairs = (P: PanelSet, pairs: [number, number][], tol: number) => {
    let worst = 0;
    for (const [i, j] of pairs) {
      const lo = Math.min(i, j), hi = Math.max(i, j);
      const r4 = subdivided(P, lo, hi, 4), r5 = subdivided(P, lo, hi, 5);
      expect(rel(r4, r5)).toBeLessThan(1e-9);
      worst = Math.max(worst, rel(galerkinEntry(P, i, j), r5));
    }
    expect(worst).toBeLessThan(tol);
    return worst;
  };
  const rhoOf = (P: PanelSet, i: number, j: number) => {
    const c = P.centroids;
    return Math.hypot(c[3 * i] - c[3 * j], c[3 * i + 1] - c[3 * j + 1], c[3 * i + 2] - c[3 * j + 2]) / (P.radii[i] + P.radii[j]);
  };
  const nonTouching = (P: PanelSet, lo: number, hi: number, stride: number) => {
    const out: [number, number][] = [];
    let k = 0;
    for (let i = 0; i < P.n; i++) for (let j = i + 1; j < P.n; j++) {
      const r = rhoOf(P, i, j);
      if (r >= lo && r < hi && sharedCorner(P, i, j) < 0 && k++ % stride === 0) out.push([i, j]);
    }
    return out;
  };

  it("graded plate (10 m, 12 divisions, grading 3): ρ < 1 pairs within 2e-7", () => {
    const m = plateMesh({ size: [10, 10], divisions: 12, grading: 3 });
    const P = panelSet(m.positions, m.triangles);
    const pairs = nonTouching(P, 0, RHO_NEAR, 37);
    expect(pairs.length).toBeGreaterThan(15);
    checkPairs(P, pairs, 2e-7);
  });
  it("graded plate: ρ in [1, 2.5) (degree-6 double quadrature) within the 1e-6 near bound", () => {
    const m = plateMesh({ size: [1, 1], divisions: 12, grading: 3 });
    const P = panelSet(m.positions, m.triangles);
    const pairs = nonTouching(P, RHO_NEAR, RHO_MID, 401);
    expect(pairs.length).toBeGreaterThan(15);
    checkPairs(P, pairs, 1e-6);
  });
  it("coplanar neighbours of neighbours on a uniform grid, both orientations of the diagonal", () => {
    const m = plateMesh({ size: [1, 1], divisions: 6 });
    const P = panelSet(m.positions, m.triangles);
    // Pairs with no common vertex but a common neighbour (one panel between them).
    const pairs: [number, number][] = [];
    for (let i = 0; i < P.n; i += 3) for (let j = i + 1; j < P.n; j++) {
      if (sharedCorner(P, i, j) >= 0 || rhoOf(P, i, j) >= RHO_MID) continue;
      for (let k = 0; k < P.n; k++) if (sharedCorner(P, i, k) >= 0 && sharedCorner(P, k, j) >= 0) { pairs.push([i, j]); break; }
    }
    expect(pairs.some(([i, j]) => rhoOf(P, i, j) < RHO_NEAR)).toBe(true);
    checkPairs(P, pairs, 2e-7);
  });
  it("slivers of aspect 10–50 at ρ < 1, coplanar and in space", () => {
    const P0 = (pos: number[]) => panelSet(Float64Array.from(pos), new Uint32Array([0, 1, 2, 3, 4, 5]));
    let made = 0, tries = 0;
    while (made < 16 && tries++ < 2000) {
      const asp = 10 + 40 * rnd(), coplanar = made % 2 === 0;
      // T_i: a sliver of length 1 along x; T_j: a sliver or a plain triangle, turned at random.
      const a = [0, 0, 0, 1, 0, 0, rnd(), 1 / asp, 0];
      const th = Math.PI * rnd(), len = 0.3 + rnd(), w = made % 4 < 2 ? len / (10 + 40 * rnd()) : 0.5 * len;
      const u = [Math.cos(th), Math.sin(th), coplanar ? 0 : rnd() - 0.5];
      const b = [0, 0, 0, len * u[0], len * u[1], len * u[2], len * rnd() * u[0] - w * u[1], len * rnd() * u[1] + w * u[0], coplanar ? 0 : w * (rnd() - 0.5)];
      const Q = P0([...a, ...b]);
      const rho = 0.3 + 0.7 * rnd(), dir = [rnd() - 0.5, rnd() - 0.5, coplanar ? 0 : rnd() - 0.5], dl = Math.hypot(...dir);
      const s = rho * (Q.radii[0] + Q.radii[1]);
      for (let k = 3; k < 6; k++) for (let q = 0; q < 3; q++) b[3 * (k - 3) + q] += Q.centroids[q] - Q.centroids[3 + q] + (s * dir[q]) / dl;
      const P = P0([...a, ...b]);
      // Keep pairs that stay clear of each other by 5 % of the sliver length (touching pairs
      // have their own rung; the reference needs the gap to converge).
      const F = sourceFrame(new Float64Array(FRAME_SIZE), P.vertices, 9);
      let gap = Infinity;
      for (let p = 0; p <= 40; p++) for (let q = 0; p + q <= 40; q++) {
        const l2 = p / 40, l3 = q / 40, l1 = 1 - l2 - l3, v = P.vertices;
        gap = Math.min(gap, frameDistance(F, l1 * v[0] + l2 * v[3] + l3 * v[6], l1 * v[1] + l2 * v[4] + l3 * v[7], l1 * v[2] + l2 * v[5] + l3 * v[8]));
      }
      if (gap < 0.05 || rhoOf(P, 0, 1) >= RHO_NEAR) continue;
      made++;
      checkPairs(P, [[0, 1]], 2e-7);
    }
    expect(made).toBe(16);
  });
});
