/**
 * The page's layout: header, the side panel (cautions first, display controls, conductor
 * list, view tools, hot spots, capacitance tables, conductor summary, warnings) and the
 * stage (canvas, colour bar, read-out, rendering note). Built once; main.ts wires the
 * controls to the state. Ids, classes and data attributes are what the browser tests and
 * the viewer bench look for.
 */
import { el, section, labelled, select, checkbox, slider } from "./dom.js";
import { LUT_SIZE } from "./colormap.js";
import type { PageData } from "./data.js";
import type { ClipState } from "./state.js";
import { axisOf, SURROUNDING_OPACITY } from "./state.js";
import {
  heading, subtitle, excitationLabel, accuracyNote, matrixTable, reportErrors, summaryTables, solvedPanels, messageList, mutualCaption,
  cautionGist, cautionSummary,
} from "./tables.js";
import type { LengthUnit } from "../../src/io/units.js";
import { formatLength, formatNumber } from "../../src/io/si.js";

export interface ColourBarElements {
  bar: HTMLDivElement;
  title: HTMLDivElement;
  gradient: HTMLCanvasElement;
  labels: HTMLDivElement;
}

export interface ConductorRow {
  visible: HTMLInputElement;
  opacity: HTMLInputElement;
}

/** A dielectric body's or the ground plane's row (`body` -1: the ground plane). */
export interface SurroundingRow extends ConductorRow {
  body: number;
}

export interface PageElements {
  stage: HTMLDivElement;
  quantity: HTMLSelectElement;
  scale: HTMLSelectElement;
  excitation: HTMLSelectElement;
  boundNote: HTMLParagraphElement;
  conductors: ConductorRow[];
  /** A row per dielectric body (data order), then the ground plane's when there is one. */
  surroundings: SurroundingRow[];
  edges: HTMLInputElement;
  clip: HTMLInputElement;
  clipAxis: HTMLSelectElement;
  clipPosition: HTMLInputElement;
  clipFlip: HTMLInputElement;
  fit: HTMLButtonElement;
  snapshot: HTMLButtonElement;
  hotNote: HTMLParagraphElement;
  hotList: HTMLOListElement;
  canvas: HTMLCanvasElement;
  colourBar: ColourBarElements;
  readout: HTMLDivElement;
  glNote: HTMLDivElement;
}

/** The length unit of the user's input, in which places and areas are shown. */
export function inputUnit(report: Record<string, any>): LengthUnit {
  return (report.input?.unit as LengthUnit) ?? "mm";
}

/** Replaces the content of `root` with the page and returns its live elements. */
export function buildPage(root: HTMLElement, data: PageData): PageElements {
  const { report, viewer: v } = data;
  const unit = inputUnit(report);
  const names = v.names;

  root.replaceChildren();
  root.classList.add("sm-app");
  const header = el("header", "sm-header");
  const h1 = el("h1", undefined, heading(report));
  h1.id = "sm-title";
  header.appendChild(h1);
  header.appendChild(el("p", "sm-sub", subtitle(report, v)));
  root.appendChild(header);
  const main = el("div", "sm-main");
  root.appendChild(main);
  const stage = el("div", "sm-stage");
  main.appendChild(stage);
  const side = el("aside", "sm-side");
  main.appendChild(side);

  // Cautions first, folded to a banner whose visible line defers to the standards, codes and
  // licensed practice; the full text is one click away (and in the page's text as it is).
  const cautions = (report.fieldCheck?.cautions as string[] | undefined) ?? [];
  if (cautions.length > 0) {
    const box = el("details", "sm-cautions");
    box.id = "sm-cautions";
    const summary = el("summary");
    summary.appendChild(el("strong", undefined, cautionSummary(cautions)));
    summary.appendChild(el("span", "sm-gist", cautionGist(cautions)));
    box.appendChild(summary);
    box.appendChild(messageList(cautions));
    side.appendChild(box);
  }

  // What an engineer opens the report for comes next, in view without scrolling: the hot
  // spots (the list scrolls within its own box) and the capacitance matrices.
  const hotSec = section(side, "Hot spots (strongest normal field)");
  const hotNote = el("p", "sm-note");
  hotSec.appendChild(hotNote);
  const hotList = el("ol", "sm-hotspots");
  hotList.id = "sm-hotspots";
  hotSec.appendChild(hotList);

  capacitanceSections(side, report, v, names);

  const display = section(side, "Display");
  const quantity = select([["field", "|E| normal field"], ["sigma", "σ surface charge density"]]);
  labelled(display, "Colour by", quantity);
  const scale = select([["linear", "linear"], ["log", "logarithmic"]]);
  labelled(display, "Scale", scale);
  const excitation = el("select");
  excitation.id = "sm-excitation";
  v.excitations.forEach((e, i) => {
    const o = el("option");
    o.value = String(i);
    o.textContent = excitationLabel(e, names);
    excitation.appendChild(o);
  });
  labelled(display, "Excitation", excitation);
  const boundNote = el("p", "sm-note");
  display.appendChild(boundNote);

  const condSec = section(side, "Conductors");
  const condList = el("div", "sm-conductors");
  condList.id = "sm-conductor-list";
  condSec.appendChild(condList);
  const conductors = names.map((n, c) => conductorRow(condList, n, c));
  const surroundings = surroundingRows(side, v, unit);

  const tools = section(side, "View");
  const edges = checkbox(false);
  edges.id = "sm-edges";
  labelled(tools, "Mesh edges", edges);
  const clip = checkbox(false);
  clip.id = "sm-clip";
  labelled(tools, "Clipping plane", clip);
  const clipAxis = select([["x", "normal x"], ["y", "normal y"], ["z", "normal z"]]);
  labelled(tools, "Plane", clipAxis);
  const clipPosition = slider(0, 1, 0.001, 0.5);
  labelled(tools, "Position", clipPosition);
  const clipFlip = checkbox(false);
  labelled(tools, "Keep other side", clipFlip);
  const buttons = el("div", "sm-buttons");
  const fit = el("button", undefined, "Fit to view");
  fit.id = "sm-fit";
  const snapshot = el("button", undefined, "Save PNG");
  snapshot.id = "sm-snapshot";
  buttons.append(fit, snapshot);
  tools.appendChild(buttons);

  const summarySec = section(side, "Conductor summary");
  for (const t of summaryTables(report, names, unit, solvedPanels(v))) summarySec.appendChild(t);
  const warnings = (report.warnings as string[] | undefined) ?? [];
  if (warnings.length > 0) {
    const w = section(side, "Warnings");
    w.appendChild(messageList(warnings));
  }

  // Stage: canvas, colour bar, read-out.
  const canvas = el("canvas", "sm-canvas");
  canvas.id = "sm-canvas";
  stage.appendChild(canvas);
  const bar = el("div", "sm-colourbar");
  bar.id = "sm-colourbar";
  const title = el("div", "sm-bar-title");
  const gradient = el("canvas", "sm-bar-gradient");
  gradient.width = 1; gradient.height = LUT_SIZE;
  const labels = el("div", "sm-bar-labels");
  bar.append(title, gradient, labels);
  stage.appendChild(bar);
  const readout = el("div", "sm-readout");
  readout.id = "sm-readout";
  readout.textContent = "Point at a panel for its values; click to pin.";
  stage.appendChild(readout);
  const glNote = el("div", "sm-glnote");
  glNote.id = "sm-glnote";
  stage.appendChild(glNote);

  return {
    stage, quantity, scale, excitation, boundNote, conductors, surroundings, edges, clip, clipAxis, clipPosition, clipFlip,
    fit, snapshot, hotNote, hotList, canvas, colourBar: { bar, title, gradient, labels }, readout, glNote,
  };
}

