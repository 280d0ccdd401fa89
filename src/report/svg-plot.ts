/**
 * Self-contained SVG line plots (SVG 1.1, W3C Recommendation, 2nd ed. 2011): axes with
 * "nice" ticks, axis labels carrying one engineering prefix per axis, a title, a legend,
 * solid or dashed series and horizontal reference lines. Used for the field along a probe
 * line and for a capacitance against panel count (the convergence plot).
 *
 * Tick steps are Heckbert's nice numbers (P. S. Heckbert, "Nice numbers for graph labels",
 * Graphics Gems, Academic Press 1990, pp. 61-63): 1, 2 or 5 times a power of ten. Series
 * colours are the Okabe-Ito palette, chosen to stay distinguishable with colour-vision
 * deficiencies (M. Okabe and K. Ito, "Color Universal Design", 2008).
 */

export interface PlotSeries {
  label: string;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  dashed?: boolean;
  /** Draw a marker at each point (default: when the series has at most 40 points). */
  markers?: boolean;
}

export interface PlotAxis {
  /** Quantity, e.g. "|E|" or "distance". */
  label: string;
  /** SI unit symbol ("V/m", "F"); with `prefix` the axis label gets one engineering prefix. */
  unit?: string;
  /** Scale the axis by a power of 1000 and name it in the unit (default true when `unit` is set). */
  prefix?: boolean;
  /** Logarithmic axis (positive values only). */
  log?: boolean;
}

export interface PlotOptions {
  title?: string;
  x: PlotAxis;
  y: PlotAxis;
  /** Pixels; default 720 × 440. */
  width?: number;
  height?: number;
  /**
   * Horizontal lines across the plot (dashed), listed in the legend. A line with
   * `inRange: false` does not stretch the axis; it is drawn only when it falls inside.
   */
  references?: Array<{ value: number; label: string; inRange?: boolean }>;
  /** Preferred corner of the legend inside the plot (default "top-right"); another corner, or below the plot, where it would cover data. */
  legend?: "top-right" | "bottom-right" | "top-left" | "bottom-left";
}

const PALETTE = ["#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000"];

const PREFIX: Record<number, string> = { [-18]: "a", [-15]: "f", [-12]: "p", [-9]: "n", [-6]: "µ", [-3]: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T" };

/** Text for SVG content and attribute values (XML 1.0, section 2.4: & and < always, quotes in attributes). */
export function xmlText(s: string): string {
  // Control characters other than tab, LF and CR are not allowed in XML 1.0 at all.
  return s.replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f]/g, "").replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;").replace(/'/g, "&apos;");
}

/** Heckbert's nice number: 1, 2, 5 or 10 times a power of ten near `x` (rounded, or the next above). */
function niceNumber(x: number, round: boolean): number {
  const e = Math.floor(Math.log10(x));
  const f = x / 10 ** e;
  const nf = round ? (f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10) : (f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10);
  return nf * 10 ** e;
}

/** Linear ticks covering [min, max]: the axis runs from `lo` to `hi` in steps of `step`. */
export function niceTicks(min: number, max: number, target = 6): { lo: number; hi: number; step: number; ticks: number[] } {
  if (!(Number.isFinite(min) && Number.isFinite(max))) { min = 0; max = 1; }
  if (min > max) [min, max] = [max, min];
  if (min === max) {
    const pad = min === 0 ? 1 : Math.abs(min) * 0.1;
    min -= pad; max += pad;
  }
  const range = niceNumber(max - min, false);
  const step = niceNumber(range / Math.max(1, target - 1), true);
  const lo = Math.floor(min / step + 1e-9) * step;
  const hi = Math.ceil(max / step - 1e-9) * step;
  const ticks: number[] = [];
  const n = Math.round((hi - lo) / step);
  // Ticks from integer multiples of the step, so that 0.1 + 0.2 does not print as 0.30000000000000004.
  for (let i = 0; i <= n; i++) ticks.push(Number(((Math.round(lo / step) + i) * step).toPrecision(12)));
  return { lo: Math.min(lo, ticks[0]), hi: Math.max(hi, ticks[ticks.length - 1]), step, ticks };
}

