/**
 * The two colour maps of the viewer, as 256-entry sRGB lookup tables (bytes, 3 per entry).
 *
 * Diverging (signed σ): Moreland's cool-warm map, generated here by his own algorithm —
 * K. Moreland, "Diverging Color Maps for Scientific Visualization", Advances in Visual
 * Computing (ISVC 2009), LNCS 5876, pp. 92–103: interpolation in the Msh space (polar
 * CIELAB, section 5) between the end colours (59, 76, 192) and (180, 4, 38), through an
 * unsaturated white of M = 88 (section 6, with the hue adjustment of its pseudocode).
 *
 * Sequential (|E|): viridis by S. van der Walt and N. Smith (2015), released CC0 with
 * matplotlib; 33 of its 256 entries (every 8th and the last, as tabulated in matplotlib's
 * `_cm_listed.py`), interpolated linearly in sRGB between them.
 */

export type Rgb = [number, number, number];

// ---- CIELAB (D65) and Msh, for Moreland's interpolation ----

// D65 reference white, as used in Moreland's paper (X, Y, Z scaled to Y = 100).
const XN = 95.047, YN = 100.0, ZN = 108.883;

function srgbToLinear(c: number): number {
  return c <= 0.04045 ? c / 12.92 : Math.pow((c + 0.055) / 1.055, 2.4);
}
function linearToSrgb(c: number): number {
  return c <= 0.0031308 ? 12.92 * c : 1.055 * Math.pow(c, 1 / 2.4) - 0.055;
}
function labF(t: number): number {
  return t > 0.008856 ? Math.cbrt(t) : 7.787 * t + 16 / 116;
}
function labFInv(t: number): number {
  return t > 0.20689 ? t * t * t : (t - 16 / 116) / 7.787;
}

/** sRGB bytes → Msh (M, s, h). */
export function rgbToMsh(rgb: Rgb): Rgb {
  const r = srgbToLinear(rgb[0] / 255), g = srgbToLinear(rgb[1] / 255), b = srgbToLinear(rgb[2] / 255);
  // IEC 61966-2-1 sRGB primaries → XYZ.
  const x = (0.4124 * r + 0.3576 * g + 0.1805 * b) * 100;
  const y = (0.2126 * r + 0.7152 * g + 0.0722 * b) * 100;
  const z = (0.0193 * r + 0.1192 * g + 0.9505 * b) * 100;
  const fx = labF(x / XN), fy = labF(y / YN), fz = labF(z / ZN);
  const L = 116 * fy - 16, A = 500 * (fx - fy), B = 200 * (fy - fz);
  const M = Math.sqrt(L * L + A * A + B * B);
  return [M, M > 0 ? Math.acos(L / M) : 0, Math.atan2(B, A)];
}

/** Msh → sRGB components in [0, 1] (clamped). */
export function mshToRgb(msh: Rgb): Rgb {
  const [M, s, h] = msh;
  const L = M * Math.cos(s), A = M * Math.sin(s) * Math.cos(h), B = M * Math.sin(s) * Math.sin(h);
  const fy = (L + 16) / 116, fx = fy + A / 500, fz = fy - B / 200;
  const x = XN * labFInv(fx) / 100, y = YN * labFInv(fy) / 100, z = ZN * labFInv(fz) / 100;
  const r = 3.2406 * x - 1.5372 * y - 0.4986 * z;
  const g = -0.9689 * x + 1.8758 * y + 0.0415 * z;
  const b = 0.0557 * x - 0.204 * y + 1.057 * z;
  const c = (v: number): number => Math.min(1, Math.max(0, linearToSrgb(v)));
  return [c(r), c(g), c(b)];
}

/** Moreland's hue spin for an unsaturated end (paper, section 6, AdjustHue). */
function adjustHue(mSat: number, sSat: number, hSat: number, mUnsat: number): number {
  if (mSat >= mUnsat) return hSat;
  const spin = (sSat * Math.sqrt(mUnsat * mUnsat - mSat * mSat)) / (mSat * Math.sin(sSat));
  return hSat > -Math.PI / 3 ? hSat + spin : hSat - spin;
}

