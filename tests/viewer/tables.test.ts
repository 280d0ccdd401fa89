// What the viewer's side panel and read-out say (viewer/src/tables.ts), without a browser:
// the content functions return the exact strings shown, and the element builders, run on a
// minimal stand-in document that refuses markup (innerHTML), put every user-given name in
// as text.
import { describe, it, expect, beforeEach, afterEach } from "vitest";
import {
  subtitle, excitationLabel, accuracyNote, capacitanceCell, reportErrors, summaryRows, hotSpotText, hotSpotClass, hotSpotNote,
  sheetBoundNote, panelCentroid, readoutLines, matrixTable, summaryTables, fillHotSpots, markSelectedSpot, showReadout, SUMMARY_HEADS,
  MESH_HEADS, meshRows, solvedPanels, heading, parameterText, referenceOf, mutualCaption, cautionGist, cautionSummary,
} from "../../viewer/src/tables.js";
import { surroundingLabels } from "../../viewer/src/panels.js";
import { cautionsFor } from "../../src/report/cautions.js";
import type { Excitation, HotSpot, ViewerData } from "../../viewer/src/data.js";

const MARKUP = "<img src=x onerror=alert(1)>";

function spot(over: Partial<HotSpot> = {}): HotSpot {
  return { panel: 1, conductor: 1, field: 1.5e6, sigma: 1.328e-5, at: [1e-3, 2e-3, -3e-3], fieldRatio: 0.5, ...over };
}

function excitation(id: string, hotSpots: HotSpot[] = [], sheetFieldBound = false): Excitation {
  return {
    id, potentials: [30000, 0], sigma: Float32Array.of(1e-9, -2.5e-6), field: Float32Array.of(112.5, 3e6),
    sigmaRange: [-2.5e-6, 1e-9], fieldRange: [112.5, 3e6], fieldMinPositive: 112.5, sheetFieldBound, hotSpots,
  };
}

// Two panels; the positions are relative to `origin` (as the page stores them), in metres.
function viewer(): ViewerData {
  return {
    names: ["ball", MARKUP], closed: [true, false], origin: [1e-3, 0, 0],
    positions: Float32Array.of(0, 0, 0, 3e-3, 0, 0, 0, 3e-3, 0, 0, 0, 6e-3),
    triangles: Uint32Array.of(0, 1, 2, 0, 1, 3),
    panelConductor: Uint32Array.of(0, 1), areas: Float32Array.of(4.5e-6, 1e-6),
    breakdownField: 3e6, permittivity: 8.8541878188e-12, excitations: [excitation("scene"), excitation("unit:1")],
  };
}