/** Logarithmic ticks covering [min, max] (both > 0): decades, with 2 and 5 when fewer than three decades. */
export function logTicks(min: number, max: number): { lo: number; hi: number; ticks: number[] } {
  if (!(min > 0 && max > 0 && Number.isFinite(min) && Number.isFinite(max))) { min = 1; max = 10; }
  if (min > max) [min, max] = [max, min];
  let e0 = Math.floor(Math.log10(min) + 1e-12), e1 = Math.ceil(Math.log10(max) - 1e-12);
  if (e1 === e0) e1++;
  const ticks: number[] = [];
  const dense = e1 - e0 < 3;
  for (let e = e0; e <= e1; e++) for (const m of dense ? [1, 2, 5] : [1]) {
    const t = Number((m * 10 ** e).toPrecision(12));
    if (t <= 10 ** e1 * (1 + 1e-12)) ticks.push(t);
  }
  // Trim decades the data does not reach (keep one tick at or beyond each end).
  let a = 0, b = ticks.length - 1;
  while (a + 1 < ticks.length && ticks[a + 1] <= min) a++;
  while (b - 1 >= 0 && ticks[b - 1] >= max) b--;
  const kept = ticks.slice(a, b + 1);
  return { lo: kept[0], hi: kept[kept.length - 1], ticks: kept };
}

interface AxisLayout {
  lo: number;
  hi: number;
  ticks: number[];
  labels: string[];
  title: string;
  map: (v: number, a: number, b: number) => number;
}

/** "3M", "470n": the mantissa rounded to `digits`, a carry to 1000 moving to the next prefix (999.9k → 1M). */
function engineering(v: number, digits = 3, sep = ""): string {
  if (v === 0) return "0";
  let e3 = Math.max(-18, Math.min(12, 3 * Math.floor(Math.log10(Math.abs(v)) / 3 + 1e-12)));
  let m = Number((v / 10 ** e3).toPrecision(digits));
  if (Math.abs(m) >= 1000 && e3 < 12) { e3 += 3; m = Number((v / 10 ** e3).toPrecision(digits)); }
  return `${m}${sep}${PREFIX[e3]}`;
}

function layoutAxis(axis: PlotAxis, values: number[]): AxisLayout {
  const finite = values.filter((v) => Number.isFinite(v) && (!axis.log || v > 0));
  const min = finite.length ? Math.min(...finite) : axis.log ? 1 : 0;
  const max = finite.length ? Math.max(...finite) : axis.log ? 10 : 1;
  const usePrefix = axis.prefix ?? axis.unit !== undefined;
  if (axis.log) {
    const t = logTicks(min, max);
    const l0 = Math.log10(t.lo), l1 = Math.log10(t.hi);
    return {
      lo: t.lo, hi: t.hi, ticks: t.ticks,
      labels: t.ticks.map((v) => (usePrefix ? engineering(v) : String(v))),
      title: axis.unit ? `${axis.label} (${axis.unit})` : axis.label,
      map: (v, a, b) => a + ((Math.log10(v) - l0) / (l1 - l0)) * (b - a),
    };
  }
  const t = niceTicks(min, max);
  let e3 = 0;
  if (usePrefix) {
    const mag = Math.max(Math.abs(t.lo), Math.abs(t.hi));
    if (mag > 0) e3 = Math.max(-18, Math.min(12, 3 * Math.floor(Math.log10(mag) / 3 + 1e-12)));
  }
  const scale = 10 ** e3;
  const decimals = Math.max(0, Math.min(12, -Math.floor(Math.log10(t.step / scale) + 1e-9)));
  const unitText = axis.unit ? `${usePrefix ? PREFIX[e3] : ""}${axis.unit}` : e3 !== 0 ? `×10^${e3}` : "";
  return {
    lo: t.lo, hi: t.hi, ticks: t.ticks,
    labels: t.ticks.map((v) => { const s = (v / scale).toFixed(decimals); return /^-0(\.0*)?$/.test(s) ? s.slice(1) : s; }),
    title: unitText ? `${axis.label} (${unitText})` : axis.label,
    map: (v, a, b) => a + ((v - t.lo) / (t.hi - t.lo)) * (b - a),
  };
}

const f2 = (x: number): string => (Math.round(x * 100) / 100).toString();

/** A line plot of `series` as a standalone SVG document. */
type Corner = "top-right" | "bottom-right" | "top-left" | "bottom-left";

/**
 * Where the legend covers the least data: each corner's box (inside the plot frame) is scored
 * by the series' polylines sampled every few pixels and the reference lines that cross it; the
 * preferred corner wins ties. "below" when every corner covers some data.
 */