/** Moreland's InterpolateColor: the diverging map between two sRGB colours at t ∈ [0, 1]. */
export function divergingColor(rgb1: Rgb, rgb2: Rgb, t: number): Rgb {
  let [m1, s1, h1] = rgbToMsh(rgb1);
  let [m2, s2, h2] = rgbToMsh(rgb2);
  if (s1 > 0.05 && s2 > 0.05 && Math.abs(h1 - h2) > Math.PI / 3) {
    const mMid = Math.max(m1, m2, 88);
    if (t < 0.5) { m2 = mMid; s2 = 0; h2 = 0; t = 2 * t; }
    else { m1 = mMid; s1 = 0; h1 = 0; t = 2 * t - 1; }
  }
  if (s1 < 0.05 && s2 > 0.05) h1 = adjustHue(m2, s2, h2, m1);
  else if (s2 < 0.05 && s1 > 0.05) h2 = adjustHue(m1, s1, h1, m2);
  return mshToRgb([(1 - t) * m1 + t * m2, (1 - t) * s1 + t * s2, (1 - t) * h1 + t * h2]);
}

export const COOL: Rgb = [59, 76, 192];
export const WARM: Rgb = [180, 4, 38];

// viridis entries 0, 8, 16, …, 248 and 255 of matplotlib's 256-entry table (CC0).
const VIRIDIS_KNOTS: ReadonlyArray<Rgb> = [
  [0.267004, 0.004874, 0.329415], [0.277018, 0.050344, 0.375715], [0.282327, 0.094955, 0.417331],
  [0.282884, 0.135920, 0.453427], [0.278826, 0.175490, 0.483397], [0.270595, 0.214069, 0.507052],
  [0.258965, 0.251537, 0.524736], [0.244972, 0.287675, 0.537260], [0.229739, 0.322361, 0.545706],
  [0.214298, 0.355619, 0.551184], [0.199430, 0.387607, 0.554642], [0.185556, 0.418570, 0.556753],
  [0.172719, 0.448791, 0.557885], [0.160665, 0.478540, 0.558115], [0.149039, 0.508051, 0.557250],
  [0.137770, 0.537492, 0.554906], [0.127568, 0.566949, 0.550556], [0.120565, 0.596422, 0.543611],
  [0.120638, 0.625828, 0.533488], [0.132268, 0.655014, 0.519661], [0.157851, 0.683765, 0.501686],
  [0.196571, 0.711827, 0.479221], [0.246070, 0.738910, 0.452024], [0.304148, 0.764704, 0.419943],
  [0.369214, 0.788888, 0.382914], [0.440137, 0.811138, 0.340967], [0.515992, 0.831158, 0.294279],
  [0.595839, 0.848717, 0.243329], [0.678489, 0.863742, 0.189503], [0.762373, 0.876424, 0.137064],
  [0.845561, 0.887322, 0.099702], [0.926106, 0.897330, 0.104071], [0.993248, 0.906157, 0.143936],
];
const VIRIDIS_INDEX: ReadonlyArray<number> = VIRIDIS_KNOTS.map((_, i) => Math.min(255, 8 * i));

/** viridis at t ∈ [0, 1], sRGB components in [0, 1]. */
export function viridisColor(t: number): Rgb {
  const x = Math.min(1, Math.max(0, t)) * 255;
  let i = 0;
  while (i < VIRIDIS_INDEX.length - 2 && VIRIDIS_INDEX[i + 1] < x) i++;
  const a = VIRIDIS_INDEX[i], b = VIRIDIS_INDEX[i + 1];
  const f = (x - a) / (b - a);
  const p = VIRIDIS_KNOTS[i], q = VIRIDIS_KNOTS[i + 1];
  return [p[0] + f * (q[0] - p[0]), p[1] + f * (q[1] - p[1]), p[2] + f * (q[2] - p[2])];
}

export const LUT_SIZE = 256;

function table(color: (t: number) => Rgb): Uint8Array {
  const lut = new Uint8Array(3 * LUT_SIZE);
  for (let i = 0; i < LUT_SIZE; i++) {
    const c = color(i / (LUT_SIZE - 1));
    lut[3 * i] = Math.round(255 * c[0]); lut[3 * i + 1] = Math.round(255 * c[1]); lut[3 * i + 2] = Math.round(255 * c[2]);
  }
  return lut;
}

/** Cool-warm diverging table (entry 0 = most negative, 127.5 = zero, 255 = most positive). */
export function coolWarmTable(): Uint8Array {
  return table((t) => divergingColor(COOL, WARM, t));
}

/** viridis sequential table. */
export function viridisTable(): Uint8Array {
  return table(viridisColor);
}
