import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { trianglePotential, trianglePotentialGradient, triangleSolidAngle, FAR_RATIO, sourceFrame, framePotential, frameDistance, FRAME_SIZE } from "../../src/bem/triangle-potential.js";
import { gaussLegendre } from "../../src/bem/gauss-legendre.js";
import { dunavantRule } from "../../src/bem/dunavant.js";

/**
 * Independent numerical reference for I(x) = ∫_T dS/|x − y|: T is written as the signed sum
 * of the three triangles (x', a, b) with apex at the projection x' of x onto the plane, and
 * each is mapped by the Duffy transformation y = x' + u((a − x') + v(b − a)) (M. G. Duffy,
 * SIAM J. Numer. Anal. 19(6):1260–1262, 1982), which cancels the 1/r singularity at the apex.
 * Composite Gauss–Legendre, graded geometrically toward u = 0 and uniform in v.
 */
const G = gaussLegendre(12);
const V_INTERVALS: [number, number][] = [];
for (let k = 1; k < 31; k++) V_INTERVALS.push([k / 32, (k + 1) / 32]);
for (let l = 0, hi = 1 / 32; l < 24; l++) { const lo = l === 23 ? 0 : hi * 0.3; V_INTERVALS.push([lo, hi], [1 - hi, 1 - lo]); hi = lo; }
function reference(v: number[], p: number[]): number {
  const [ax, ay, az, bx, by, bz, cx, cy, cz] = v;
  let nx = (by - ay) * (cz - az) - (bz - az) * (cy - ay), ny = (bz - az) * (cx - ax) - (bx - ax) * (cz - az), nz = (bx - ax) * (cy - ay) - (by - ay) * (cx - ax);
  const nn = Math.hypot(nx, ny, nz); nx /= nn; ny /= nn; nz /= nn;
  const h = (p[0] - ax) * nx + (p[1] - ay) * ny + (p[2] - az) * nz;
  const q = [p[0] - h * nx, p[1] - h * ny, p[2] - h * nz];
  const P = [[ax, ay, az], [bx, by, bz], [cx, cy, cz]];
  let total = 0;
  const scale = Math.hypot(bx - ax, by - ay, bz - az) + Math.hypot(p[0] - q[0], p[1] - q[1], p[2] - q[2]) + Math.hypot(q[0] - ax, q[1] - ay, q[2] - az);
  const levels = h === 0 ? 1 : Math.min(40, Math.max(1, Math.ceil(Math.log(Math.abs(h) / scale) / Math.log(0.3)) + 4));
  for (let k = 0; k < 3; k++) {
    const A = P[k], B = P[(k + 1) % 3];
    const e1 = [A[0] - q[0], A[1] - q[1], A[2] - q[2]], e2 = [B[0] - A[0], B[1] - A[1], B[2] - A[2]];
    // twice the signed area of (q, A, B) about n
    const cr = [e1[1] * e2[2] - e1[2] * e2[1], e1[2] * e2[0] - e1[0] * e2[2], e1[0] * e2[1] - e1[1] * e2[0]];
    const a2 = cr[0] * nx + cr[1] * ny + cr[2] * nz;
    // degenerate sectors (x' on an edge line) contribute nothing
    if (Math.abs(a2) <= 1e-12 * (e1[0] ** 2 + e1[1] ** 2 + e1[2] ** 2 + e2[0] ** 2 + e2[1] ** 2 + e2[2] ** 2)) continue;
    let s = 0;
    // v: 32 equal intervals (a near-singularity may sit anywhere along the edge), the two end
    // ones graded geometrically toward the corners
    for (const [vl, vh] of V_INTERVALS) for (let gv = 0; gv < G.n; gv++) {
      const vv = vl + (vh - vl) * G.t[gv], wv = G.w[gv] * (vh - vl);
      const w = [e1[0] + vv * e2[0], e1[1] + vv * e2[1], e1[2] + vv * e2[2]];
      const w2 = w[0] * w[0] + w[1] * w[1] + w[2] * w[2];
      // ∫_0^1 u du / sqrt(u² w² + h²), graded toward u = 0 where the near-singularity sits
      let su = 0, hi = 1;
      for (let l = 0; l < levels; l++) {
        const lo = l === levels - 1 ? 0 : hi * 0.3;
        for (let g = 0; g < G.n; g++) { const u = lo + (hi - lo) * G.t[g]; su += (hi - lo) * G.w[g] * u / Math.sqrt(u * u * w2 + h * h); }
        hi = lo;
      }
      s += wv * su;
    }
    total += a2 * s;
  }
  return total;
}

