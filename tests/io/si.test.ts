import { describe, it, expect } from "vitest";
import { formatSI, formatLength, formatArea, formatPoint, formatFieldStrength, formatNumber, digitsFor } from "../../src/io/si.js";

describe("formatSI", () => {
  it("uses engineering prefixes with significant digits", () => {
    expect(formatSI(12.345678e-12, "F")).toBe("12.35 pF");
    expect(formatSI(1e-12, "F")).toBe("1.000 pF");
    expect(formatSI(4.7e-9, "F", 2)).toBe("4.7 nF");
    expect(formatSI(157e-18, "N", 1)).toBe("200 aN"); // never "2e+2 aN"
    expect(formatSI(-352.4e-15, "F", 2)).toBe("-350 fF");
    expect(formatSI(3.3e6, "V/m")).toBe("3.300 MV/m");
    expect(formatSI(0.5, "C")).toBe("500.0 mC");
    expect(formatSI(1, "N")).toBe("1.000 N");
    expect(formatSI(2.5e-6, "J")).toBe("2.500 µJ");
  });

  it("carries rounding into the next prefix", () => {
    expect(formatSI(999.95e-12, "F")).toBe("1.000 nF");
    expect(formatSI(999.94e-12, "F")).toBe("999.9 pF");
    expect(formatSI(999999, "V")).toBe("1.000 MV");
  });

  it("handles zero, negatives and non-finite values", () => {
    expect(formatSI(0, "F")).toBe("0.000 F");
    expect(formatSI(-12.345678e-12, "F")).toBe("-12.35 pF");
    expect(formatSI(-999.95e-12, "F")).toBe("-1.000 nF");
    expect(formatSI(NaN, "F")).toBe("NaN F");
    expect(formatSI(Infinity, "F")).toBe("inf F");
    expect(formatSI(-Infinity, "V")).toBe("-inf V");
  });

  it("falls back on an exponent outside the prefix range", () => {
    expect(formatSI(1e-33, "F")).toBe("1.000e-3 qF");
    expect(formatSI(1e-30, "F")).toBe("1.000 qF");
  });

  it("prints exact powers of ten with the right prefix", () => {
    for (let e = -24; e <= 24; e += 3) expect(formatSI(10 ** e, "X")).toMatch(/^1\.000 [a-zµA-Z]?X$/);
  });
});

describe("lengths and fields in the user's unit", () => {
  it("converts metres to the unit", () => {
    expect(formatLength(0.00125, "mm")).toBe("1.250 mm");
    expect(formatLength(25.4e-3, "in")).toBe("1.000 in");
    expect(formatLength(2e-6, "um")).toBe("2.000 µm");
    expect(formatArea(6e-6, "mm")).toBe("6.000 mm²");
    expect(formatPoint([1e-3, -2e-3, 0], "mm")).toBe("(1.000, -2.000, 0.000) mm");
  });

  it("formats field strengths on V/m with a prefix, three digits", () => {
    expect(formatFieldStrength(3.1e6)).toBe("3.10 MV/m");
    expect(formatFieldStrength(12.53e3)).toBe("12.5 kV/m");
    expect(formatFieldStrength(999.9e3)).toBe("1.00 MV/m");
    expect(formatFieldStrength(12e3)).toBe("12.0 kV/m");
  });

  it("switches to exponents for very large or small plain numbers", () => {
    expect(formatNumber(1.5e-7)).toBe("1.500e-7");
    expect(formatNumber(12345)).toBe("12350");
    expect(formatNumber(2.5e7)).toBe("2.500e+7");
  });
});

describe("digits supported by an error estimate", () => {
  it("print up to the first uncertain digit", () => {
    expect(digitsFor(352.4, 3.5)).toBe(3);     // ±1 %: "352"
    expect(digitsFor(352.4, 0.25)).toBe(4);    // ±0.07 %: "352.4"
    expect(digitsFor(127.52, 0.128)).toBe(4);  // "128" would be 0.48 off, beyond ±0.128: "127.5"
    // Whatever the value and estimate, the printed value is within the estimate of the value.
    for (const [v, e] of [[127.52, 0.128], [1.11268, 2e-4], [9.996, 0.003], [0.0123456, 1e-6], [5.55e-13, 4e-16]]) {
      const d = digitsFor(v, e);
      expect(Math.abs(Number(v.toPrecision(d)) - v), `${v} ± ${e} to ${d} digits`).toBeLessThanOrEqual(e);
      // One digit fewer, rounding could move a value by more than the estimate (half a unit in its last digit).
      if (d > 1) expect(0.5 * 10 ** (Math.floor(Math.log10(v)) - (d - 1) + 1), `${d} digits is the fewest for ${v} ± ${e}`).toBeGreaterThan(e);
    }
    expect(digitsFor(1.431e-16, 6e-14)).toBe(1); // error larger than the value: one digit at most
    expect(digitsFor(1, 1e-12)).toBe(6);       // clamped
    expect(digitsFor(5, undefined)).toBe(3);   // no estimate: the fallback
    expect(digitsFor(5, 0, 4)).toBe(4);
  });
});
