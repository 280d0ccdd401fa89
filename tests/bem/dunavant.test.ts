import { describe, it, expect } from "vitest";
import { dunavantRule, MAX_DUNAVANT_DEGREE } from "../../src/bem/dunavant.js";
import { gaussLegendre } from "../../src/bem/gauss-legendre.js";

// Exact moments of the reference triangle (0,0),(1,0),(0,1): ∫ x^p y^q dA = p! q! / (p+q+2)!
// (the standard Dirichlet/beta integral), so the mean is 2 p! q! / (p+q+2)!.
const fact = (k: number): number => (k <= 1 ? 1 : k * fact(k - 1));

describe("Dunavant rules (Dunavant 1985, Table I)", () => {
  for (let d = 1; d <= MAX_DUNAVANT_DEGREE; d++) {
    it(`degree ${d} integrates every monomial x^p y^q, p+q ≤ ${d}, exactly`, () => {
      const R = dunavantRule(d);
      expect(R.degree).toBe(d);
      for (let p = 0; p <= d; p++) for (let q = 0; p + q <= d; q++) {
        let s = 0;
        for (let k = 0; k < R.n; k++) s += R.w[k] * R.l2[k] ** p * R.l3[k] ** q;
        expect(Math.abs(s - (2 * fact(p) * fact(q)) / fact(p + q + 2))).toBeLessThan(2e-14);
      }
    });
  }
  it("does not integrate degree+1 exactly (the table is not over-credited)", () => {
    const R = dunavantRule(5);
    let worst = 0;
    for (let p = 0; p <= 6; p++) { const q = 6 - p; let s = 0; for (let k = 0; k < R.n; k++) s += R.w[k] * R.l2[k] ** p * R.l3[k] ** q; worst = Math.max(worst, Math.abs(s - (2 * fact(p) * fact(q)) / fact(8))); }
    expect(worst).toBeGreaterThan(1e-8);
  });
});

describe("Gauss–Legendre on [0,1]", () => {
  it("n points integrate t^k exactly for k < 2n", () => {
    for (const n of [2, 8, 12]) {
      const R = gaussLegendre(n);
      for (let k = 0; k < 2 * n; k++) {
        let s = 0; for (let m = 0; m < n; m++) s += R.w[m] * R.t[m] ** k;
        expect(Math.abs(s - 1 / (k + 1))).toBeLessThan(1e-14);
      }
    }
  });
});