function legendPlace(series: PlotSeries[], refs: ReadonlyArray<{ value: number }>, any: boolean, preferred: Corner, lw: number, lh: number,
  frame: { x0: number; x1: number; y0: number; y1: number }, px: (v: number) => number, py: (v: number) => number,
  okX: (v: number) => boolean, okY: (v: number) => boolean): Corner | "below" {
  if (!any) return preferred;
  const corners: Corner[] = [preferred, ...(["top-right", "top-left", "bottom-right", "bottom-left"] as Corner[]).filter((c) => c !== preferred)];
  const margin = 4;
  const boxOf = (c: Corner) => {
    const lx = c.endsWith("right") ? frame.x1 - lw - 8 : frame.x0 + 8;
    const ly = c.startsWith("top") ? frame.y1 + 8 : frame.y0 - lh - 8;
    return { a: lx - margin, b: lx + lw + margin, c: ly - margin, d: ly + lh + margin };
  };
  const boxes = corners.map(boxOf);
  const hits = new Array<number>(corners.length).fill(0);
  const mark = (x: number, y: number): void => {
    boxes.forEach((bx, i) => { if (x >= bx.a && x <= bx.b && y >= bx.c && y <= bx.d) hits[i]++; });
  };
  for (const s of series) {
    const n = Math.min(s.x.length, s.y.length);
    let prev: [number, number] | undefined;
    for (let i = 0; i < n; i++) {
      if (!okX(s.x[i]) || !okY(s.y[i])) { prev = undefined; continue; }
      const p: [number, number] = [px(s.x[i]), py(s.y[i])];
      if (prev) {
        const steps = Math.max(1, Math.ceil(Math.hypot(p[0] - prev[0], p[1] - prev[1]) / 3));
        for (let t = 1; t <= steps; t++) mark(prev[0] + ((p[0] - prev[0]) * t) / steps, prev[1] + ((p[1] - prev[1]) * t) / steps);
      } else mark(p[0], p[1]);
      prev = p;
    }
  }
  for (const r of refs) {
    if (!okY(r.value)) continue;
    const y = py(r.value);
    boxes.forEach((bx, i) => { if (y >= bx.c && y <= bx.d) hits[i]++; });
  }
  let best = 0;
  for (let i = 1; i < corners.length; i++) if (hits[i] < hits[best]) best = i;
  return hits[best] === 0 ? corners[best] : "below";
}