/** Degree-10 Dunavant rule on the 4^levels congruent pieces of T: for far points only. */
function subdividedRule(v: number[], p: number[], levels: number): number {
  const R = dunavantRule(10);
  let s = 0;
  const rec = (a: number[], b: number[], c: number[], l: number): void => {
    if (l === 0) {
      const u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]], w = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
      const A = 0.5 * Math.hypot(u[1] * w[2] - u[2] * w[1], u[2] * w[0] - u[0] * w[2], u[0] * w[1] - u[1] * w[0]);
      for (let k = 0; k < R.n; k++) {
        const y = [0, 1, 2].map((q) => R.l1[k] * a[q] + R.l2[k] * b[q] + R.l3[k] * c[q]);
        s += (A * R.w[k]) / Math.hypot(p[0] - y[0], p[1] - y[1], p[2] - y[2]);
      }
      return;
    }
    const ab = a.map((x, q) => (x + b[q]) / 2), bc = b.map((x, q) => (x + c[q]) / 2), ca = c.map((x, q) => (x + a[q]) / 2);
    rec(a, ab, ca, l - 1); rec(ab, b, bc, l - 1); rec(ca, bc, c, l - 1); rec(ab, bc, ca, l - 1);
  };
  rec(v.slice(0, 3), v.slice(3, 6), v.slice(6, 9), levels);
  return s;
}

// Coordinates on a 1e-4 grid in [-1, 1]: subnormal-sized triangles are outside any mesh's range
// (scale invariance is checked separately below).
const coord = fc.integer({ min: -10000, max: 10000 }).map((k) => k / 10000);
const tri = fc.tuple(coord, coord, coord, coord, coord, coord, coord, coord, coord).filter((v) => {
  const ux = v[3] - v[0], uy = v[4] - v[1], uz = v[5] - v[2], wx = v[6] - v[0], wy = v[7] - v[1], wz = v[8] - v[2];
  const a = Math.hypot(uy * wz - uz * wy, uz * wx - ux * wz, ux * wy - uy * wx);
  const l = Math.max(Math.hypot(ux, uy, uz), Math.hypot(wx, wy, wz), Math.hypot(v[6] - v[3], v[7] - v[4], v[8] - v[5]));
  return a > 0.05 * l * l; // reasonably shaped: the reference, not the formula, needs it
});
const bary = fc.tuple(fc.double({ min: 0, max: 1, noNaN: true }), fc.double({ min: 0, max: 1, noNaN: true }));

