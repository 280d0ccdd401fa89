// Per-panel colours and the colour bar's scale (viewer/src/colour-scale.ts), without a
// browser: the ranges of |E| and signed σ, linear and logarithmic, with zeros, negative σ,
// outliers and all-zero fields; the table entry a value lands on; vertex colour words; the
// bar's pixels and tick labels.
// The viridis end colours #440154 and #fde725 are matplotlib's published table (CC0).
import { describe, it, expect } from "vitest";
import {
  colourScale, lutIndex, lutWords, fillPanelColours, copyProxyColours, fillBarPixels, barTicks, barTitle,
  colourTables, tableOf, wordsOf, LOG_DECADES,
} from "../../viewer/src/colour-scale.js";
import { LUT_SIZE, viridisTable, coolWarmTable } from "../../viewer/src/colormap.js";
import type { Excitation } from "../../viewer/src/data.js";

function excitation(field: number[], sigma: number[]): Excitation {
  let fMin = Infinity;
  for (const f of field) if (f > 0 && f < fMin) fMin = f;
  return {
    id: "scene", potentials: [1], sigma: Float32Array.from(sigma), field: Float32Array.from(field),
    sigmaRange: [Math.min(...sigma), Math.max(...sigma)], fieldRange: [Math.min(...field), Math.max(...field)],
    fieldMinPositive: Number.isFinite(fMin) ? fMin : 0, sheetFieldBound: false, hotSpots: [],
  };
}

/** The RGBA bytes of a colour word as stored (memory order). */
function bytes(w: number): number[] {
  return Array.from(new Uint8Array(Uint32Array.of(w).buffer));
}

// Values exactly representable in float32, so the test's numbers are the data's.
const e = excitation([0, 131072, 1048576, 2097152], [-0.0000152587890625, 0, 2 ** -30, 0.000030517578125]);

describe("colourScale for |E|", () => {
  it("linear: 0 to the peak field, proportional in between", () => {
    const s = colourScale(e, "field", "linear");
    expect([s.lo, s.hi, s.floor]).toEqual([0, 2097152, 0]);
    expect(s.map(0)).toBe(0);
    expect(s.map(1048576)).toBe(0.5);
    expect(s.map(2097152)).toBe(1);
  });

  it("log: from the smallest positive field to the peak; zero sits at the bottom", () => {
    const s = colourScale(e, "field", "log");
    expect(s.lo).toBe(131072);
    expect(s.floor).toBe(131072);
    expect(s.map(131072)).toBe(0);
    expect(s.map(0)).toBe(0);
    expect(s.map(2097152)).toBe(1);
    expect(s.map(524288)).toBeCloseTo(0.5, 12); // 2^19 is halfway between 2^17 and 2^21 in log
  });

  it("log: never more than LOG_DECADES below the peak, however small the smallest field", () => {
    const s = colourScale(excitation([1e-6, 10, 1e6], [1]), "field", "log");
    expect(s.lo).toBeCloseTo(1e6 * 10 ** -LOG_DECADES, 9);
    expect(s.map(1e-6)).toBe(0);
    expect(s.map(10)).toBeCloseTo(1 / 6, 12);
  });

  it("an all-zero field: linear maps it to the bottom; log to one finite value (no NaN reaches the colours)", () => {
    const z = excitation([0, 0], [0, 0]);
    expect(colourScale(z, "field", "linear").map(0)).toBe(0);
    const t = colourScale(z, "field", "log").map(0);
    expect(Number.isFinite(t)).toBe(true);
  });
});

describe("colourScale for σ", () => {
  it("linear: symmetric about zero at ± the largest |σ|, zero at the centre", () => {
    const s = colourScale(e, "sigma", "linear");
    expect([s.lo, s.hi]).toEqual([-0.000030517578125, 0.000030517578125]);
    expect(s.map(0)).toBe(0.5);
    expect(s.map(-0.0000152587890625)).toBe(0.25);
    expect(s.map(0.000030517578125)).toBe(1);
    expect(s.map(-0.000030517578125)).toBe(0);
  });

  it("linear: an all-negative σ still centres zero and puts the most negative at the bottom", () => {
    const s = colourScale(excitation([1], [-3e-6, -1e-8]), "sigma", "linear");
    expect(s.hi).toBeCloseTo(3e-6, 18);
    expect(s.lo).toBeCloseTo(-3e-6, 18);
    expect(s.map(-s.hi)).toBe(0);
    expect(s.map(-1e-8)).toBeCloseTo(0.5 - 0.5 * 1e-8 / 3e-6, 6);
  });

  it("log: the floor is the smallest nonzero |σ| (zeros skipped); below it a panel shows as zero", () => {
    const s = colourScale(e, "sigma", "log");
    expect(s.floor).toBe(2 ** -30);
    expect(s.map(0)).toBe(0.5);
    expect(s.map(2 ** -30)).toBe(0.5);
    expect(s.map(0.000030517578125)).toBe(1);
    expect(s.map(-0.000030517578125)).toBe(0);
    // |σ| = 2^-16 lies 14 of the 15 binary decades from 2^-30 to 2^-15: 0.5 − 0.5·14/15 on the negative side.
    expect(s.map(-0.0000152587890625)).toBeCloseTo(0.5 - (0.5 * 14) / 15, 12);
  });

  it("log: an outlier sets the top, the floor stays LOG_DECADES below it", () => {
    const s = colourScale(excitation([1], [1, 1e-12, -1e-3]), "sigma", "log");
    expect(s.floor).toBeCloseTo(1e-6, 15);
    expect(s.map(1e-12)).toBe(0.5);
    expect(s.map(-1e-3)).toBeCloseTo(0.5 - 0.5 * 0.5, 6); // 3 of 6 decades
  });

  it("log: all σ zero maps every panel to the centre", () => {
    const s = colourScale(excitation([0], [0, 0]), "sigma", "log");
    expect(s.map(0)).toBe(0.5);
    expect(lutIndex(s.map(0))).toBe(128);
  });
});