export function linePlotSvg(series: PlotSeries[], opts: PlotOptions): string {
  const W = opts.width ?? 720;
  const refs = opts.references ?? [];
  const left = 84, right = 24, top = opts.title ? 44 : 20, bottom = 58;
  const xs: number[] = [], ys: number[] = [];
  for (const s of series) {
    const n = Math.min(s.x.length, s.y.length);
    for (let i = 0; i < n; i++) if (Number.isFinite(s.x[i]) && Number.isFinite(s.y[i])) { xs.push(s.x[i]); ys.push(s.y[i]); }
  }
  for (const r of refs) if (Number.isFinite(r.value) && r.inRange !== false) ys.push(r.value);
  const ax = layoutAxis(opts.x, xs), ay = layoutAxis(opts.y, ys);
  const okX = (v: number): boolean => Number.isFinite(v) && (!opts.x.log || v > 0);
  const okY = (v: number): boolean => Number.isFinite(v) && (!opts.y.log || v > 0);

  // The legend goes in the corner of the plot where it covers the least of the data (the one
  // asked for first), or below the plot, growing the picture, when every corner would cover some.
  const entries = [...series.map((s, k) => ({ label: s.label, colour: PALETTE[k % PALETTE.length], dashed: !!s.dashed })),
    ...refs.map((r) => ({ label: okY(r.value) && r.value >= ay.lo && r.value <= ay.hi ? r.label : `${r.label} (off scale)`, colour: "#555555", dashed: true }))];
  const H0 = opts.height ?? 440;
  const lh = 8 + 18 * entries.length;
  const legendWidth = (room: number): number => Math.min(room - 16, 36 + 7 * Math.max(0, ...entries.map((e) => [...e.label].length)));
  const place = legendPlace(series, refs, entries.length > 0, opts.legend ?? "top-right", legendWidth(W - right - left), lh,
    { x0: left, x1: W - right, y0: H0 - bottom, y1: top }, (v) => ax.map(v, left, W - right), (v) => ay.map(v, H0 - bottom, top), okX, okY);
  const H = place === "below" ? H0 + lh + 16 : H0;
  const x0 = left, x1 = W - right, y0 = H0 - bottom, y1 = top;
  const px = (v: number): number => ax.map(v, x0, x1);
  const py = (v: number): number => ay.map(v, y0, y1);

  const o: string[] = [];
  o.push(`<?xml version="1.0" encoding="UTF-8"?>`);
  o.push(`<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}" font-family="Helvetica, Arial, sans-serif" font-size="12">`);
  if (opts.title) o.push(`<title>${xmlText(opts.title)}</title>`);
  o.push(`<rect x="0" y="0" width="${W}" height="${H}" fill="#ffffff"/>`);
  if (opts.title) o.push(`<text x="${f2(W / 2)}" y="24" text-anchor="middle" font-size="15" font-weight="bold">${xmlText(opts.title)}</text>`);

  // Grid and ticks.
  o.push(`<g class="x-ticks" stroke="#dddddd" stroke-width="1">`);
  ax.ticks.forEach((t) => o.push(`<line x1="${f2(px(t))}" y1="${f2(y0)}" x2="${f2(px(t))}" y2="${f2(y1)}"/>`));
  o.push(`</g>`);
  o.push(`<g class="y-ticks" stroke="#dddddd" stroke-width="1">`);
  ay.ticks.forEach((t) => o.push(`<line x1="${f2(x0)}" y1="${f2(py(t))}" x2="${f2(x1)}" y2="${f2(py(t))}"/>`));
  o.push(`</g>`);
  o.push(`<g class="x-labels" text-anchor="middle">`);
  ax.ticks.forEach((t, i) => o.push(`<text x="${f2(px(t))}" y="${f2(y0 + 18)}" data-value="${t}">${xmlText(ax.labels[i])}</text>`));
  o.push(`</g>`);
  o.push(`<g class="y-labels" text-anchor="end">`);
  ay.ticks.forEach((t, i) => o.push(`<text x="${f2(x0 - 8)}" y="${f2(py(t) + 4)}" data-value="${t}">${xmlText(ay.labels[i])}</text>`));
  o.push(`</g>`);
  o.push(`<rect x="${f2(x0)}" y="${f2(y1)}" width="${f2(x1 - x0)}" height="${f2(y0 - y1)}" fill="none" stroke="#333333" stroke-width="1"/>`);
  o.push(`<text class="x-title" x="${f2((x0 + x1) / 2)}" y="${f2(H - 16)}" text-anchor="middle">${xmlText(ax.title)}</text>`);
  o.push(`<text class="y-title" x="18" y="${f2((y0 + y1) / 2)}" text-anchor="middle" transform="rotate(-90 18 ${f2((y0 + y1) / 2)})">${xmlText(ay.title)}</text>`);

  // Data, clipped to the plot area.
  o.push(`<defs><clipPath id="plot-area"><rect x="${f2(x0)}" y="${f2(y1)}" width="${f2(x1 - x0)}" height="${f2(y0 - y1)}"/></clipPath></defs>`);
  o.push(`<g clip-path="url(#plot-area)" fill="none" stroke-width="2">`);
  refs.forEach((r) => {
    if (okY(r.value) && r.value >= ay.lo && r.value <= ay.hi) o.push(`<line class="reference" x1="${f2(x0)}" y1="${f2(py(r.value))}" x2="${f2(x1)}" y2="${f2(py(r.value))}" stroke="#555555" stroke-dasharray="7 5"/>`);
  });
  series.forEach((s, k) => {
    const colour = PALETTE[k % PALETTE.length];
    const n = Math.min(s.x.length, s.y.length);
    // A non-finite value breaks the line rather than joining across it.
    let d = "", pen = false;
    for (let i = 0; i < n; i++) {
      if (!okX(s.x[i]) || !okY(s.y[i])) { pen = false; continue; }
      d += `${pen ? "L" : "M"}${f2(px(s.x[i]))} ${f2(py(s.y[i]))} `;
      pen = true;
    }
    if (d) o.push(`<path class="series" d="${d.trim()}" stroke="${colour}"${s.dashed ? ` stroke-dasharray="7 5"` : ""}/>`);
    if (s.markers ?? n <= 40) {
      o.push(`<g class="markers" fill="${colour}" stroke="none">`);
      for (let i = 0; i < n; i++) if (okX(s.x[i]) && okY(s.y[i])) o.push(`<circle cx="${f2(px(s.x[i]))}" cy="${f2(py(s.y[i]))}" r="3.5"/>`);
      o.push(`</g>`);
    }
  });
  o.push(`</g>`);
  if (xs.length === 0) o.push(`<text x="${f2((x0 + x1) / 2)}" y="${f2((y0 + y1) / 2)}" text-anchor="middle" fill="#888888">no data</text>`);

  // Legend: in the corner chosen above, or below the plot.
  if (entries.length > 0) {
    const lw = legendWidth(x1 - x0);
    const lx = place === "below" ? x0 : place.endsWith("right") ? x1 - lw - 8 : x0 + 8;
    const ly = place === "below" ? H0 + 4 : place.startsWith("top") ? y1 + 8 : y0 - lh - 8;
    o.push(`<g class="legend">`);
    o.push(`<rect x="${f2(lx)}" y="${f2(ly)}" width="${f2(lw)}" height="${f2(lh)}" fill="#ffffff" fill-opacity="0.9" stroke="#bbbbbb"/>`);
    entries.forEach((e, i) => {
      const yy = ly + 16 + 18 * i;
      o.push(`<line x1="${f2(lx + 6)}" y1="${f2(yy - 4)}" x2="${f2(lx + 28)}" y2="${f2(yy - 4)}" stroke="${e.colour}" stroke-width="2"${e.dashed ? ` stroke-dasharray="7 5"` : ""}/>`);
      o.push(`<text x="${f2(lx + 34)}" y="${f2(yy)}">${xmlText(e.label)}</text>`);
    });
    o.push(`</g>`);
  }
  o.push(`</svg>`);
  return o.join("\n") + "\n";
}