function normal(v: number[]): number[] {
  const ux = v[3] - v[0], uy = v[4] - v[1], uz = v[5] - v[2], wx = v[6] - v[0], wy = v[7] - v[1], wz = v[8] - v[2];
  const n = [uy * wz - uz * wy, uz * wx - ux * wz, ux * wy - uy * wx]; const l = Math.hypot(...n);
  return n.map((x) => x / l);
}
function pointOn(v: number[], s: number, t: number): number[] {
  if (s + t > 1) { s = 1 - s; t = 1 - t; }
  return [0, 1, 2].map((q) => (1 - s - t) * v[q] + s * v[3 + q] + t * v[6 + q]);
}
const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe("closed-form triangle potential (Wilton et al. 1984) vs Duffy-transformed quadrature", () => {
  it("off the plane, anywhere within a few sizes", () => {
    fc.assert(fc.property(tri, fc.tuple(coord, coord, coord), (v, p) => {
      // 1e-10: the reference's floor for slivers (aspect up to ~20 pass the filter)
      expect(rel(trianglePotential(v, 0, p[0], p[1], p[2]), reference(v, p))).toBeLessThan(1e-10);
    }), { numRuns: 60, seed: 20261201 });
  });
  it("just above the panel (h = 1e-7) and on its plane inside, outside, on edges, on vertices", () => {
    fc.assert(fc.property(tri, bary, fc.constantFrom(1e-7, 0, -1e-9), fc.constantFrom("in", "edge", "vertex", "out"), (v, [s, t], h, where) => {
      let p: number[];
      if (where === "in") p = pointOn(v, s, t);
      else if (where === "edge") p = pointOn(v, s, 0);
      else if (where === "vertex") p = [v[3], v[4], v[5]];
      else p = pointOn(v, 1 + s, -t);
      const n = normal(v);
      p = p.map((x, q) => x + h * n[q]);
      const I = trianglePotential(v, 0, p[0], p[1], p[2]);
      expect(Number.isFinite(I)).toBe(true);
      // 3e-10 is the Duffy reference's own floor for slivers with x next to a corner (an
      // alternative closed-form evaluation, Wilton's six-atan β sum, agrees with I to 1e-15 there).
      expect(rel(I, reference(v, p))).toBeLessThan(3e-10);
    }), { numRuns: 80, seed: 20261202 });
  });
  it("far away keeps its digits, on both sides of the FAR_RATIO switch (vs subdivided degree-10 quadrature)", () => {
    const v = [0, 0, 0, 1, 0.1, 0, 0.3, 0.8, 0.05];
    for (const d of [5, 39, 41, 1e3, 1e6, 1e9]) {
      const p = [0.4 + 0.6 * d, 0.3 + 0.64 * d, 0.48 * d];
      const I = trianglePotential(v, 0, p[0], p[1], p[2]);
      expect(rel(I, subdividedRule(v, p, 3))).toBeLessThan(2e-14);
    }
    expect(FAR_RATIO).toBeGreaterThan(10);
  });
  it("at the centroid of an equilateral triangle of side a equals √3·a·ln(2+√3) (three right-triangle sectors, each a·asinh(√3)/√3 — derived)", () => {
    const a = 0.7;
    const v = [0, 0, 0, a, 0, 0, a / 2, (a * Math.sqrt(3)) / 2, 0];
    expect(rel(trianglePotential(v, 0, a / 2, (a * Math.sqrt(3)) / 6, 0), Math.sqrt(3) * a * Math.log(2 + Math.sqrt(3)))).toBeLessThan(1e-15);
  });
});

/**
 * Wilton et al. (1984) eq. (4) written out directly, with the six-atan β sum, as a second
 * closed-form evaluation (the implementation uses the one-atan2 solid angle instead).
 */
function wiltonDirect(v: number[], p: number[]): number {
  const n = normal(v);
  const h = (p[0] - v[0]) * n[0] + (p[1] - v[1]) * n[1] + (p[2] - v[2]) * n[2];
  let s = 0;
  for (let k = 0; k < 3; k++) {
    const a = v.slice(3 * k, 3 * k + 3), b = v.slice(3 * ((k + 1) % 3), 3 * ((k + 1) % 3) + 3);
    const L = Math.hypot(b[0] - a[0], b[1] - a[1], b[2] - a[2]);
    const l = [(b[0] - a[0]) / L, (b[1] - a[1]) / L, (b[2] - a[2]) / L];
    const u = [l[1] * n[2] - l[2] * n[1], l[2] * n[0] - l[0] * n[2], l[0] * n[1] - l[1] * n[0]];
    const w = [a[0] - p[0], a[1] - p[1], a[2] - p[2]];
    const t0 = w[0] * u[0] + w[1] * u[1] + w[2] * u[2];
    if (t0 === 0) continue;
    const sm = w[0] * l[0] + w[1] * l[1] + w[2] * l[2], sp = sm + L;
    const R02 = t0 * t0 + h * h, Rm = Math.sqrt(sm * sm + R02), Rp = Math.sqrt(sp * sp + R02);
    const f = sp + sm >= 0 ? Math.log((Rp + sp) / (Rm + sm)) : Math.log((Rm - sm) / (Rp - sp));
    const beta = Math.atan((t0 * sp) / (R02 + Math.abs(h) * Rp)) - Math.atan((t0 * sm) / (R02 + Math.abs(h) * Rm));
    s += t0 * f - Math.abs(h) * beta;
  }
  return s;
}

