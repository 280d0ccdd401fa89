/**
 * SVG plots: well-formed XML (checked against the XML 1.0 rules that matter here: one root,
 * properly nested elements, quoted attributes, only the predefined entities), axes whose
 * ticks cover the data, escaped text, legends and reference lines.
 */
import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { linePlotSvg, convergencePlotSvg, fieldAlongLineSvg, niceTicks, logTicks, xmlText } from "../../src/report/svg-plot.js";

/** Minimal XML well-formedness check; returns the element names in document order. */
function wellFormed(xml: string): string[] {
  let s = xml.replace(/^<\?xml[^?]*\?>\s*/, "");
  const stack: string[] = [];
  const names: string[] = [];
  let roots = 0;
  const token = /<!--[\s\S]*?-->|<(\/?)([A-Za-z_][\w.:-]*)((?:\s+[A-Za-z_][\w.:-]*\s*=\s*(?:"[^"<]*"|'[^'<]*'))*)\s*(\/?)>|<|&(?!(?:amp|lt|gt|quot|apos|#\d+|#x[0-9a-fA-F]+);)/g;
  let m: RegExpExecArray | null;
  let last = 0;
  while ((m = token.exec(s)) !== null) {
    const between = s.slice(last, m.index);
    if (stack.length === 0 && between.trim() !== "") throw new Error(`text outside the root: ${between.slice(0, 20)}`);
    last = token.lastIndex;
    if (m[0].startsWith("<!--")) continue;
    if (m[0] === "<" || m[0] === "&") throw new Error(`stray ${m[0]} at ${m.index}: ${s.slice(m.index, m.index + 30)}`);
    const [, close, name, attrs, selfClose] = m;
    for (const a of attrs.matchAll(/([A-Za-z_][\w.:-]*)\s*=\s*("[^"]*"|'[^']*')/g)) {
      if (/&(?!(?:amp|lt|gt|quot|apos|#\d+|#x[0-9a-fA-F]+);)/.test(a[2])) throw new Error(`bad entity in attribute ${a[1]}`);
    }
    const dup = [...attrs.matchAll(/([A-Za-z_][\w.:-]*)\s*=/g)].map((a) => a[1]);
    if (new Set(dup).size !== dup.length) throw new Error(`duplicate attribute in <${name}>`);
    if (close) {
      if (stack.pop() !== name) throw new Error(`</${name}> does not close the open element`);
    } else {
      if (stack.length === 0) roots++;
      names.push(name);
      if (!selfClose) stack.push(name);
    }
  }
  if (s.slice(last).trim() !== "") throw new Error("text after the root");
  if (stack.length) throw new Error(`unclosed <${stack.join("><")}>`);
  if (roots !== 1) throw new Error(`${roots} root elements`);
  return names;
}

const values = (svg: string, cls: string): number[] => {
  const g = new RegExp(`<g class="${cls}"[^>]*>([\\s\\S]*?)</g>`).exec(svg);
  return g ? [...g[1].matchAll(/data-value="([^"]+)"/g)].map((x) => Number(x[1])) : [];
};
const labels = (svg: string, cls: string): string[] => {
  const g = new RegExp(`<g class="${cls}"[^>]*>([\\s\\S]*?)</g>`).exec(svg);
  return g ? [...g[1].matchAll(/>([^<]*)<\/text>/g)].map((x) => x[1]) : [];
};

describe("the checker itself", () => {
  it("rejects malformed documents", () => {
    expect(() => wellFormed("<svg><g></svg>")).toThrow();
    expect(() => wellFormed('<svg a="1" a="2"/>')).toThrow(/duplicate/);
    expect(() => wellFormed("<svg>a & b</svg>")).toThrow(/stray &/);
    expect(() => wellFormed("<svg/><svg/>")).toThrow(/2 root/);
    expect(wellFormed('<svg><text x="1">a &amp; b</text></svg>')).toEqual(["svg", "text"]);
  });
});

describe("ticks", () => {
  it("nice linear ticks cover the range with steps of 1, 2 or 5 × 10^n", () => {
    fc.assert(fc.property(fc.double({ min: -1e6, max: 1e6, noNaN: true }), fc.double({ min: 1e-9, max: 1e6, noNaN: true }), (a, w) => {
      const t = niceTicks(a, a + w);
      const m = t.step / 10 ** Math.floor(Math.log10(t.step) + 1e-12);
      expect([1, 2, 5, 10].some((x) => Math.abs(m - x) < 1e-9)).toBe(true);
      expect(t.ticks[0]).toBeLessThanOrEqual(a + 1e-9 * Math.max(1, Math.abs(a)));
      expect(t.ticks[t.ticks.length - 1]).toBeGreaterThanOrEqual(a + w - 1e-9 * Math.max(1, Math.abs(a + w)));
      expect(t.ticks.length).toBeGreaterThanOrEqual(2);
      expect(t.ticks.length).toBeLessThanOrEqual(12);
      return true;
    }), { seed: 61, numRuns: 400 });
    // Heckbert: range 0.3 → 0.5, step 0.5/5 → 0.1; and no 0.30000000000000004 from summing steps
    expect(niceTicks(0, 0.3).ticks).toEqual([0, 0.1, 0.2, 0.3]);
    expect(niceTicks(5, 5).ticks[0]).toBeLessThan(5);
  });
  it("log ticks bracket the data in decades", () => {
    expect(logTicks(80, 5120).ticks).toEqual([10, 100, 1000, 10000]);
    expect(logTicks(300, 900).ticks).toEqual([200, 500, 1000]);
  });
});

describe("linePlotSvg", () => {
  it("is well-formed, with title, axis titles, legend and ticks covering the data", () => {
    const x = Array.from({ length: 50 }, (_, i) => 0.2 * i);
    const y = x.map((v) => 2.4e6 / (1 + v * v));
    const svg = linePlotSvg([{ label: "gap <A & B>", x, y }, { label: "other", x, y: y.map((v) => v / 2), dashed: true }], {
      title: "Field & gap", x: { label: "distance", unit: "mm", prefix: false }, y: { label: "|E|", unit: "V/m" },
    });
    const names = wellFormed(svg);
    expect(names[0]).toBe("svg");
    expect(names.filter((n) => n === "path").length).toBe(2);
    expect(svg).toContain("<title>Field &amp; gap</title>");
    expect(svg).toContain("gap &lt;A &amp; B&gt;");
    expect(svg).toContain("|E| (MV/m)");
    expect(svg).toContain("distance (mm)");
    expect(svg).toMatch(/stroke-dasharray/);
    const xt = values(svg, "x-labels"), yt = values(svg, "y-labels");
    expect(Math.min(...xt)).toBeLessThanOrEqual(0);
    expect(Math.max(...xt)).toBeGreaterThanOrEqual(9.8);
    expect(Math.min(...yt)).toBeLessThanOrEqual(Math.min(...y) / 2);
    expect(Math.max(...yt)).toBeGreaterThanOrEqual(2.4e6);
    // labels are the tick values in the axis prefix (MV/m)
    labels(svg, "y-labels").forEach((l, i) => expect(Number(l) * 1e6).toBeCloseTo(yt[i], 6));
  });
  it("breaks the line at non-finite values and survives empty data", () => {
    const svg = linePlotSvg([{ label: "a", x: [0, 1, 2, 3], y: [1, NaN, 2, 3] }], { x: { label: "x" }, y: { label: "y" } });
    wellFormed(svg);
    const d = /<path class="series" d="([^"]+)"/.exec(svg)![1];
    expect(d.match(/M/g)!.length).toBe(2);
    const empty = linePlotSvg([], { x: { label: "x" }, y: { label: "y" } });
    wellFormed(empty);
    expect(empty).toContain("no data");
  });
});

describe("convergence and field plots", () => {
  it("convergence plot: log panel axis, the levels, and the extrapolated value dashed within the axis", () => {
    const levels = [{ panels: 80, value: 1.080e-12 }, { panels: 320, value: 1.105e-12 }, { panels: 1280, value: 1.1100e-12 }];
    const svg = convergencePlotSvg(levels, 1.1125e-12, "C11");
    wellFormed(svg);
    expect(svg).toContain("C11 (pF)");
    expect(values(svg, "x-labels")).toEqual([10, 100, 1000, 10000]);
    expect(labels(svg, "x-labels")).toEqual(["10", "100", "1k", "10k"]);
    const yt = values(svg, "y-labels");
    expect(Math.min(...yt)).toBeLessThanOrEqual(1.080e-12);
    expect(Math.max(...yt)).toBeGreaterThanOrEqual(1.1125e-12);
    expect(svg).toMatch(/class="reference"[^>]*stroke-dasharray/);
    expect(svg).toContain(">extrapolated<");
    expect((svg.match(/<circle /g) ?? []).length).toBe(3);
  });
  it("field plot: the breakdown line only stretches the axis when the field comes near it", () => {
    const d = [0, 1, 2, 3], near = [1e6, 2e6, 1.5e6, 1e6], far = [1e3, 2e3, 1.5e3, 1e3];
    const a = fieldAlongLineSvg(d, near, { lengthUnit: "mm", breakdownField: 3e6 });
    wellFormed(a);
    expect(a).toMatch(/class="reference"/);
    expect(Math.max(...values(a, "y-labels"))).toBeGreaterThanOrEqual(3e6);
    const b = fieldAlongLineSvg(d, far, { lengthUnit: "mm", breakdownField: 3e6 });
    wellFormed(b);
    expect(b).not.toMatch(/class="reference"/);
    expect(b).toContain("(off scale)");
    expect(Math.max(...values(b, "y-labels"))).toBeLessThan(1e4);
  });
  it("field plot: the breakdown field reads as a quantity, number and unit apart, rounding carried to the next prefix", () => {
    const d = [0, 1, 2], e = [1e6, 2e6, 1e6];
    expect(fieldAlongLineSvg(d, e, { lengthUnit: "mm", breakdownField: 3e6 })).toContain(">breakdown field 3 MV/m<");
    expect(fieldAlongLineSvg(d, e, { lengthUnit: "mm", breakdownField: 999.9e3 })).toContain(">breakdown field 1 MV/m<");
    expect(fieldAlongLineSvg(d, e, { lengthUnit: "mm", breakdownField: 2.5e5 })).toContain(">breakdown field 250 kV/m<");
  });
  it("xmlText escapes markup and drops characters XML forbids", () => {
    expect(xmlText(`a<b>&"c'\u0001`)).toBe("a&lt;b&gt;&amp;&quot;c&apos;");
  });
});

describe("legend placement", () => {
  /** The legend box and every data marker's centre, read back from the SVG. */
  function layout(svg: string): { box: { x: number; y: number; w: number; h: number }; markers: Array<[number, number]>; height: number } {
    const g = svg.slice(svg.indexOf('<g class="legend">'));
    const r = /<rect x="([\d.]+)" y="([\d.]+)" width="([\d.]+)" height="([\d.]+)"/.exec(g)!;
    const markers = [...svg.matchAll(/<circle cx="([\d.]+)" cy="([\d.]+)"/g)].map((m) => [Number(m[1]), Number(m[2])] as [number, number]);
    const height = Number(/<svg[^>]* height="(\d+)"/.exec(svg)![1]);
    return { box: { x: Number(r[1]), y: Number(r[2]), w: Number(r[3]), h: Number(r[4]) }, markers, height };
  }
  const covered = (l: ReturnType<typeof layout>) => l.markers.filter(([x, y]) => x >= l.box.x && x <= l.box.x + l.box.w && y >= l.box.y && y <= l.box.y + l.box.h);

  it("moves out of a corner the data runs through: a rising curve keeps the top-right free of the legend", () => {
    const x = Array.from({ length: 20 }, (_, i) => i), y = x.map((v) => v * v);
    const l = layout(linePlotSvg([{ label: "rising", x, y }], { x: { label: "x" }, y: { label: "y" } }));
    expect(covered(l)).toEqual([]);
    expect(l.box.x).toBeLessThan(300); // moved to the left
  });

  it("goes below the plot, growing the picture, when every corner holds data", () => {
    const n = 41, x = Array.from({ length: n }, (_, i) => i / (n - 1));
    // Curves through all four corners.
    const series = [{ label: "up", x, y: x }, { label: "down", x, y: x.map((v) => 1 - v) }, { label: "top", x, y: x.map(() => 0.98) }, { label: "bottom", x, y: x.map(() => 0.02) }];
    const l = layout(linePlotSvg(series.map((s) => ({ ...s, markers: true })), { x: { label: "x" }, y: { label: "y" } }));
    expect(covered(l)).toEqual([]);
    expect(l.height).toBeGreaterThan(440);
    expect(l.box.y).toBeGreaterThan(440 - 58);
  });
});