describe("content", () => {
  it("sums up the run under the title", () => {
    const v = viewer();
    expect(subtitle({ input: { files: ["a.stl", "b <c>.stl"] }, created: "2026-01-02T03:04:05Z" }, v))
      .toBe("a.stl, b <c>.stl · 2 solved panels · 2 conductors · 2026-01-02T03:04:05Z");
    expect(subtitle({ input: { files: ["s.json"], parameters: { gap: 0.25, n: 3 } } }, v)).toBe("s.json · gap = 0.25, n = 3 · 2 solved panels · 2 conductors");
    v.names = ["one"];
    expect(subtitle({}, v)).toBe("extraction · 2 solved panels · 1 conductor");
  });

  it("heads the page with the scene's title, else the tool's own line", () => {
    expect(heading({ input: { title: `Pads ${MARKUP}` } })).toBe(`Pads ${MARKUP}`);
    expect(heading({ input: { title: "  " } })).toBe("sigmesh · surface charge and field");
    expect(heading({})).toBe("sigmesh · surface charge and field");
    expect(parameterText({ input: {} })).toBe("");
  });

  it("names the two-terminal reference: the ground plane when there is one, never infinity then", () => {
    const v = viewer();
    const grounded = { capacitance: { reference: "ground plane" } };
    expect(referenceOf(grounded, v)).toBe("ground plane");
    expect(mutualCaption(grounded, v)).toBe("Two-terminal capacitances (circuit values); diagonal: to the ground plane");
    expect(mutualCaption(grounded, v)).not.toMatch(/infinity/i);
    // The data's own word comes first (a JSON report's viewer data carries it too).
    v.reference = "ground plane";
    expect(mutualCaption({}, v)).toBe("Two-terminal capacitances (circuit values); diagonal: to the ground plane");
    v.reference = "infinity";
    expect(mutualCaption(grounded, v)).toBe("Two-terminal capacitances (circuit values); diagonal: to the reference at infinity (no ground plane)");
    expect(mutualCaption({ model: { symmetry: [{ images: "odd" }] } }, v)).toMatch(/to infinity and the odd symmetry plane \(0 V\)$/);
    delete v.reference;
    expect(referenceOf({}, v)).toBe("infinity");
  });

  it("folds the cautions to a line that keeps the deference to standards, codes and licensed practice", () => {
    for (const potentials of [[15000, 0], [3, 0]]) {
      const cautions = cautionsFor(potentials);
      const gist = cautionGist(cautions);
      expect(gist).toMatch(/standards, local codes and licensed practice/);
      expect(gist.length).toBeLessThan(110);
      expect(cautionSummary(cautions)).toBe(`Cautions (${cautions.length}, click to read):`);
    }
    expect(cautionGist(["First sentence. Second one.", "Other."])).toBe("First sentence.");
  });

  it("labels the dielectric bodies with their permittivity and the ground plane with its place", () => {
    const v = viewer();
    expect(surroundingLabels(v, "mm")).toEqual([]);
    v.bodies = { names: ["board", MARKUP], permittivity: [4.4, 2], positions: new Float32Array(0), triangles: new Uint32Array(0), body: new Uint32Array(0) };
    v.groundPlane = { axis: 2, offset: -1.6e-3 };
    expect(surroundingLabels(v, "mm")).toEqual([
      { body: 0, text: "board (εr = 4.400)" }, { body: 1, text: `${MARKUP} (εr = 2.000)` }, { body: -1, text: "ground plane z = -1.600 mm" },
    ]);
  });

  it("names the working-potential excitation by its potentials and a unit one by its conductor", () => {
    const names = ["ball", MARKUP];
    expect(excitationLabel(excitation("scene"), names)).toBe("Working potentials (ball 30000 V, <img src=x onerror=alert(1)> 0.000 V)");
    expect(excitationLabel(excitation("unit:1"), names)).toBe(`${MARKUP} at 1 V, others 0 V`);
    expect(excitationLabel(excitation("unit:0"), names)).toBe("ball at 1 V, others 0 V");
  });

  it("states the matrix's estimated error only when the report has one", () => {
    expect(accuracyNote({})).toBeUndefined();
    expect(accuracyNote({ accuracy: { relativeError: 0.0123 } })).toBe("Estimated relative error of the matrix (Richardson): 0.012");
    const adaptive = { requested: 1e-3, reached: false, couplingThreshold: 0.05, marking: "dorfler" };
    expect(accuracyNote({ accuracy: { relativeError: 0.0012, levels: [{ panels: 100 }, { panels: 180 }, { panels: 300 }], adaptive } }))
      .toBe("Estimated relative error of the matrix (Richardson): 0.0012. Requested 0.10 % on every diagonal entry and every coupling above 5.0 % of its row's diagonal: NOT reached; adaptive refinement over 100 → 180 → 300 panels.");
  });

  it("shows a capacitance with its prefix, to the digits its estimate supports as the terminal does, and keeps the exact value beside it", () => {
    const x = 1.2345678901234567e-12;
    const c = capacitanceCell(x);
    // No estimate: three digits, as the terminal summary prints them.
    expect(c.text).toBe("1.23 pF");
    expect(Number(c.value)).toBe(x);
    expect(capacitanceCell(-3.3e-14).text).toBe("-33.0 fF");
    // 127.52 ± 0.128 fF: "127.5 fF", not "128 fF" (off by more than its estimate).
    expect(capacitanceCell(127.52e-15, 0.128e-15).text).toBe("127.5 fF");
    expect(capacitanceCell(x, 6e-16).text).toBe("1.235 pF");
    expect(capacitanceCell(x, 2e-17).text).toBe("1.23457 pF");
  });

  it("reads the error estimates of the matrices and charges from the report", () => {
    const report = { conductors: [{ potential: 2 }, { potential: -1 }], accuracy: { errorEstimate: [[1e-15, 2e-16], [2e-16, 3e-15]] } };
    const e = reportErrors(report)!;
    expect(e.maxwell).toEqual(report.accuracy.errorEstimate);
    expect(e.mutual[0][0]).toBeCloseTo(1.2e-15, 30);
    expect(e.mutual[0][1]).toBe(2e-16);
    expect(e.charge[0]).toBeCloseTo(2 * 1e-15 + 1 * 2e-16, 30);
    expect(reportErrors({ conductors: [] })).toBeUndefined();
  });

  it("formats the conductor summary, with a dash where a conductor has no field", () => {
    const report = {
      conductors: [
        { name: "ball", potential: 2000, charge: 3.3e-11, peakField: 1.5e6, fieldRatio: 0.5, area: 1e-6, triangles: 320 },
        { name: "ignored", potential: 0, charge: -3.3e-11, peakField: null, fieldRatio: null, area: 2.5e-5, triangles: 12 },
      ],
    };
    expect(SUMMARY_HEADS).toEqual(["conductor", "potential", "charge", "peak |E|", "of breakdown"]);
    expect(summaryRows(report, ["ball", MARKUP])).toEqual([
      ["ball", "2.000 kV", "33.0 pC", "1.500 MV/m", "50.0 %"],
      [MARKUP, "0.000 V", "-33.0 pC", "—", "—"],
    ]);
    expect(summaryRows({}, ["a"])).toEqual([]);
    // Input triangles (the report's) and solved panels (the drawn mesh's), both named.
    expect(MESH_HEADS).toEqual(["conductor", "area", "input triangles", "solved panels"]);
    expect(meshRows(report, ["ball", MARKUP], "mm", [1280, 48])).toEqual([
      ["ball", "1.000 mm²", "320", "1280"],
      [MARKUP, "25.00 mm²", "12", "48"],
    ]);
  });

  it("counts the solved panels of each conductor", () => {
    const v = viewer();
    v.panelConductor = Uint32Array.of(1, 1, 0, 1);
    expect(solvedPanels(v)).toEqual([1, 3]);
  });

  it("describes a hot spot with its margin to breakdown, and marks one at or past breakdown", () => {
    const names = ["ball", MARKUP];
    expect(hotSpotText(spot(), 2, names, "mm")).toBe(`2. ${MARKUP} — 1.500 MV/m — 50.0 % of breakdown (margin ×2.00) — at (1.000, 2.000, -3.000) mm`);
    expect(hotSpotText(spot({ conductor: 0, field: 0, fieldRatio: 0 }), 1, names, "mm")).toContain("(margin ×inf)");
    expect(hotSpotClass(spot())).toBe("sm-hot");
    expect(hotSpotClass(spot({ fieldRatio: 1 }))).toBe("sm-hot sm-exceeded");
  });

  it("a hot spot at a sharp edge says so, with no margin and no breakdown mark", () => {
    const sharp = spot({ fieldRatio: 2, sharpEdge: true });
    expect(hotSpotText(sharp, 1, ["ball", MARKUP], "mm")).toBe(`1. ${MARKUP} — 1.500 MV/m — sharp edge: grows with refinement, model the real radius — at (1.000, 2.000, -3.000) mm`);
    expect(hotSpotClass(sharp)).toBe("sm-hot");
  });

  it("tells how to read a unit excitation's fields, and when sheet fields are bounds", () => {
    expect(hotSpotNote(excitation("scene"), 3e6)).toBe("Breakdown strength used: 3.000 MV/m. Margin is breakdown strength over field; below ×1 breakdown is expected.");
    expect(hotSpotNote(excitation("unit:0"), 3e6)).toMatch(/ Unit excitation \(1 V\): scale fields by the working voltage\.$/);
    expect(sheetBoundNote(excitation("scene"))).toBe("");
    expect(sheetBoundNote(excitation("unit:0", [], true))).toMatch(/upper bound \|σ\|\/ε/);
  });

  it("reads out a panel: conductor, σ, |E| against breakdown, centroid in the model frame, area in the user's unit", () => {
    const v = viewer();
    expect(panelCentroid(v, 1)).toEqual([Math.fround(3e-3) / 3 + 1e-3, 0, Math.fround(6e-3) / 3]);
    expect(readoutLines(v, v.excitations[0], 1, true, "mm")).toEqual([
      `${MARKUP} · panel 1 (pinned; click empty space to release)`,
      "σ = -2.500 µC/m²",
      "|E| = 3.000 MV/m (100 % of breakdown)",
      "centroid (2.000, 0.000, 2.000) mm",
      "area 1.000 mm²",
    ]);
    expect(readoutLines(v, v.excitations[0], 0, false, "mm")[0]).toBe("ball · panel 0");
  });
});

