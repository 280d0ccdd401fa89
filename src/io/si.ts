/**
 * Numbers for people: SI values with engineering prefixes, and lengths in the user's unit.
 * Every human-readable summary formats through here so that the same value reads the
 * same everywhere. Prefixes are those of the SI Brochure (BIPM, 9th ed., 2019, with the
 * 2022 additions ronna/quetta and ronto/quecto).
 */
import { type LengthUnit, metresPer } from "./units.js";

const PREFIXES: ReadonlyArray<[number, string]> = [
  [-30, "q"], [-27, "r"], [-24, "y"], [-21, "z"], [-18, "a"], [-15, "f"], [-12, "p"], [-9, "n"], [-6, "µ"], [-3, "m"],
  [0, ""], [3, "k"], [6, "M"], [9, "G"], [12, "T"], [15, "P"], [18, "E"], [21, "Z"], [24, "Y"], [27, "R"], [30, "Q"],
];

function nonFinite(value: number, unit: string): string {
  const s = Number.isNaN(value) ? "NaN" : value > 0 ? "inf" : "-inf";
  return unit ? `${s} ${unit}` : s;
}

/**
 * `value` in `unit` with an engineering prefix (power of 1000) and `digits` significant
 * digits: formatSI(12.345e-12, "F") → "12.35 pF" (rounding half away from zero as
 * toPrecision does), formatSI(999.95e-12, "F") → "1.000 nF" (rounding carries into the
 * next prefix). Zero prints as "0.000 F"; NaN and infinities as "NaN F", "inf F".
 * Outside the prefix range the mantissa takes an exponent instead.
 */
/**
 * The multiple of 3 to write a magnitude with, so that its mantissa rounded to `digits`
 * significant digits lies in [1, 1000).
 */
export function engineeringExponent(mag: number, digits: number): number {
  let e3 = 3 * Math.floor(Math.log10(mag) / 3);
  // log10 can miss an exact power of ten by one ulp, and rounding can carry the mantissa to 1000.
  for (let guard = 0; guard < 3; guard++) {
    const m = Number((mag / 10 ** e3).toPrecision(digits));
    if (m >= 1000) e3 += 3;
    else if (m < 1) e3 -= 3;
    else break;
  }
  return e3;
}

export function formatSI(value: number, unit: string, digits = 4): string {
  if (!Number.isFinite(value)) return nonFinite(value, unit);
  const sep = unit ? " " : "";
  if (value === 0) return `${(0).toPrecision(digits)}${sep}${unit}`;
  const mag = Math.abs(value);
  const e3 = engineeringExponent(mag, digits);
  const lo = PREFIXES[0][0], hi = PREFIXES[PREFIXES.length - 1][0];
  const clamped = Math.min(hi, Math.max(lo, e3));
  const prefix = PREFIXES[(clamped - lo) / 3][1];
  const mant = value / 10 ** clamped;
  let text = clamped === e3 ? mant.toPrecision(digits) : mant.toExponential(digits - 1);
  // Fewer digits than the mantissa's integer part (157 to 1 digit): "200", not "2e+2".
  if (clamped === e3 && text.includes("e")) text = String(Number(text));
  return `${text}${sep}${prefix}${unit}`;
}

/** Significant-digit number without prefix; plain notation from 1e-4 to 1e6, exponent outside. */
export function formatNumber(value: number, digits = 4): string {
  if (!Number.isFinite(value)) return nonFinite(value, "");
  if (value === 0) return (0).toPrecision(digits);
  const mag = Math.abs(value);
  if (mag < 1e-4 || mag >= 1e6) return value.toExponential(digits - 1);
  const s = value.toPrecision(digits);
  return s.includes("e") ? Number(s).toString() : s;
}

/** Name of a length unit as printed ("um" prints as "µm"). */
export function unitLabel(unit: LengthUnit): string {
  return unit === "um" ? "µm" : unit;
}

