/**
 * Per-panel colours from σ or |E|: the value → [0, 1] mapping of the colour bar (linear or
 * logarithmic, signed for σ), the colour-table entry of a value, the vertex colour words of
 * a conductor, and the ticks of the bar. Plain functions over typed arrays, no DOM and no
 * WebGL (tests/viewer/colour-scale.test.ts); legend.ts draws the bar.
 */
import { coolWarmTable, viridisTable, LUT_SIZE } from "./colormap.js";
import { formatSI } from "../../src/io/si.js";
import type { Excitation } from "./data.js";
import type { Quantity, Scale } from "./state.js";

/** Decades shown below the top of a log scale at most. */
export const LOG_DECADES = 6;

/** The value → [0, 1] mapping of the colour bar. */
export interface ColourScale {
  quantity: Quantity;
  scale: Scale;
  /** Bottom and top of the bar in SI units (for σ log: ±top with |σ| < floor at the centre). */
  lo: number;
  hi: number;
  floor: number;
  map(v: number): number;
}

/**
 * The colour scale of an excitation: |E| from 0 (linear) or from its smallest positive value
 * but at most LOG_DECADES below the top (log) to its peak; σ symmetric about zero, ± the
 * largest |σ|, in log with the smallest nonzero |σ| (again at most LOG_DECADES down) as the
 * floor below which a panel shows as zero.
 */
export function colourScale(e: Excitation, quantity: Quantity, scale: Scale): ColourScale {
  if (quantity === "field") {
    const hi = e.fieldRange[1];
    if (scale === "linear") {
      const lo = 0;
      return { quantity, scale, lo, hi, floor: 0, map: (v) => (hi > lo ? (v - lo) / (hi - lo) : 0) };
    }
    const lo = Math.max(e.fieldMinPositive, hi * 10 ** -LOG_DECADES);
    const a = Math.log10(lo), b = Math.log10(hi);
    return { quantity, scale, lo, hi, floor: lo, map: (v) => (b > a ? (Math.log10(Math.max(v, lo)) - a) / (b - a) : 1) };
  }
  const top = Math.max(Math.abs(e.sigmaRange[0]), Math.abs(e.sigmaRange[1]));
  if (scale === "linear") return { quantity, scale, lo: -top, hi: top, floor: 0, map: (v) => (top > 0 ? 0.5 + 0.5 * v / top : 0.5) };
  let minAbs = Infinity;
  for (let i = 0; i < e.sigma.length; i++) { const a = Math.abs(e.sigma[i]); if (a > 0 && a < minAbs) minAbs = a; }
  const floor = Math.max(Number.isFinite(minAbs) ? minAbs : top, top * 10 ** -LOG_DECADES);
  const a = Math.log10(floor), b = Math.log10(top);
  return {
    quantity, scale, lo: -top, hi: top, floor,
    map: (v) => {
      const m = Math.abs(v);
      const f = b > a ? Math.min(1, Math.max(0, (Math.log10(Math.max(m, floor)) - a) / (b - a))) : 1;
      return 0.5 + 0.5 * Math.sign(v) * f;
    },
  };
}

/** The entry of a LUT_SIZE colour table for a mapped value (clamped to [0, 1]; not finite → entry 0). */
export function lutIndex(t: number): number {
  return Math.round(Math.min(1, Math.max(0, Number.isFinite(t) ? t : 0)) * (LUT_SIZE - 1));
}

/** A table of 3 sRGB bytes per entry as RGBA words in memory order (bytes r, g, b, 255), to fill vertex colours a word at a time. */
export function lutWords(t: Uint8Array): Uint32Array {
  const out = new Uint32Array(LUT_SIZE);
  new Uint8Array(out.buffer).set(Uint8Array.from({ length: 4 * LUT_SIZE }, (_, j) => (j % 4 === 3 ? 255 : t[3 * (j >> 2) + (j % 4)])));
  return out;
}

/** The two colour tables, as bytes (for the bar) and as words (for the vertices). */
export interface ColourTables {
  viridis: Uint8Array;
  coolWarm: Uint8Array;
  viridisWords: Uint32Array;
  coolWarmWords: Uint32Array;
}

export function colourTables(): ColourTables {
  const coolWarm = coolWarmTable(), viridis = viridisTable();
  return { viridis, coolWarm, viridisWords: lutWords(viridis), coolWarmWords: lutWords(coolWarm) };
}

/** Sequential viridis for |E|, diverging cool-warm for signed σ. */
export function tableOf(tables: ColourTables, quantity: Quantity): Uint8Array {
  return quantity === "field" ? tables.viridis : tables.coolWarm;
}

export function wordsOf(tables: ColourTables, quantity: Quantity): Uint32Array {
  return quantity === "field" ? tables.viridisWords : tables.coolWarmWords;
}

/**
 * Vertex colours of a conductor: panel `panels[i]` (an index into `values`) gets the
 * table word of its value in the three vertex slots 3i … 3i + 2 of `out`.
 */
export function fillPanelColours(out: Uint32Array, panels: Uint32Array, values: ArrayLike<number>, scale: ColourScale, words: Uint32Array): void {
  for (let i = 0; i < panels.length; i++) {
    const w = words[lutIndex(scale.map(values[panels[i]]))];
    out[3 * i] = w; out[3 * i + 1] = w; out[3 * i + 2] = w;
  }
}

/** A proxy triangle takes the colour of the panel it stands for (`source[i]`, an index into the conductor's panels). */
export function copyProxyColours(to: Uint32Array, from: Uint32Array, source: Uint32Array): void {
  for (let i = 0; i < source.length; i++) {
    const w = from[3 * source[i]];
    to[3 * i] = w; to[3 * i + 1] = w; to[3 * i + 2] = w;
  }
}

/** The bar's pixels, one column of LUT_SIZE RGBA pixels, top row the table's last entry. */
export function fillBarPixels(out: Uint8ClampedArray, lut: Uint8Array): void {
  for (let i = 0; i < LUT_SIZE; i++) {
    const src = 3 * (LUT_SIZE - 1 - i);
    out[4 * i] = lut[src]; out[4 * i + 1] = lut[src + 1]; out[4 * i + 2] = lut[src + 2]; out[4 * i + 3] = 255;
  }
}

export function barTitle(s: ColourScale): string {
  return s.quantity === "field" ? `|E| (${s.scale})` : `σ (${s.scale}, signed)`;
}

/** A label of the bar: where it sits (0 top, 1 bottom), its text, and its role (a data attribute the tests read). */
export type Tick = [at: number, text: string, role: string];

export function barTicks(s: ColourScale): Tick[] {
  const unitName = s.quantity === "field" ? "V/m" : "C/m²";
  const ticks: Tick[] = [];
  ticks.push([0, formatSI(s.hi, unitName), "max"]);
  if (s.quantity === "sigma" && s.scale === "log") {
    ticks.push([0.25, formatSI(s.floor, unitName), "floor"]);
    ticks.push([0.5, `|σ| < ${formatSI(s.floor, unitName)}`, "mid"]);
    ticks.push([0.75, formatSI(-s.floor, unitName), "-floor"]);
  } else if (s.quantity === "sigma") ticks.push([0.5, formatSI(0, unitName), "mid"]);
  else if (s.scale === "log") ticks.push([0.5, formatSI(Math.sqrt(s.lo * s.hi), unitName), "mid"]);
  else ticks.push([0.5, formatSI((s.lo + s.hi) / 2, unitName), "mid"]);
  ticks.push([1, formatSI(s.lo, unitName), "min"]);
  return ticks;
}
