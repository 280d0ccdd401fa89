/**
 * What the side panel and the read-out say: the capacitance matrices, the conductor
 * summary, the hot-spot list and its note, the excitation names and a panel's values.
 * The content is built by plain functions (strings and numbers, tested without a browser in
 * tests/viewer/tables.test.ts); the DOM functions below only put it into elements, as text.
 */
import { el } from "./dom.js";
import type { Excitation, HotSpot, ViewerData } from "./data.js";
import { formatSI, formatPoint, formatNumber, formatArea, digitsFor, derivedErrors } from "../../src/io/si.js";
import type { LengthUnit } from "../../src/io/units.js";

// ---- Content ----

/** The page's heading: the scene's title when it has one. */
export function heading(report: Record<string, any>): string {
  const t = report.input?.title;
  return typeof t === "string" && t.trim() !== "" ? t : "sigmesh · surface charge and field";
}

/** The scene's parameters with the values used ("gap = 2, width = 0.5"), or "" when it has none. */
export function parameterText(report: Record<string, any>): string {
  const p = report.input?.parameters as Record<string, number> | undefined;
  return p ? Object.entries(p).map(([n, x]) => `${n} = ${String(x)}`).join(", ") : "";
}

/** The line under the title: input files, parameters, solved panels, conductors, date. */
export function subtitle(report: Record<string, any>, v: ViewerData): string {
  const k = v.names.length;
  const files = (report.input?.files as string[] | undefined) ?? [];
  const params = parameterText(report);
  return `${files.join(", ") || "extraction"}${params ? " · " + params : ""} · ${v.triangles.length / 3} solved panels · ${k} conductor${k === 1 ? "" : "s"}${report.created ? " · " + String(report.created) : ""}`;
}

/** What the two-terminal diagonal refers to: the data's own word, else the report's. */
export function referenceOf(report: Record<string, any>, v: ViewerData): "ground plane" | "infinity" {
  return v.reference ?? (report.capacitance?.reference === "ground plane" ? "ground plane" : "infinity");
}

/** The caption of the two-terminal table, naming its reference as the terminal summary does. */
export function mutualCaption(report: Record<string, any>, v: ViewerData): string {
  const odd = ((report.model?.symmetry as Array<{ images?: string }> | undefined) ?? []).some((p) => p.images === "odd");
  const ref = referenceOf(report, v) === "ground plane" ? "the ground plane"
    : odd ? "infinity and the odd symmetry plane (0 V)" : "the reference at infinity (no ground plane)";
  return `Two-terminal capacitances (circuit values); diagonal: to ${ref}`;
}

/**
 * The line shown of the folded cautions. Whenever the report defers to standards, local codes
 * and licensed practice (it always does: cautions.ts), that deference stays in view.
 */
export function cautionGist(cautions: string[]): string {
  if (cautions.some((c) => /standards/i.test(c))) return "Estimates, not measurements; follow the applicable standards, local codes and licensed practice.";
  const m = /^.*?\.(?=\s|$)/.exec(cautions[0] ?? "");
  return m ? m[0] : cautions[0] ?? "";
}

/** The folded banner's own words: how many cautions, and that they open. */
export function cautionSummary(cautions: string[]): string {
  return `Cautions (${cautions.length}, click to read):`;
}

/** The excitation's name in the drop-down: the working potentials, or which conductor is at 1 V. */
export function excitationLabel(e: Excitation, names: string[]): string {
  if (e.id === "scene") return "Working potentials (" + e.potentials.map((p, j) => `${names[j]} ${formatNumber(p)} V`).join(", ") + ")";
  const j = Number(e.id.slice(5));
  return `${names[j]} at 1 V, others 0 V`;
}

export function accuracyNote(report: Record<string, any>): string | undefined {
  if (report.accuracy?.relativeError === undefined) return undefined;
  const note = `Estimated relative error of the matrix (Richardson): ${formatNumber(report.accuracy.relativeError, 2)}`;
  const a = report.accuracy.adaptive;
  if (!a) return note;
  const panels = (report.accuracy.levels as Array<{ panels: number }>).map((l) => l.panels).join(" → ");
  return `${note}. Requested ${formatNumber(100 * a.requested, 2)} % on every diagonal entry and every coupling above ${formatNumber(100 * a.couplingThreshold, 2)} % of its row's diagonal: ${a.reached ? "reached" : "NOT reached"}; ${a.marking === "dorfler" ? "adaptive" : "uniform"} refinement over ${panels} panels.`;
}