/** A length given in metres, printed in the user's unit: formatLength(0.00125, "mm") → "1.250 mm". */
export function formatLength(metres: number, unit: LengthUnit, digits = 4): string {
  return `${formatNumber(metres / metresPer(unit), digits)} ${unitLabel(unit)}`;
}

/** A length in the user's unit without the unit name (for tables whose header names it). */
export function lengthValue(metres: number, unit: LengthUnit, digits = 4): string {
  return formatNumber(metres / metresPer(unit), digits);
}

/** An area given in square metres, printed in the user's unit squared: "6.000 mm²". */
export function formatArea(squareMetres: number, unit: LengthUnit, digits = 4): string {
  const s = metresPer(unit);
  return `${formatNumber(squareMetres / (s * s), digits)} ${unitLabel(unit)}²`;
}

/** A point given in metres, in the user's unit: "(1.000, 2.000, 0.5000) mm". */
export function formatPoint(metres: ArrayLike<number>, unit: LengthUnit, digits = 4): string {
  const s = metresPer(unit);
  return `(${formatNumber(metres[0] / s, digits)}, ${formatNumber(metres[1] / s, digits)}, ${formatNumber(metres[2] / s, digits)}) ${unitLabel(unit)}`;
}

/**
 * A field strength given in V/m, on V/m with an engineering prefix like every other SI value
 * (formatFieldStrength(3.1e6) → "3.10 MV/m", 1 MV/m = 1 kV/mm, the unit breakdown fields are
 * often quoted in). Three digits by default: a computed surface field is an estimate that
 * depends on the mesh near edges, and more digits would claim what it does not know.
 */
export function formatFieldStrength(voltsPerMetre: number, digits = 3): string {
  return formatSI(voltsPerMetre, "V/m", digits);
}

/**
 * Significant digits a value supports given its absolute error estimate: the fewest whose
 * rounding (half a unit in the last digit) stays within the estimate, so that the printed
 * value is as trustworthy as the estimate says (digitsFor(352.4, 3.5) → 3, "352";
 * digitsFor(127.52, 0.128) → 4, "127.5", where "128" would be off by more than its own
 * estimate). Clamped to [1, max]; a zero or missing error gives `fallback`.
 */
export function digitsFor(value: number, absError: number | undefined, fallback = 3, max = 6): number {
  if (absError === undefined || !Number.isFinite(absError) || absError <= 0 || !Number.isFinite(value) || value === 0) return fallback;
  // Half a unit in digit d of |value| = 10^e is 0.5·10^(e − d + 1) ≤ absError.
  const e = Math.floor(Math.log10(Math.abs(value)));
  const d = Math.ceil(e + 1 - Math.log10(2 * absError) - 1e-12);
  return Math.min(max, Math.max(1, d));
}

/**
 * Error estimates of the values derived from a Maxwell matrix, given its entries' estimates
 * `maxwell` (k×k, absolute) and the working potentials: a two-terminal diagonal (a row sum) and
 * a conductor's charge (Σ_j C_ij V_j) take the sums of their row's estimates, weighted by |V_j|
 * for the charge, the stored energy ½ Σ |V_i||V_j| e_ij; the off-diagonal two-terminal values those of their Maxwell entries. Every
 * report prints these values to `digitsFor` their estimates.
 */
export function derivedErrors(maxwell: readonly (readonly number[])[], potentials: readonly number[]): { maxwell: number[][]; mutual: number[][]; charge: number[]; energy: number } {
  // W = ½ VᵀCV: its estimate ½ Σ |V_i||V_j| e_ij.
  let energy = 0;
  maxwell.forEach((row, i) => row.forEach((y, j) => { energy += 0.5 * y * Math.abs((potentials[i] ?? 0) * (potentials[j] ?? 0)); }));
  return {
    maxwell: maxwell.map((row) => [...row]),
    mutual: maxwell.map((row, i) => row.map((x, j) => (i === j ? row.reduce((s, y) => s + y, 0) : x))),
    charge: maxwell.map((row) => row.reduce((s, y, j) => s + y * Math.abs(potentials[j] ?? 0), 0)),
    energy,
  };
}