describe("two closed-form evaluations agree", () => {
  it("one-atan2 solid angle form = Wilton's six-atan form to 1e-12 at random points within a few sizes", () => {
    fc.assert(fc.property(tri, fc.tuple(coord, coord, coord), (v, p) => {
      const I = trianglePotential(v, 0, p[0], p[1], p[2]);
      expect(Math.abs(I - wiltonDirect(v, p)) / I).toBeLessThan(1e-12);
    }), { numRuns: 3000, seed: 20261204 });
  });
});

describe("scaling", () => {
  it("I(λT, λx) = λ I(T, x) from nanometre to kilometre triangles", () => {
    const v = [0, 0, 0, 1, 0.1, 0, 0.3, 0.8, 0.05], p = [0.2, 0.3, 0.1];
    const I1 = trianglePotential(v, 0, p[0], p[1], p[2]);
    for (const l of [1e-9, 1e-6, 1e-3, 1e3]) {
      const w = v.map((x) => x * l);
      expect(rel(trianglePotential(w, 0, p[0] * l, p[1] * l, p[2] * l), l * I1)).toBeLessThan(1e-14);
    }
  });
});

describe("gradient of the triangle potential", () => {
  const g = new Float64Array(3);
  it("matches central differences of I off the panel", () => {
    fc.assert(fc.property(tri, fc.tuple(coord, coord, coord), (v, p) => {
      const n = normal(v);
      const h = (p[0] - v[0]) * n[0] + (p[1] - v[1]) * n[1] + (p[2] - v[2]) * n[2];
      fc.pre(Math.abs(h) > 0.05);
      trianglePotentialGradient(g, 0, v, 0, p[0], p[1], p[2]);
      const e = 1e-5;
      for (let q = 0; q < 3; q++) {
        const a = [...p], b = [...p]; a[q] += e; b[q] -= e;
        const fd = (trianglePotential(v, 0, a[0], a[1], a[2]) - trianglePotential(v, 0, b[0], b[1], b[2])) / (2 * e);
        expect(Math.abs(g[q] - fd)).toBeLessThan(1e-6 * (1 + Math.hypot(g[0], g[1], g[2])));
      }
    }), { numRuns: 60, seed: 20261203 });
  });
  it("normal derivative is −Ω (signed solid angle, Van Oosterom & Strackee 1983) on both sides, jumping by 4π at the panel", () => {
    const v = [0, 0, 0, 1, 0.1, 0, 0.3, 0.8, 0.05];
    const n = normal(v);
    const c = pointOn(v, 0.3, 0.3);
    for (const h of [0.5, 1e-3, 1e-9]) {
      const up = c.map((x, q) => x + h * n[q]), dn = c.map((x, q) => x - h * n[q]);
      trianglePotentialGradient(g, 0, v, 0, up[0], up[1], up[2]);
      const gu = g[0] * n[0] + g[1] * n[1] + g[2] * n[2];
      trianglePotentialGradient(g, 0, v, 0, dn[0], dn[1], dn[2]);
      const gd = g[0] * n[0] + g[1] * n[1] + g[2] * n[2];
      const wu = triangleSolidAngle(v, 0, up[0], up[1], up[2]), wd = triangleSolidAngle(v, 0, dn[0], dn[1], dn[2]);
      expect(wu).toBeGreaterThan(0);
      expect(Math.abs(wu + wd)).toBeLessThan(1e-12);
      expect(Math.abs(gu + wu)).toBeLessThan(1e-11);
      expect(Math.abs(gd + wd)).toBeLessThan(1e-11);
      if (h === 1e-9) expect(Math.abs(gd - gu - 4 * Math.PI)).toBeLessThan(1e-7);
    }
    // principal value on the panel: the normal part is the mean of the two sides, 0
    trianglePotentialGradient(g, 0, v, 0, c[0], c[1], c[2]);
    expect(Math.abs(g[0] * n[0] + g[1] * n[1] + g[2] * n[2])).toBeLessThan(1e-12);
  });
  it("tends to the monopole field far away", () => {
    const v = [0, 0, 0, 1, 0.1, 0, 0.3, 0.8, 0.05];
    const A = 0.5 * Math.hypot(0.1 * 0.05 - 0, 0 - 0.05, 0.8 - 0.03);
    const c = [(0 + 1 + 0.3) / 3, (0 + 0.1 + 0.8) / 3, 0.05 / 3];
    const p = [c[0] + 300, c[1] - 200, c[2] + 100];
    trianglePotentialGradient(g, 0, v, 0, p[0], p[1], p[2]);
    const r = Math.hypot(300, 200, 100);
    expect(Math.abs(g[0] + (A * 300) / r ** 3) / (A / r ** 2)).toBeLessThan(1e-4);
    expect(Math.abs(g[1] - (A * 200) / r ** 3) / (A / r ** 2)).toBeLessThan(1e-4);
  });
});