/**
 * A capacitance-matrix cell: its text, and the exact value kept beside it (a data attribute).
 * Digits as the terminal summary prints them: as many as the entry's error estimate supports
 * (`digitsFor`), three without one.
 */
export function capacitanceCell(x: number, error?: number): { text: string; value: string } {
  return { text: formatSI(x, "F", digitsFor(x, error)), value: String(x) };
}

/** The error estimates of the report's matrices and charges (`derivedErrors`); undefined without an estimate. */
export function reportErrors(report: Record<string, any>): { maxwell: number[][]; mutual: number[][]; charge: number[] } | undefined {
  const e = report.accuracy?.errorEstimate as number[][] | undefined;
  if (!Array.isArray(e)) return undefined;
  return derivedErrors(e, ((report.conductors as any[] | undefined) ?? []).map((c) => Number(c.potential)));
}

/** The conductor summary's two tables: charge and field, then the mesh (narrow enough for the side panel each). */
export const SUMMARY_HEADS = ["conductor", "potential", "charge", "peak |E|", "of breakdown"];
export const MESH_HEADS = ["conductor", "area", "input triangles", "solved panels"];

/** Rows of the conductor summary, one per conductor of the report, as cell texts. */
export function summaryRows(report: Record<string, any>, names: string[]): string[][] {
  const rows = (report.conductors as any[] | undefined) ?? [];
  const errors = reportErrors(report);
  return rows.map((c, i) => [
    names[i] ?? String(c.name),
    formatSI(c.potential, "V"),
    formatSI(c.charge, "C", digitsFor(c.charge, errors?.charge[i])),
    c.peakField === null ? "—" : formatSI(c.peakField, "V/m"),
    c.fieldRatio === null ? "—" : `${formatNumber(100 * c.fieldRatio, 3)} %`,
  ]);
}

/** Solved panels per conductor (the finest mesh the page draws). */
export function solvedPanels(v: ViewerData): number[] {
  const n = new Array<number>(v.names.length).fill(0);
  for (let p = 0; p < v.panelConductor.length; p++) n[v.panelConductor[p]]++;
  return n;
}

/** Rows of the mesh table: area, the triangles read from the input, the panels solved (after refinement). */
export function meshRows(report: Record<string, any>, names: string[], unit: LengthUnit, solved: number[]): string[][] {
  const rows = (report.conductors as any[] | undefined) ?? [];
  return rows.map((c, i) => [names[i] ?? String(c.name), formatArea(c.area, unit), String(c.triangles), solved[i] === undefined ? "—" : String(solved[i])]);
}

/** One hot spot in the list: rank, conductor, field, share of breakdown, margin and place. */
export function hotSpotText(h: HotSpot, rank: number, names: string[], unit: LengthUnit): string {
  // At a sharp edge the value grows as the mesh is refined: no margin to breakdown is given.
  if (h.sharpEdge) return `${rank}. ${names[h.conductor]} — ${formatSI(h.field, "V/m")} — sharp edge: grows with refinement, model the real radius — at ${formatPoint(h.at, unit)}`;
  const margin = h.fieldRatio > 0 ? formatNumber(1 / h.fieldRatio, 3) : "inf";
  return `${rank}. ${names[h.conductor]} — ${formatSI(h.field, "V/m")} — ${formatNumber(100 * h.fieldRatio, 3)} % of breakdown (margin ×${margin}) — at ${formatPoint(h.at, unit)}`;
}

/** A hot spot at or above the breakdown strength is marked, unless at a sharp edge (no verdict there). */
export function hotSpotClass(h: HotSpot): string {
  return h.fieldRatio >= 1 && !h.sharpEdge ? "sm-hot sm-exceeded" : "sm-hot";
}

export function hotSpotNote(e: Excitation, breakdownField: number): string {
  return `Breakdown strength used: ${formatSI(breakdownField, "V/m")}. Margin is breakdown strength over field; below ×1 breakdown is expected.` +
    (e.id === "scene" ? "" : " Unit excitation (1 V): scale fields by the working voltage.");
}

/** The note under the display controls when the excitation's sheet fields are bounds. */
export function sheetBoundNote(e: Excitation): string {
  return e.sheetFieldBound ? "On open sheets this excitation's |E| is the upper bound |σ|/ε (the model was too large for the exact two-sided field)." : "";
}