describe("colour table entries", () => {
  it("clamps to the table and sends values that are not numbers to the first entry", () => {
    expect(lutIndex(0)).toBe(0);
    expect(lutIndex(1)).toBe(LUT_SIZE - 1);
    expect(lutIndex(0.5)).toBe(128);
    expect(lutIndex(-0.3)).toBe(0);
    expect(lutIndex(1.7)).toBe(255);
    expect(lutIndex(NaN)).toBe(0);
    expect(lutIndex(Infinity)).toBe(0);
  });

  it("lays a table out as words of bytes r, g, b, 255", () => {
    const t = viridisTable();
    const w = lutWords(t);
    expect(w.length).toBe(LUT_SIZE);
    expect(bytes(w[0])).toEqual([t[0], t[1], t[2], 255]);
    expect(bytes(w[200])).toEqual([t[600], t[601], t[602], 255]);
  });

  it("colours a conductor's panels: peak |E| is viridis #fde725, zero #440154, three vertices each", () => {
    const tables = colourTables();
    const s = colourScale(e, "field", "linear");
    const panels = Uint32Array.of(3, 0, 2);
    const out = new Uint32Array(9);
    fillPanelColours(out, panels, e.field, s, wordsOf(tables, "field"));
    expect(bytes(out[0])).toEqual([0xfd, 0xe7, 0x25, 255]);
    expect(bytes(out[1])).toEqual(bytes(out[0]));
    expect(bytes(out[2])).toEqual(bytes(out[0]));
    expect(bytes(out[3])).toEqual([0x44, 0x01, 0x54, 255]);
    const mid = tableOf(tables, "field").subarray(3 * 128, 3 * 128 + 3);
    expect(bytes(out[6])).toEqual([...mid, 255]);
  });

  it("colours σ on the diverging table: negative cool (blue above red), positive warm, zero at the centre entry", () => {
    const tables = colourTables();
    const s = colourScale(e, "sigma", "linear");
    const out = new Uint32Array(12);
    fillPanelColours(out, Uint32Array.of(0, 1, 2, 3), e.sigma, s, wordsOf(tables, "sigma"));
    const cw = coolWarmTable();
    const [neg, zero, , pos] = [0, 3, 6, 9].map((j) => bytes(out[j]));
    expect(neg).toEqual([cw[3 * 64], cw[3 * 64 + 1], cw[3 * 64 + 2], 255]); // 0.25 · 255 = 63.75 → 64
    expect(zero).toEqual([cw[3 * 128], cw[3 * 128 + 1], cw[3 * 128 + 2], 255]);
    expect(pos.slice(0, 3)).toEqual([180, 4, 38]); // Moreland's warm end
    expect(neg[2]).toBeGreaterThan(neg[0]);
    expect(pos[0]).toBeGreaterThan(pos[2]);
  });

  it("gives each proxy triangle the colour of the panel it stands for", () => {
    const from = Uint32Array.of(1, 1, 1, 2, 2, 2, 3, 3, 3);
    const to = new Uint32Array(6);
    copyProxyColours(to, from, Uint32Array.of(2, 0));
    expect(Array.from(to)).toEqual([3, 3, 3, 1, 1, 1]);
  });
});

describe("the colour bar", () => {
  it("draws the table upwards: top pixel the last entry, bottom pixel the first, opaque", () => {
    const t = viridisTable();
    const px = new Uint8ClampedArray(4 * LUT_SIZE);
    fillBarPixels(px, t);
    expect(Array.from(px.subarray(0, 4))).toEqual([0xfd, 0xe7, 0x25, 255]);
    expect(Array.from(px.subarray(4 * 255, 4 * 256))).toEqual([0x44, 0x01, 0x54, 255]);
    expect(Array.from(px.subarray(4 * 100, 4 * 101))).toEqual([t[3 * 155], t[3 * 155 + 1], t[3 * 155 + 2], 255]);
  });

  it("labels a linear |E| bar at its top, middle and bottom", () => {
    const s = colourScale(excitation([0, 3e6], [1]), "field", "linear");
    expect(barTitle(s)).toBe("|E| (linear)");
    expect(barTicks(s)).toEqual([[0, "3.000 MV/m", "max"], [0.5, "1.500 MV/m", "mid"], [1, "0.000 V/m", "min"]]);
  });

  it("labels a log |E| bar's middle with the geometric mean", () => {
    const s = colourScale(excitation([1e4, 1e6], [1]), "field", "log");
    expect(barTicks(s)[1]).toEqual([0.5, "100.0 kV/m", "mid"]);
  });

  it("labels a log σ bar with its floor on both sides and the zero band between", () => {
    const s = colourScale(excitation([1], [-1e-9, 0, 4e-5]), "sigma", "log");
    expect(barTitle(s)).toBe("σ (log, signed)");
    expect(barTicks(s).map(([at, , role]) => [at, role])).toEqual([[0, "max"], [0.25, "floor"], [0.5, "mid"], [0.75, "-floor"], [1, "min"]]);
    const floorText = barTicks(s)[1][1];
    expect(floorText).toMatch(/^1\.000 nC\/m²$/);
    expect(barTicks(s)[2][1]).toBe(`|σ| < ${floorText}`);
    expect(barTicks(s)[3][1]).toBe("-1.000 nC/m²");
    expect(barTicks(s)[0][1]).toBe("40.00 µC/m²");
  });
});