describe("source frame (the inner integral laid out once per panel)", () => {
  let seed = 2024;
  const rnd = () => { seed = (seed * 16807) % 2147483647; return seed / 2147483647; };
  const F = new Float64Array(FRAME_SIZE);
  it("framePotential equals trianglePotential to rounding, off and on the plane, near and beyond FAR_RATIO", () => {
    let worst = 0;
    for (let t = 0; t < 200; t++) {
      const v = Array.from({ length: 9 }, () => rnd() - 0.5);
      sourceFrame(F, v, 0);
      const scale = [0.3, 3, 80][t % 3];
      const p = [scale * (rnd() - 0.5), scale * (rnd() - 0.5), t % 4 === 0 ? 0 : scale * (rnd() - 0.5)];
      if (t % 4 === 0) { // a point on the panel's plane: the triangle's own affine span
        const a = rnd() * 2 - 0.5, b = rnd() * 2 - 0.5;
        for (let q = 0; q < 3; q++) p[q] = v[q] + a * (v[3 + q] - v[q]) + b * (v[6 + q] - v[q]);
      }
      const ref = trianglePotential(v, 0, p[0], p[1], p[2]);
      worst = Math.max(worst, Math.abs(framePotential(F, p[0], p[1], p[2]) - ref) / ref);
    }
    expect(worst).toBeLessThan(1e-13);
  });
  it("frameDistance is the distance to the closest point of the triangle (Ericson 2005 §5.1.5 cases; dense sampling bound)", () => {
    const v = [0, 0, 0, 2, 0, 0, 0.5, 1, 0];
    sourceFrame(F, v, 0);
    expect(frameDistance(F, 0.6, 0.3, 0.7)).toBeCloseTo(0.7, 14);          // above the face
    expect(frameDistance(F, -0.3, -0.4, 0)).toBeCloseTo(0.5, 14);          // vertex region of a
    expect(frameDistance(F, 1, -0.25, 1)).toBeCloseTo(Math.hypot(0.25, 1), 14); // edge region of ab
    expect(frameDistance(F, 0.5, 1, 0)).toBe(0);                           // on vertex c
    // Random points: never more than the distance to any sampled point of T, and within the
    // sampling resolution of the nearest sample.
    const N = 120;
    for (let t = 0; t < 60; t++) {
      const w = Array.from({ length: 9 }, () => rnd() - 0.5);
      sourceFrame(F, w, 0);
      const p = [2 * rnd() - 1, 2 * rnd() - 1, 2 * rnd() - 1];
      const d = frameDistance(F, p[0], p[1], p[2]);
      let best = Infinity;
      for (let a = 0; a <= N; a++) for (let b = 0; a + b <= N; b++) {
        const l2 = a / N, l3 = b / N, l1 = 1 - l2 - l3;
        best = Math.min(best, Math.hypot(l1 * w[0] + l2 * w[3] + l3 * w[6] - p[0], l1 * w[1] + l2 * w[4] + l3 * w[7] - p[1], l1 * w[2] + l2 * w[5] + l3 * w[8] - p[2]));
      }
      const edge = Math.max(Math.hypot(w[3] - w[0], w[4] - w[1], w[5] - w[2]), Math.hypot(w[6] - w[0], w[7] - w[1], w[8] - w[2]));
      expect(d).toBeLessThanOrEqual(best + 1e-14);
      expect(best - d).toBeLessThan(edge / N);
    }
  });
});