/**
 * A capacitance (or any quantity) against panel count on a logarithmic panel axis, with
 * the extrapolated value as a dashed line. `unit` defaults to farads.
 */
export function convergencePlotSvg(levels: Array<{ panels: number; value: number }>, extrapolated: number | undefined, label: string, opts: { unit?: string; title?: string } = {}): string {
  const sorted = [...levels].sort((a, b) => a.panels - b.panels);
  return linePlotSvg([{ label: `${label} per mesh`, x: sorted.map((l) => l.panels), y: sorted.map((l) => l.value), markers: true }], {
    title: opts.title ?? `Convergence of ${label}`,
    x: { label: "panels", log: true, prefix: true },
    y: { label, unit: opts.unit ?? "F" },
    references: extrapolated !== undefined && Number.isFinite(extrapolated) ? [{ value: extrapolated, label: "extrapolated" }] : [],
    // Values approach the limit from one side as the panels grow, leaving one lower corner
    // empty: from below (Galerkin) the bottom right, from above the top right.
    legend: sorted.length > 1 && sorted[sorted.length - 1].value < sorted[0].value ? "top-right" : "bottom-right",
  });
}

/**
 * Field magnitude along a probe line: `distance` in the user's length unit `lengthUnit`
 * (not prefixed), `field` in V/m; the breakdown field, when given, as a dashed line.
 */
export function fieldAlongLineSvg(distance: ArrayLike<number>, field: ArrayLike<number>, opts: { lengthUnit: string; title?: string; breakdownField?: number; label?: string }): string {
  let peak = 0;
  for (let i = 0; i < field.length; i++) if (Number.isFinite(field[i])) peak = Math.max(peak, Math.abs(field[i]));
  const eb = opts.breakdownField;
  // Stretch the axis to the breakdown line only when the field comes within a factor 5 of it;
  // otherwise the curve would be squashed flat at the bottom.
  const refs = eb !== undefined ? [{ value: eb, label: `breakdown field ${engineering(eb, 3, " ")}V/m`, inRange: peak >= 0.2 * eb }] : [];
  return linePlotSvg([{ label: opts.label ?? "|E|", x: distance, y: field }], {
    title: opts.title ?? "Field along the probe line",
    x: { label: "distance", unit: opts.lengthUnit, prefix: false },
    y: { label: "|E|", unit: "V/m" },
    references: refs,
  });
}