// ---- A stand-in document: elements that hold text and children, and refuse markup ----

class FakeElement {
  className = "";
  id = "";
  textContent: string | null = null;
  title = "";
  children: FakeElement[] = [];
  dataset: Record<string, string> = {};
  style: Record<string, string> = {};
  listeners: Record<string, Array<() => void>> = {};
  private classes = new Set<string>();
  constructor(readonly tagName: string) {}
  set innerHTML(_: string) { throw new Error("markup must never be parsed"); }
  appendChild(c: FakeElement): FakeElement { this.children.push(c); return c; }
  append(...cs: FakeElement[]): void { this.children.push(...cs); }
  replaceChildren(...cs: FakeElement[]): void { this.children = cs; }
  addEventListener(type: string, f: () => void): void { (this.listeners[type] ??= []).push(f); }
  get classList() {
    return { add: (c: string) => this.classes.add(c), remove: (c: string) => this.classes.delete(c), contains: (c: string) => this.classes.has(c) };
  }
  /** All text of this element and its descendants, in order. */
  get text(): string { return (this.textContent ?? "") + this.children.map((c) => c.text).join(""); }
  all(tag: string): FakeElement[] { return [...(this.tagName === tag ? [this] : []), ...this.children.flatMap((c) => c.all(tag))]; }
}

