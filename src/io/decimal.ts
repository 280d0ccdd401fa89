/**
 * Decimal numbers read straight from file bytes, without making a string per number.
 *
 * Fast path: Clinger's exact case (W. D. Clinger, "How to read floating point numbers
 * accurately", PLDI 1990): when the decimal significand has at most 15 digits and the
 * power of ten is at most 22 in magnitude, both are exact doubles and one IEEE multiply
 * or divide gives the correctly rounded result. Anything else (longer significands,
 * large exponents, nan/inf spellings) goes to the engine's own `Number()`, which is
 * correctly rounded too, so results never depend on which path was taken.
 */

const POW10 = new Float64Array(23);
for (let i = 0, p = 1; i < 23; i++, p *= 10) POW10[i] = p;

/** Byte index just past the last number read by `readDecimal`. */
export let decimalEnd = 0;

const isSpace = (b: number): boolean => b === 32 || (b >= 9 && b <= 13);

/**
 * Read the whitespace-delimited token starting at `p` as a number; NaN when the token is
 * not a number. Sets `decimalEnd` to the end of the token.
 */
export function readDecimal(bytes: Uint8Array, p: number, end: number): number {
  const start = p;
  let neg = false;
  let b = bytes[p];
  if (b === 45 /* - */) { neg = true; p++; } else if (b === 43 /* + */) p++;
  let mant = 0, digits = 0, scale = 0, any = false;
  while (p < end) {
    b = bytes[p];
    if (b < 48 || b > 57) break;
    any = true;
    if (digits > 0 || b !== 48) {
      if (digits < 15) { mant = mant * 10 + (b - 48); digits++; } else { digits = 99; }
    }
    p++;
  }
  if (p < end && bytes[p] === 46 /* . */) {
    p++;
    while (p < end) {
      b = bytes[p];
      if (b < 48 || b > 57) break;
      any = true;
      if (digits > 0 || b !== 48) {
        if (digits < 15) { mant = mant * 10 + (b - 48); digits++; scale--; } else { digits = 99; }
      } else scale--;
      p++;
    }
  }
  let ok = any && digits <= 15;
  if (ok && p < end && (bytes[p] | 0x20) === 101 /* e */) {
    p++;
    let eneg = false;
    if (p < end && (bytes[p] === 45 || bytes[p] === 43)) { eneg = bytes[p] === 45; p++; }
    let e = 0, edig = 0;
    while (p < end) {
      b = bytes[p];
      if (b < 48 || b > 57) break;
      if (e < 100000) e = e * 10 + (b - 48);
      edig++;
      p++;
    }
    if (edig === 0) ok = false;
    scale += eneg ? -e : e;
  }
  if (ok && (p >= end || isSpace(bytes[p])) && scale >= -22 && scale <= 22) {
    decimalEnd = p;
    const v = scale < 0 ? mant / POW10[-scale] : mant * POW10[scale];
    return neg ? -v : v;
  }
  // Slow path: the engine's correctly rounded conversion of the whole token.
  while (p < end && !isSpace(bytes[p])) p++;
  decimalEnd = p;
  return tokenNumber(bytes, start, p);
}

function tokenNumber(bytes: Uint8Array, start: number, end: number): number {
  if (end - start > 400) return NaN;
  let s = "";
  for (let i = start; i < end; i++) s += String.fromCharCode(bytes[i]);
  const t = s.toLowerCase();
  if (/^[+-]?inf(inity)?$/.test(t)) return t[0] === "-" ? -Infinity : Infinity;
  // Number() accepts forms a mesh file should not hold (hex, empty); only plain decimals pass.
  if (!/^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/.test(t)) return NaN;
  return Number(t);
}

/** The token at `p` (up to whitespace, at most 40 characters) as text, for messages. */
export function tokenText(bytes: Uint8Array, p: number, end: number): string {
  let s = "";
  for (let q = p; q < end && !isSpace(bytes[q]); q++) {
    if (s.length >= 40) return s + "...";
    const b = bytes[q];
    s += b >= 32 && b < 127 ? String.fromCharCode(b) : "?";
  }
  return s;
}