/** A conductor's row: visibility, name (as text), opacity. */
function conductorRow(list: HTMLElement, name: string, c: number): ConductorRow {
  const row = el("div", "sm-conductor");
  row.dataset.conductor = String(c);
  return visibilityRow(list, row, name, 1);
}

function visibilityRow(list: HTMLElement, row: HTMLElement, name: string, opacityValue: number): ConductorRow {
  const visible = checkbox(true);
  visible.className = "sm-visible";
  visible.title = "show or hide";
  const label = el("span", "sm-name", name);
  const opacity = slider(0.1, 1, 0.05, opacityValue);
  opacity.className = "sm-opacity";
  opacity.title = "opacity";
  row.append(visible, label, opacity);
  list.appendChild(row);
  return { visible, opacity };
}

/** Rows of the dielectric bodies and the ground plane (none: no section). */
function surroundingRows(side: HTMLElement, v: PageData["viewer"], unit: LengthUnit): SurroundingRow[] {
  const rows: SurroundingRow[] = [];
  const labels = surroundingLabels(v, unit);
  if (labels.length === 0) return rows;
  const sec = section(side, "Dielectrics and ground plane");
  const list = el("div", "sm-conductors");
  list.id = "sm-surroundings";
  sec.appendChild(list);
  for (const { body, text } of labels) {
    const row = el("div", "sm-conductor sm-body");
    row.dataset.body = body < 0 ? "ground" : String(body);
    rows.push({ body, ...visibilityRow(list, row, text, SURROUNDING_OPACITY) });
  }
  return rows;
}

/** "name (εr = 4.4)" per body, then "ground plane z = 0.000 mm". */
export function surroundingLabels(v: PageData["viewer"], unit: LengthUnit): Array<{ body: number; text: string }> {
  const out = (v.bodies?.names ?? []).map((n, i) => ({ body: i, text: `${n} (εr = ${formatNumber(v.bodies!.permittivity[i])})` }));
  if (v.groundPlane) out.push({ body: -1, text: `ground plane ${"xyz"[v.groundPlane.axis]} = ${formatLength(v.groundPlane.offset, unit)}` });
  return out;
}

/** Capacitance matrices and the accuracy note; each matrix scrolls sideways in its own box when wide. */
function capacitanceSections(side: HTMLElement, report: Record<string, any>, v: PageData["viewer"], names: string[]): void {
  const tables = section(side, "Capacitance");
  const maxwell = report.capacitance?.maxwell as number[][] | undefined;
  const mutual = report.capacitance?.mutual as number[][] | undefined;
  const boxed = (t: HTMLElement): HTMLElement => { const d = el("div", "sm-scroll"); d.appendChild(t); return d; };
  const errors = reportErrors(report);
  if (maxwell) tables.appendChild(boxed(matrixTable("Maxwell matrix (short-circuit capacitances)", maxwell, names, "sm-maxwell", errors?.maxwell)));
  if (mutual) tables.appendChild(boxed(matrixTable(mutualCaption(report, v), mutual, names, "sm-mutual", errors?.mutual)));
  const accuracy = accuracyNote(report);
  if (accuracy !== undefined) tables.appendChild(el("p", "sm-note", accuracy));
}

/** The clipping controls, read into the state. */
export function readClipControls(page: PageElements, clip: ClipState): void {
  clip.on = page.clip.checked;
  clip.axis = axisOf(page.clipAxis.value);
  clip.position = Number(page.clipPosition.value);
  clip.flip = page.clipFlip.checked;
}