const g = globalThis as { document?: unknown };
let saved: unknown;
beforeEach(() => { saved = g.document; g.document = { createElement: (tag: string) => new FakeElement(tag) }; });
afterEach(() => { g.document = saved; });

describe("elements", () => {
  it("builds a capacitance matrix with names as text and the exact values as data", () => {
    const m = [[1.25e-12, -3.3e-13], [-3.3e-13, 8e-13]];
    const t = matrixTable("Maxwell", m, ["ball", MARKUP], "sm-maxwell") as unknown as FakeElement;
    expect(t.id).toBe("sm-maxwell");
    expect(t.className).toBe("sm-matrix");
    expect(t.all("caption")[0].textContent).toBe("Maxwell");
    const ths = t.all("th").map((th) => th.textContent);
    expect(ths).toEqual([null, "ball", MARKUP, "ball", MARKUP]);
    expect(t.all("img")).toHaveLength(0);
    const tds = t.all("td");
    expect(tds.map((td) => td.textContent)).toEqual(["1.25 pF", "-330 fF", "-330 fF", "800 fF"]);
    expect(tds.map((td) => Number(td.dataset.value))).toEqual([1.25e-12, -3.3e-13, -3.3e-13, 8e-13]);
  });

  it("builds the summary tables from the report's conductors", () => {
    const report = { conductors: [{ name: "x", potential: 1, charge: 1e-12, peakField: null, fieldRatio: null, area: 1e-6, triangles: 2 }] };
    const [t, m] = summaryTables(report, [MARKUP], "mm", [8]) as unknown as FakeElement[];
    expect(t.id).toBe("sm-summary");
    expect(t.all("th").map((th) => th.textContent)).toEqual(SUMMARY_HEADS);
    expect(t.all("td").map((td) => td.textContent)).toEqual([MARKUP, "1.000 V", "1.00 pC", "—", "—"]);
    expect(m.id).toBe("sm-mesh");
    expect(m.all("th").map((th) => th.textContent)).toEqual(MESH_HEADS);
    expect(m.all("td").map((td) => td.textContent)).toEqual([MARKUP, "1.000 mm²", "2", "8"]);
    expect(m.all("td")[0].className).toBe("sm-name-cell");
  });

  it("lists the hot spots as buttons carrying field, conductor and panel, and reports a click by rank", () => {
    const v = viewer();
    const e = excitation("scene", [spot({ fieldRatio: 1.2, field: 3.6e6, panel: 1 }), spot({ conductor: 0, panel: 0 })]);
    const list = new FakeElement("ol"), note = new FakeElement("p");
    list.appendChild(new FakeElement("li")); // a previous excitation's entry, to be replaced
    const chosen: number[] = [];
    fillHotSpots(list as unknown as HTMLElement, note as unknown as HTMLElement, v, e, "mm", (i) => chosen.push(i));
    expect(note.textContent).toBe(hotSpotNote(e, 3e6));
    expect(list.children).toHaveLength(2);
    expect(list.children.map((li) => li.className)).toEqual(["sm-hot sm-exceeded", "sm-hot"]);
    const buttons = list.all("button");
    expect(buttons.map((b) => b.className)).toEqual(["sm-hot-button", "sm-hot-button"]);
    expect(buttons[0].textContent).toBe(hotSpotText(e.hotSpots[0], 1, v.names, "mm"));
    expect(buttons[0].dataset).toEqual({ field: "3600000", conductor: "1", panel: "1" });
    buttons[1].listeners.click[0]();
    expect(chosen).toEqual([1]);
    markSelectedSpot(list as unknown as HTMLElement, 1);
    expect(list.children.map((li) => li.classList.contains("sm-selected"))).toEqual([false, true]);
    markSelectedSpot(list as unknown as HTMLElement, 0);
    expect(list.children.map((li) => li.classList.contains("sm-selected"))).toEqual([true, false]);
  });

  it("shows a read-out as one line per element and records the panel", () => {
    const r = new FakeElement("div");
    r.textContent = "Point at a panel";
    r.replaceChildren();
    showReadout(r as unknown as HTMLElement, ["a", MARKUP], 7);
    expect(r.children.map((c) => c.textContent)).toEqual(["a", MARKUP]);
    expect(r.dataset.panel).toBe("7");
  });
});