/** Centroid of panel `p` in the model's own frame (the positions are stored relative to `origin`). */
export function panelCentroid(v: ViewerData, p: number): number[] {
  const a = v.triangles[3 * p], b = v.triangles[3 * p + 1], d = v.triangles[3 * p + 2];
  const P = v.positions;
  return [0, 1, 2].map((i) => (P[3 * a + i] + P[3 * b + i] + P[3 * d + i]) / 3 + v.origin[i]);
}

/** The read-out of panel `p` under excitation `e`, one line each. */
export function readoutLines(v: ViewerData, e: Excitation, p: number, pin: boolean, unit: LengthUnit): string[] {
  const c = v.panelConductor[p];
  const at = panelCentroid(v, p);
  return [
    `${v.names[c]} · panel ${p}${pin ? " (pinned; click empty space to release)" : ""}`,
    `σ = ${formatSI(e.sigma[p], "C/m²")}`,
    `|E| = ${formatSI(e.field[p], "V/m")} (${formatNumber((100 * e.field[p]) / v.breakdownField, 3)} % of breakdown)`,
    `centroid ${formatPoint(at, unit)}`,
    `area ${formatArea(v.areas[p], unit)}`,
  ];
}

// ---- Elements ----

export function matrixTable(caption: string, m: number[][], names: string[], id: string, errors?: number[][]): HTMLTableElement {
  const t = el("table", "sm-matrix");
  t.id = id;
  t.appendChild(el("caption", undefined, caption));
  const head = el("tr");
  head.appendChild(el("th"));
  for (const n of names) head.appendChild(el("th", undefined, n));
  t.appendChild(head);
  m.forEach((row, i) => {
    const tr = el("tr");
    tr.appendChild(el("th", undefined, names[i]));
    row.forEach((x, j) => { const cell = capacitanceCell(x, errors?.[i]?.[j]); const td = el("td", undefined, cell.text); td.dataset.value = cell.value; tr.appendChild(td); });
    t.appendChild(tr);
  });
  return t;
}

/** A table of text rows under `heads`; the first column holds names (they may wrap anywhere). */
function textTable(id: string, heads: string[], rows: string[][]): HTMLTableElement {
  const t = el("table", "sm-summary");
  t.id = id;
  const head = el("tr");
  for (const h of heads) head.appendChild(el("th", undefined, h));
  t.appendChild(head);
  for (const cells of rows) {
    const tr = el("tr");
    cells.forEach((x, i) => tr.appendChild(el("td", i === 0 ? "sm-name-cell" : undefined, x)));
    t.appendChild(tr);
  }
  return t;
}

/** The conductor summary: charge and field (`sm-summary`), then area, input triangles and solved panels (`sm-mesh`). */
export function summaryTables(report: Record<string, any>, names: string[], unit: LengthUnit, solved: number[]): HTMLTableElement[] {
  return [
    textTable("sm-summary", SUMMARY_HEADS, summaryRows(report, names)),
    textTable("sm-mesh", MESH_HEADS, meshRows(report, names, unit, solved)),
  ];
}

/** A bulleted list of messages (cautions, warnings). */
export function messageList(messages: string[]): HTMLUListElement {
  const ul = el("ul");
  for (const m of messages) ul.appendChild(el("li", undefined, m));
  return ul;
}

/** The hot spots of an excitation as buttons; `onSelect(i)` on a click of the i-th. */
export function fillHotSpots(list: HTMLElement, note: HTMLElement, v: ViewerData, e: Excitation, unit: LengthUnit, onSelect: (i: number) => void): void {
  list.replaceChildren();
  note.textContent = hotSpotNote(e, v.breakdownField);
  e.hotSpots.forEach((h, i) => {
    const li = el("li", hotSpotClass(h));
    const b = el("button", "sm-hot-button", hotSpotText(h, i + 1, v.names, unit));
    b.dataset.field = String(h.field);
    b.dataset.conductor = String(h.conductor);
    b.dataset.panel = String(h.panel);
    b.addEventListener("click", () => onSelect(i));
    li.appendChild(b);
    list.appendChild(li);
  });
}

export function markSelectedSpot(list: HTMLElement, i: number): void {
  for (const li of list.children) li.classList.remove("sm-selected");
  list.children[i]?.classList.add("sm-selected");
}

export function showReadout(readout: HTMLElement, lines: string[], p: number): void {
  readout.replaceChildren();
  for (const t of lines) readout.appendChild(el("div", undefined, t));
  readout.dataset.panel = String(p);
}
