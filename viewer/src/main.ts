/**
 * The sigmesh viewer page: conductor surfaces coloured per panel by σ or |E|, hot spots,
 * panel read-out, visibility, opacity, edges, a clipping plane, snapshot, and the
 * capacitance tables. Everything a user file names is written with textContent.
 *
 * One BufferGeometry per conductor, three vertices per panel (so colours are per panel),
 * positions and sRGB colour bytes only (normals and edges come from the shader, see
 * panel-material.ts). Redrawn on demand, not every frame. On a large model a coarse proxy
 * of each conductor (proxy.ts) is drawn while the camera moves and the full mesh as soon as
 * it rests, so software WebGL stays interactive; picking always uses the full mesh.
 */
import * as THREE from "three";
import { OrbitControls } from "three/examples/jsm/controls/OrbitControls.js";
import { readPageData, type PageData, type Excitation, type HotSpot } from "./data.js";
import { coolWarmTable, viridisTable, LUT_SIZE } from "./colormap.js";
import { clusterProxy, proxyPlan } from "./proxy.js";
import { panelMaterial, type PanelMaterial } from "./panel-material.js";
import { formatSI, formatPoint, formatNumber, formatArea } from "../../src/io/si.js";
import type { LengthUnit } from "../../src/io/units.js";
import "./style.css";

type Quantity = "field" | "sigma";
type Scale = "linear" | "log";

/** Decades shown below the top of a log scale at most. */
const LOG_DECADES = 6;
const MARKER_COLOUR = 0xff00ff;
/** Above this many panels the view draws proxies while it moves (a frame's cost is mostly per triangle in software WebGL). */
const PROXY_ABOVE_PANELS = 60000;
/** The same with a GPU, which draws a few hundred thousand triangles far within a frame. */
const PROXY_ABOVE_PANELS_GPU = 2000000;
/** Triangles of all proxies together, about. */
const PROXY_TRIANGLES = 30000;
/** The full mesh is drawn once the view has not moved for this long; ms. */
const SETTLE_MS = 160;
/** The same while a drag goes on (the button still held: more motion is likely); ms. */
const SETTLE_HELD_MS = 400;
/** Pixels drawn at most per frame while the view moves under software rendering (fill is the rest of a frame's cost). */
const MOVING_PIXELS = 700000;

function el<K extends keyof HTMLElementTagNameMap>(tag: K, cls?: string, text?: string): HTMLElementTagNameMap[K] {
  const e = document.createElement(tag);
  if (cls) e.className = cls;
  if (text !== undefined) e.textContent = text;
  return e;
}

function section(parent: HTMLElement, title: string): HTMLElement {
  const s = el("section", "sm-section");
  s.appendChild(el("h2", undefined, title));
  parent.appendChild(s);
  return s;
}

function labelled(parent: HTMLElement, text: string, control: HTMLElement): HTMLLabelElement {
  const l = el("label", "sm-row");
  l.appendChild(el("span", undefined, text));
  l.appendChild(control);
  parent.appendChild(l);
  return l;
}

function select(options: Array<[string, string]>): HTMLSelectElement {
  const s = el("select");
  for (const [value, text] of options) {
    const o = el("option", undefined, text);
    o.value = value;
    s.appendChild(o);
  }
  return s;
}

function checkbox(checked: boolean): HTMLInputElement {
  const c = el("input");
  c.type = "checkbox";
  c.checked = checked;
  return c;
}

function slider(min: number, max: number, step: number, value: number): HTMLInputElement {
  const s = el("input");
  s.type = "range";
  s.min = String(min); s.max = String(max); s.step = String(step); s.value = String(value);
  return s;
}

/** The value → [0, 1] mapping of the colour bar. */
interface ColourScale {
  quantity: Quantity;
  scale: Scale;
  /** Bottom and top of the bar in SI units (for σ log: ±top with |σ| < floor at the centre). */
  lo: number;
  hi: number;
  floor: number;
  map(v: number): number;
}

function colourScale(e: Excitation, quantity: Quantity, scale: Scale): ColourScale {
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

interface ConductorView {
  index: number;
  panels: Uint32Array;
  mesh: any;
  /** RGBA bytes per vertex, sRGB (the shader turns them into linear light), as one word each. */
  colours: Uint32Array;
  material: any;
  edgeSwitch: PanelMaterial["edges"];
  /** Coarse stand-in drawn while the view moves (null: the full mesh is drawn then too). */
  proxy: any | null;
  /** Index into `panels` of the panel each proxy triangle stands for. */
  proxySource: Uint32Array | null;
  proxyColours: Uint32Array | null;
  proxyMaterial: any | null;
  visible: boolean;
  opacity: number;
}

function start(root: HTMLElement, data: PageData): void {
  const { report, viewer: v } = data;
  const unit: LengthUnit = (report.input?.unit as LengthUnit) ?? "mm";
  const names = v.names;
  const k = names.length;
  const state = { excitation: 0, quantity: "field" as Quantity, scale: "linear" as Scale, edges: false, selectedSpot: -1 };

  root.replaceChildren();
  root.classList.add("sm-app");
  const header = el("header", "sm-header");
  header.appendChild(el("h1", undefined, "sigmesh · surface charge and field"));
  const files = (report.input?.files as string[] | undefined) ?? [];
  header.appendChild(el("p", "sm-sub", `${files.join(", ") || "extraction"} · ${v.triangles.length / 3} panels · ${k} conductor${k === 1 ? "" : "s"}${report.created ? " · " + String(report.created) : ""}`));
  root.appendChild(header);
  const main = el("div", "sm-main");
  root.appendChild(main);
  const stage = el("div", "sm-stage");
  main.appendChild(stage);
  const side = el("aside", "sm-side");
  main.appendChild(side);

  // ---- Cautions first: they must not be missed ----
  const cautions = (report.fieldCheck?.cautions as string[] | undefined) ?? [];
  if (cautions.length > 0) {
    const box = el("div", "sm-cautions");
    box.id = "sm-cautions";
    box.appendChild(el("h2", undefined, "Cautions"));
    const ul = el("ul");
    for (const c of cautions) ul.appendChild(el("li", undefined, c));
    box.appendChild(ul);
    side.appendChild(box);
  }

  // ---- Controls ----
  const display = section(side, "Display");
  const quantitySel = select([["field", "|E| normal field"], ["sigma", "σ surface charge density"]]);
  labelled(display, "Colour by", quantitySel);
  const scaleSel = select([["linear", "linear"], ["log", "logarithmic"]]);
  labelled(display, "Scale", scaleSel);
  const excSel = el("select");
  excSel.id = "sm-excitation";
  v.excitations.forEach((e, i) => {
    const o = el("option");
    o.value = String(i);
    if (e.id === "scene") o.textContent = "Working potentials (" + e.potentials.map((p, j) => `${names[j]} ${formatNumber(p)} V`).join(", ") + ")";
    else { const j = Number(e.id.slice(5)); o.textContent = `${names[j]} at 1 V, others 0 V`; }
    excSel.appendChild(o);
  });
  labelled(display, "Excitation", excSel);
  const boundNote = el("p", "sm-note");
  display.appendChild(boundNote);

  const condSec = section(side, "Conductors");
  const condList = el("div", "sm-conductors");
  condList.id = "sm-conductor-list";
  condSec.appendChild(condList);

  const tools = section(side, "View");
  const edgesBox = checkbox(false);
  edgesBox.id = "sm-edges";
  labelled(tools, "Mesh edges", edgesBox);
  const clipBox = checkbox(false);
  clipBox.id = "sm-clip";
  labelled(tools, "Clipping plane", clipBox);
  const clipAxis = select([["x", "normal x"], ["y", "normal y"], ["z", "normal z"]]);
  labelled(tools, "Plane", clipAxis);
  const clipPos = slider(0, 1, 0.001, 0.5);
  labelled(tools, "Position", clipPos);
  const clipFlip = checkbox(false);
  labelled(tools, "Keep other side", clipFlip);
  const buttons = el("div", "sm-buttons");
  const fitBtn = el("button", undefined, "Fit to view");
  fitBtn.id = "sm-fit";
  const shotBtn = el("button", undefined, "Save PNG");
  shotBtn.id = "sm-snapshot";
  buttons.append(fitBtn, shotBtn);
  tools.appendChild(buttons);

  const hotSec = section(side, "Hot spots (strongest normal field)");
  const hotNote = el("p", "sm-note");
  hotSec.appendChild(hotNote);
  const hotList = el("ol", "sm-hotspots");
  hotList.id = "sm-hotspots";
  hotSec.appendChild(hotList);

  const tables = section(side, "Capacitance");
  const maxwell = report.capacitance?.maxwell as number[][] | undefined;
  const mutual = report.capacitance?.mutual as number[][] | undefined;
  if (maxwell) tables.appendChild(matrixTable("Maxwell matrix (short-circuit capacitances)", maxwell, names, "sm-maxwell"));
  if (mutual) tables.appendChild(matrixTable("Mutual capacitances (two-terminal, to circuit nodes; diagonal: to infinity)", mutual, names, "sm-mutual"));
  if (report.accuracy?.relativeError !== undefined) tables.appendChild(el("p", "sm-note", `Estimated relative error of the matrix (Richardson): ${formatNumber(report.accuracy.relativeError, 2)}`));
  const summarySec = section(side, "Conductor summary");
  summarySec.appendChild(summaryTable(report, names, unit));
  const warnings = (report.warnings as string[] | undefined) ?? [];
  if (warnings.length > 0) {
    const w = section(side, "Warnings");
    const ul = el("ul");
    for (const t of warnings) ul.appendChild(el("li", undefined, t));
    w.appendChild(ul);
  }

  // ---- Stage: canvas, colour bar, read-out ----
  const canvas = el("canvas", "sm-canvas");
  canvas.id = "sm-canvas";
  stage.appendChild(canvas);
  const bar = el("div", "sm-colourbar");
  bar.id = "sm-colourbar";
  const barTitle = el("div", "sm-bar-title");
  const barCanvas = el("canvas", "sm-bar-gradient");
  barCanvas.width = 1; barCanvas.height = LUT_SIZE;
  const barLabels = el("div", "sm-bar-labels");
  bar.append(barTitle, barCanvas, barLabels);
  stage.appendChild(bar);
  const readout = el("div", "sm-readout");
  readout.id = "sm-readout";
  readout.textContent = "Point at a panel for its values; click to pin.";
  stage.appendChild(readout);
  const glNote = el("div", "sm-glnote");
  glNote.id = "sm-glnote";
  stage.appendChild(glNote);

  const coolWarm = coolWarmTable(), viridis = viridisTable();
  // The tables as RGBA words in memory order (bytes r, g, b, 255), to fill vertex colours a word at a time.
  const words = (t: Uint8Array): Uint32Array => {
    const out = new Uint32Array(LUT_SIZE);
    new Uint8Array(out.buffer).set(Uint8Array.from({ length: 4 * LUT_SIZE }, (_, j) => (j % 4 === 3 ? 255 : t[3 * (j >> 2) + (j % 4)])));
    return out;
  };
  const coolWarmWords = words(coolWarm), viridisWords = words(viridis);

  // ---- Conductor list (visibility, opacity) ----
  const views: ConductorView[] = [];
  const counts = new Uint32Array(k);
  for (let p = 0; p < v.panelConductor.length; p++) counts[v.panelConductor[p]]++;
  const panelLists = Array.from({ length: k }, (_, c) => new Uint32Array(counts[c]));
  const fill = new Uint32Array(k);
  for (let p = 0; p < v.panelConductor.length; p++) { const c = v.panelConductor[p]; panelLists[c][fill[c]++] = p; }
  const localIndex = new Uint32Array(v.panelConductor.length);
  for (let c = 0; c < k; c++) panelLists[c].forEach((p, i) => { localIndex[p] = i; });

  let renderer: any = null;
  let software = false;
  let requestRender = (): void => {};

  for (let c = 0; c < k; c++) {
    const row = el("div", "sm-conductor");
    row.dataset.conductor = String(c);
    const vis = checkbox(true);
    vis.className = "sm-visible";
    vis.title = "show or hide";
    const name = el("span", "sm-name", names[c]);
    const op = slider(0.1, 1, 0.05, 1);
    op.className = "sm-opacity";
    op.title = "opacity";
    row.append(vis, name, op);
    condList.appendChild(row);
    vis.addEventListener("change", () => { const cv = views[c]; if (cv) { cv.visible = vis.checked; applyVisibility(cv); requestRender(); } });
    op.addEventListener("input", () => { const cv = views[c]; if (cv) { cv.opacity = Number(op.value); applyVisibility(cv); requestRender(); } });
  }

  function applyVisibility(cv: ConductorView): void {
    for (const m of [cv.material, cv.proxyMaterial]) {
      if (!m) continue;
      m.opacity = cv.opacity;
      m.transparent = cv.opacity < 1;
      m.depthWrite = cv.opacity >= 1;
      m.side = faceSide(cv.index, cv.opacity);
      m.needsUpdate = true;
    }
    applyDetail(cv);
  }

  /** Full mesh or proxy, by whether the view is moving. */
  function applyDetail(cv: ConductorView): void {
    const coarse = moving && cv.proxy !== null;
    cv.mesh.visible = cv.visible && !coarse;
    if (cv.proxy) cv.proxy.visible = cv.visible && coarse;
  }

  // ---- Colour bar and hot spots ----
  let scaleNow = colourScale(v.excitations[0], "field", "linear");

  function drawBar(): void {
    const lut = state.quantity === "field" ? viridis : coolWarm;
    const ctx = barCanvas.getContext("2d");
    if (ctx) {
      const img = ctx.createImageData(1, LUT_SIZE);
      for (let i = 0; i < LUT_SIZE; i++) {
        const src = 3 * (LUT_SIZE - 1 - i);
        img.data[4 * i] = lut[src]; img.data[4 * i + 1] = lut[src + 1]; img.data[4 * i + 2] = lut[src + 2]; img.data[4 * i + 3] = 255;
      }
      ctx.putImageData(img, 0, 0);
    }
    const s = scaleNow;
    const unitName = s.quantity === "field" ? "V/m" : "C/m²";
    barTitle.textContent = s.quantity === "field" ? `|E| (${s.scale})` : `σ (${s.scale}, signed)`;
    bar.dataset.quantity = s.quantity;
    bar.dataset.scale = s.scale;
    bar.dataset.min = String(s.lo);
    bar.dataset.max = String(s.hi);
    const ticks: Array<[number, string, string]> = [];
    ticks.push([0, formatSI(s.hi, unitName), "max"]);
    if (s.quantity === "sigma" && s.scale === "log") {
      ticks.push([0.25, formatSI(s.floor, unitName), "floor"]);
      ticks.push([0.5, `|σ| < ${formatSI(s.floor, unitName)}`, "mid"]);
      ticks.push([0.75, formatSI(-s.floor, unitName), "-floor"]);
    } else if (s.quantity === "sigma") ticks.push([0.5, formatSI(0, unitName), "mid"]);
    else if (s.scale === "log") ticks.push([0.5, formatSI(Math.sqrt(s.lo * s.hi), unitName), "mid"]);
    else ticks.push([0.5, formatSI((s.lo + s.hi) / 2, unitName), "mid"]);
    ticks.push([1, formatSI(s.lo, unitName), "min"]);
    barLabels.replaceChildren();
    for (const [at, text, role] of ticks) {
      const t = el("span", "sm-tick", text);
      t.style.top = `${at * 100}%`;
      t.dataset.role = role;
      barLabels.appendChild(t);
    }
  }

  function describeSpot(h: HotSpot, rank: number): string {
    const margin = h.fieldRatio > 0 ? formatNumber(1 / h.fieldRatio, 3) : "inf";
    return `${rank}. ${names[h.conductor]} — ${formatSI(h.field, "V/m")} — ${formatNumber(100 * h.fieldRatio, 3)} % of breakdown (margin ×${margin}) — at ${formatPoint(h.at, unit)}`;
  }

  function fillHotSpots(): void {
    const e = v.excitations[state.excitation];
    hotList.replaceChildren();
    hotNote.textContent = `Breakdown strength used: ${formatSI(v.breakdownField, "V/m")}. Margin is breakdown strength over field; below ×1 breakdown is expected.` +
      (e.id === "scene" ? "" : " Unit excitation (1 V): scale fields by the working voltage.");
    e.hotSpots.forEach((h, i) => {
      const li = el("li", h.fieldRatio >= 1 ? "sm-hot sm-exceeded" : "sm-hot");
      const b = el("button", "sm-hot-button", describeSpot(h, i + 1));
      b.dataset.field = String(h.field);
      b.dataset.conductor = String(h.conductor);
      b.dataset.panel = String(h.panel);
      b.addEventListener("click", () => flyTo(i));
      li.appendChild(b);
      hotList.appendChild(li);
    });
  }

  boundNote.textContent = "";
  function updateNotes(): void {
    const e = v.excitations[state.excitation];
    boundNote.textContent = e.sheetFieldBound ? "On open sheets this excitation's |E| is the upper bound |σ|/ε (the model was too large for the exact two-sided field)." : "";
  }

  // ---- 3D ----
  const scene = new THREE.Scene();
  scene.background = new THREE.Color(0xf4f1ea);
  const camera = new THREE.PerspectiveCamera(40, 1, 1e-3, 1e3);
  camera.up.set(0, 0, 1);
  const box = new THREE.Box3();
  box.setFromArray(v.positions);
  const sphere = new THREE.Sphere();
  box.getBoundingSphere(sphere);
  const radius = sphere.radius > 0 ? sphere.radius : 1;
  camera.near = radius * 1e-3; camera.far = radius * 100;

  const clipPlane = new THREE.Plane(new THREE.Vector3(1, 0, 0), 0);
  const markers = new THREE.Group();
  scene.add(markers);
  // Lambert in three.js divides by π: these give the map's own colour face-on and 60 % of it edge-on.
  scene.add(new THREE.AmbientLight(0xffffff, 0.6 * Math.PI));
  const headlight = new THREE.DirectionalLight(0xffffff, 0.4 * Math.PI);
  camera.add(headlight);
  headlight.position.set(0.3, 0.5, 1);
  scene.add(camera);

  try {
    const probe = document.createElement("canvas");
    const gl = (probe.getContext("webgl2") || probe.getContext("webgl")) as WebGLRenderingContext | null;
    if (!gl) throw new Error("no WebGL context");
    const info = gl.getExtension("WEBGL_debug_renderer_info");
    const name = info ? String(gl.getParameter(info.UNMASKED_RENDERER_WEBGL)) : "";
    software = /swiftshader|llvmpipe|software/i.test(name);
    // Multisampling on the CPU costs about 3x per frame at 300k panels (tests/bench/viewer.bench.mjs).
    renderer = new THREE.WebGLRenderer({ canvas, antialias: !software, preserveDrawingBuffer: true });
    if (software) {
      glNote.textContent = "Software rendering (no GPU acceleration): large models may respond slowly.";
      glNote.dataset.kind = "software";
    }
  } catch {
    renderer = null;
    glNote.textContent = "WebGL is not available in this browser, so the 3D view cannot be drawn. Every number is still in the tables and the hot-spot list.";
    glNote.dataset.kind = "missing";
    glNote.classList.add("sm-glmissing");
    root.dataset.webgl = "missing";
  }

  // The back faces of a closed conductor (extract winds every closed surface outward) lie behind
  // its front faces; skipping them takes a third off a software-rendered frame. They are drawn
  // wherever they can show: past the clipping plane, through a translucent surface, and on a part
  // cut open at a symmetry plane (closed only in the full model).
  const symmetric = ((report.model?.symmetry as unknown[] | undefined)?.length ?? 0) > 0;
  function faceSide(c: number, opacity: number): number {
    return v.closed[c] && !symmetric && !clipBox.checked && opacity >= 1 ? THREE.FrontSide : THREE.DoubleSide;
  }

  for (let c = 0; c < k; c++) {
    const list = panelLists[c];
    const pos = new Float32Array(9 * list.length);
    for (let i = 0; i < list.length; i++) {
      const p = list[i];
      for (let j = 0; j < 3; j++) {
        const vtx = v.triangles[3 * p + j];
        pos[9 * i + 3 * j] = v.positions[3 * vtx]; pos[9 * i + 3 * j + 1] = v.positions[3 * vtx + 1]; pos[9 * i + 3 * j + 2] = v.positions[3 * vtx + 2];
      }
    }
    const geometry = new THREE.BufferGeometry();
    geometry.setAttribute("position", new THREE.BufferAttribute(pos, 3));
    // Four bytes per vertex: a 3-byte stride is not a native vertex format for Vulkan, and
    // ANGLE would convert the buffer on the CPU at every upload.
    const colours = new Uint32Array(3 * list.length);
    geometry.setAttribute("color", new THREE.BufferAttribute(new Uint8Array(colours.buffer), 4, true));
    geometry.computeBoundingSphere();
    const { material, edges: edgeSwitch } = panelMaterial(faceSide(c, 1));
    const mesh = new THREE.Mesh(geometry, material);
    mesh.userData.conductor = c;
    scene.add(mesh);
    views.push({ index: c, panels: list, mesh, colours, material, edgeSwitch, proxy: null, proxySource: null, proxyColours: null, proxyMaterial: null, visible: true, opacity: 1 });
  }

  // ---- Proxies for a moving view (built once, after the first frame) ----
  const useProxies = v.panelConductor.length > (software ? PROXY_ABOVE_PANELS : PROXY_ABOVE_PANELS_GPU);
  let proxiesBuilt = false;
  function buildProxies(): void {
    if (proxiesBuilt || !useProxies) return;
    proxiesBuilt = true;
    const t0 = performance.now();
    const areas = new Float64Array(k), extents = new Float64Array(k);
    for (let p = 0; p < v.areas.length; p++) areas[v.panelConductor[p]] += v.areas[p];
    for (const cv of views) {
      const b = cv.mesh.geometry.boundingSphere;
      extents[cv.index] = b ? 2 * b.radius : 0;
    }
    const plan = proxyPlan(counts, areas, extents, PROXY_TRIANGLES);
    let drawn = 0;
    for (const cv of views) {
      const cell = plan.cells[cv.index];
      if (!(cell > 0)) { drawn += cv.panels.length; continue; }
      const px = clusterProxy(v.positions, v.triangles, cv.panels, cell, [box.min.x, box.min.y, box.min.z]);
      const nt = px.source.length;
      const pos = new Float32Array(9 * nt);
      for (let i = 0; i < 3 * nt; i++) {
        const q = px.triangles[i];
        pos[3 * i] = px.positions[3 * q]; pos[3 * i + 1] = px.positions[3 * q + 1]; pos[3 * i + 2] = px.positions[3 * q + 2];
      }
      const g = new THREE.BufferGeometry();
      g.setAttribute("position", new THREE.BufferAttribute(pos, 3));
      cv.proxyColours = new Uint32Array(3 * nt);
      g.setAttribute("color", new THREE.BufferAttribute(new Uint8Array(cv.proxyColours.buffer), 4, true));
      g.computeBoundingSphere();
      cv.proxyMaterial = panelMaterial(cv.material.side).material;
      cv.proxyMaterial.clippingPlanes = cv.material.clippingPlanes;
      cv.proxy = new THREE.Mesh(g, cv.proxyMaterial);
      cv.proxy.visible = false;
      cv.proxySource = px.source;
      scene.add(cv.proxy);
      applyVisibility(cv);
      colourProxy(cv);
      drawn += nt;
    }
    root.dataset.proxyPanels = String(drawn);
    root.dataset.proxyMs = (performance.now() - t0).toFixed(0);
  }

  function colourProxy(cv: ConductorView): void {
    if (!cv.proxy || !cv.proxySource || !cv.proxyColours) return;
    const src = cv.proxySource, from = cv.colours, to = cv.proxyColours;
    for (let i = 0; i < src.length; i++) {
      const w = from[3 * src[i]];
      to[3 * i] = w; to[3 * i + 1] = w; to[3 * i + 2] = w;
    }
    cv.proxy.geometry.attributes.color.needsUpdate = true;
  }

  // The view is "moving" from a user's drag, wheel or key (or a flight to a hot spot) until it
  // has rested for SETTLE_MS; meanwhile proxies are drawn.
  let moving = false;
  let interacting = false;
  let settleTimer = 0;
  let drewCoarse = false;
  function motion(): void {
    if (!useProxies) return;
    buildProxies();
    if (!moving) {
      moving = true;
      for (const cv of views) applyDetail(cv);
      if (software) sizeBuffer();
    }
    clearTimeout(settleTimer);
    settleTimer = window.setTimeout(settle, interacting ? SETTLE_HELD_MS : SETTLE_MS);
  }
  function settle(): void {
    if (!moving) return;
    moving = false;
    for (const cv of views) applyDetail(cv);
    // Resizing the drawing buffer clears it: draw at once, so no blank canvas is ever shown.
    if (software) { sizeBuffer(); render(); }
    else if (drewCoarse) requestRender();
    drewCoarse = false;
  }

  function recolour(): void {
    const e = v.excitations[state.excitation];
    scaleNow = colourScale(e, state.quantity, state.scale);
    const values = state.quantity === "field" ? e.field : e.sigma;
    const lut = state.quantity === "field" ? viridisWords : coolWarmWords;
    for (const cv of views) {
      const col = cv.colours, list = cv.panels;
      for (let i = 0; i < list.length; i++) {
        const t = scaleNow.map(values[list[i]]);
        const li = Math.round(Math.min(1, Math.max(0, Number.isFinite(t) ? t : 0)) * (LUT_SIZE - 1));
        const w = lut[li];
        col[3 * i] = w; col[3 * i + 1] = w; col[3 * i + 2] = w;
      }
      cv.mesh.geometry.attributes.color.needsUpdate = true;
      colourProxy(cv);
    }
    drawBar();
    fillHotSpots();
    placeMarkers();
    updateNotes();
    root.dataset.excitation = e.id;
    requestRender();
  }

  // Hot-spot markers: one Points object, drawn over the surfaces.
  let markerPoints: any = null;
  function placeMarkers(): void {
    markers.clear();
    const spots = v.excitations[state.excitation].hotSpots;
    const pos = new Float32Array(3 * spots.length);
    spots.forEach((h, i) => {
      pos[3 * i] = h.at[0] - v.origin[0]; pos[3 * i + 1] = h.at[1] - v.origin[1]; pos[3 * i + 2] = h.at[2] - v.origin[2];
    });
    const g = new THREE.BufferGeometry();
    g.setAttribute("position", new THREE.BufferAttribute(pos, 3));
    const m = new THREE.PointsMaterial({ color: MARKER_COLOUR, size: 9, sizeAttenuation: false, depthTest: false, map: ringTexture(), transparent: true, alphaTest: 0.2 });
    markerPoints = new THREE.Points(g, m);
    markerPoints.renderOrder = 10;
    markers.add(markerPoints);
    if (state.selectedSpot >= 0 && state.selectedSpot < spots.length) {
      const s = new THREE.BufferGeometry();
      s.setAttribute("position", new THREE.BufferAttribute(pos.slice(3 * state.selectedSpot, 3 * state.selectedSpot + 3), 3));
      const sel = new THREE.Points(s, new THREE.PointsMaterial({ color: 0x000000, size: 18, sizeAttenuation: false, depthTest: false, map: ringTexture(), transparent: true, alphaTest: 0.2 }));
      sel.renderOrder = 11;
      markers.add(sel);
    }
  }

  let ring: any = null;
  function ringTexture(): any {
    if (ring) return ring;
    const c = document.createElement("canvas");
    c.width = c.height = 32;
    const g = c.getContext("2d");
    if (g) {
      g.lineWidth = 6;
      g.strokeStyle = "#ffffff";
      g.beginPath(); g.arc(16, 16, 12, 0, 2 * Math.PI); g.stroke();
    }
    ring = new THREE.CanvasTexture(c);
    return ring;
  }

  // Mesh edges are drawn by the panel shader of the full mesh only (a proxy's edges are not the mesh's).
  function setEdges(on: boolean): void {
    state.edges = on;
    for (const cv of views) cv.edgeSwitch.value = on ? 1 : 0;
    requestRender();
  }

  function setClip(): void {
    const axis = clipAxis.value as "x" | "y" | "z";
    const i = axis === "x" ? 0 : axis === "y" ? 1 : 2;
    const lo = [box.min.x, box.min.y, box.min.z][i], hi = [box.max.x, box.max.y, box.max.z][i];
    const at = lo + Number(clipPos.value) * (hi - lo);
    const n = new THREE.Vector3(i === 0 ? 1 : 0, i === 1 ? 1 : 0, i === 2 ? 1 : 0);
    const s = clipFlip.checked ? 1 : -1;
    clipPlane.normal.copy(n).multiplyScalar(s);
    clipPlane.constant = -s * at;
    const planes = clipBox.checked ? [clipPlane] : [];
    for (const cv of views) {
      for (const m of [cv.material, cv.proxyMaterial]) {
        if (!m) continue;
        m.clippingPlanes = planes;
        m.side = faceSide(cv.index, cv.opacity);
        m.needsUpdate = true;
      }
    }
    requestRender();
  }

  const controls = renderer ? new OrbitControls(camera, canvas) : null;
  function fit(): void {
    const b = new THREE.Box3();
    for (const cv of views) if (cv.visible) b.expandByObject(cv.mesh);
    if (b.isEmpty()) b.copy(box);
    const s = new THREE.Sphere();
    b.getBoundingSphere(s);
    const r = s.radius > 0 ? s.radius : radius;
    const dist = (1.15 * r) / Math.sin((camera.fov * Math.PI) / 360);
    const dir = new THREE.Vector3(1, -1.3, 0.9).normalize();
    if (controls) {
      dir.copy(camera.position).sub(controls.target);
      if (dir.lengthSq() === 0) dir.set(1, -1.3, 0.9);
      dir.normalize();
      controls.target.copy(s.center);
    }
    camera.position.copy(s.center).addScaledVector(dir, dist);
    camera.lookAt(s.center);
    controls?.update();
    requestRender();
  }

  let flight = 0;
  let flying = false;
  function flyTo(i: number): void {
    const spots = v.excitations[state.excitation].hotSpots;
    const h = spots[i];
    if (!h) return;
    state.selectedSpot = i;
    placeMarkers();
    showPanel(h.panel, true);
    for (const li of hotList.children) li.classList.remove("sm-selected");
    hotList.children[i]?.classList.add("sm-selected");
    if (!controls) return;
    const target = new THREE.Vector3(h.at[0] - v.origin[0], h.at[1] - v.origin[1], h.at[2] - v.origin[2]);
    const n = panelNormal(h.panel);
    // Close enough to see the panel, far enough to see what surrounds it, and in front of
    // any surface between (a hot spot often faces a neighbour across a narrow gap).
    let dist = 0.9 * radius;
    raycaster.set(target.clone().addScaledVector(n, 1e-4 * radius), n);
    const blocking = raycaster.intersectObjects(views.filter((cv) => cv.visible).map((cv) => cv.mesh), false);
    if (blocking.length > 0) dist = Math.max(0.02 * radius, Math.min(dist, 0.7 * blocking[0].distance));
    const endPos = target.clone().addScaledVector(n, dist);
    const startPos = camera.position.clone(), startTarget = controls.target.clone();
    const t0 = performance.now(), id = ++flight;
    const step = (): void => {
      if (id !== flight) return;
      const f = Math.min(1, (performance.now() - t0) / 600);
      const e = f * f * (3 - 2 * f);
      camera.position.lerpVectors(startPos, endPos, e);
      controls.target.lerpVectors(startTarget, target, e);
      flying = true;
      controls.update();
      flying = false;
      render();
      if (f < 1) requestAnimationFrame(step);
      else root.dataset.flown = String(i);
    };
    requestAnimationFrame(step);
  }

  function panelNormal(p: number): any {
    const a = v.triangles[3 * p], b = v.triangles[3 * p + 1], c = v.triangles[3 * p + 2];
    const P = v.positions;
    const u = new THREE.Vector3(P[3 * b] - P[3 * a], P[3 * b + 1] - P[3 * a + 1], P[3 * b + 2] - P[3 * a + 2]);
    const w = new THREE.Vector3(P[3 * c] - P[3 * a], P[3 * c + 1] - P[3 * a + 1], P[3 * c + 2] - P[3 * a + 2]);
    const n = u.cross(w);
    if (n.lengthSq() === 0) n.set(0, 0, 1);
    // Look from outside; an open sheet has no outside, so from the camera's side.
    if (!v.closed[v.panelConductor[p]] && n.dot(camera.position.clone().sub(new THREE.Vector3(P[3 * a], P[3 * a + 1], P[3 * a + 2]))) < 0) n.negate();
    return n.normalize();
  }

  let pinned = false;
  function showPanel(p: number, pin: boolean): void {
    if (pinned && !pin) return;
    pinned = pin;
    const e = v.excitations[state.excitation];
    const c = v.panelConductor[p];
    const a = v.triangles[3 * p], b = v.triangles[3 * p + 1], d = v.triangles[3 * p + 2];
    const P = v.positions;
    const at = [0, 1, 2].map((i) => (P[3 * a + i] + P[3 * b + i] + P[3 * d + i]) / 3 + v.origin[i]);
    readout.replaceChildren();
    const lines = [
      `${names[c]} · panel ${p}${pin ? " (pinned; click empty space to release)" : ""}`,
      `σ = ${formatSI(e.sigma[p], "C/m²")}`,
      `|E| = ${formatSI(e.field[p], "V/m")} (${formatNumber((100 * e.field[p]) / v.breakdownField, 3)} % of breakdown)`,
      `centroid ${formatPoint(at, unit)}`,
      `area ${formatArea(v.areas[p], unit)}`,
    ];
    for (const t of lines) readout.appendChild(el("div", undefined, t));
    readout.dataset.panel = String(p);
  }

  const raycaster = new THREE.Raycaster();
  const pointer = new THREE.Vector2();
  function pick(ev: PointerEvent): number {
    const r = canvas.getBoundingClientRect();
    pointer.set(((ev.clientX - r.left) / r.width) * 2 - 1, -((ev.clientY - r.top) / r.height) * 2 + 1);
    raycaster.setFromCamera(pointer, camera);
    const hits = raycaster.intersectObjects(views.filter((cv) => cv.visible).map((cv) => cv.mesh), false);
    for (const h of hits) {
      if (clipBox.checked && clipPlane.distanceToPoint(h.point) < 0) continue;
      const c = h.object.userData.conductor as number;
      return panelLists[c][h.faceIndex];
    }
    return -1;
  }

  let hoverPending: PointerEvent | null = null;
  canvas.addEventListener("pointermove", (ev) => {
    if (ev.buttons !== 0) return;
    if (hoverPending === null) requestAnimationFrame(() => {
      const e = hoverPending; hoverPending = null;
      if (!e) return;
      const p = pick(e);
      if (p >= 0) showPanel(p, false);
    });
    hoverPending = ev;
  });
  let downAt: [number, number] | null = null;
  canvas.addEventListener("pointerdown", (ev) => { downAt = [ev.clientX, ev.clientY]; });
  canvas.addEventListener("pointerup", (ev) => {
    if (!downAt || Math.hypot(ev.clientX - downAt[0], ev.clientY - downAt[1]) > 4) return;
    const p = pick(ev);
    if (p >= 0) showPanel(p, true);
    else { pinned = false; readout.dataset.panel = ""; }
  });

  function snapshot(): void {
    if (!renderer) return;
    render();
    // The view with its colour bar, so that the picture carries its scale.
    const out = document.createElement("canvas");
    out.width = canvas.width; out.height = canvas.height;
    const g = out.getContext("2d");
    if (!g) return;
    g.drawImage(canvas, 0, 0);
    const dpr = canvas.width / Math.max(1, canvas.clientWidth);
    const bx = 16 * dpr, by = 40 * dpr, bw = 16 * dpr, bh = Math.min(out.height - 80 * dpr, 256 * dpr);
    g.imageSmoothingEnabled = true;
    g.drawImage(barCanvas, bx, by, bw, bh);
    g.fillStyle = "#222"; g.font = `${12 * dpr}px sans-serif`; g.textBaseline = "middle";
    g.fillText(barTitle.textContent ?? "", bx, by - 14 * dpr);
    for (const t of Array.from(barLabels.children) as HTMLElement[]) g.fillText(t.textContent ?? "", bx + bw + 6 * dpr, by + (parseFloat(t.style.top) / 100) * bh);
    const a = document.createElement("a");
    a.href = out.toDataURL("image/png");
    a.download = "sigmesh-view.png";
    a.click();
  }

  function render(): void {
    if (!renderer) return;
    renderer.render(scene, camera);
    if (moving) drewCoarse = true;
    root.dataset.detail = moving ? "proxy" : "full";
    root.dataset.frames = String(Number(root.dataset.frames ?? "0") + 1);
  }
  let renderQueued = false;
  requestRender = (): void => {
    if (!renderer || renderQueued) return;
    renderQueued = true;
    requestAnimationFrame(() => { renderQueued = false; render(); });
  };

  function resize(): void {
    sizeBuffer();
    requestRender();
  }
  function sizeBuffer(): void {
    if (!renderer) return;
    const w = Math.max(1, stage.clientWidth), h = Math.max(1, stage.clientHeight);
    const full = Math.min(2, window.devicePixelRatio || 1);
    // A large or high-density canvas is drawn coarser while moving; a small one keeps every pixel.
    const ratio = moving && software ? Math.min(full, Math.sqrt(MOVING_PIXELS / (w * h))) : full;
    renderer.setPixelRatio(ratio);
    renderer.setSize(w, h, false);
    camera.aspect = w / h;
    camera.updateProjectionMatrix();
  }

  if (renderer) {
    renderer.localClippingEnabled = true;
    // Fit to view and resizes move the camera too, but as one jump: only user input and
    // flights count as motion.
    controls!.addEventListener("start", () => { interacting = true; });
    controls!.addEventListener("end", () => {
      interacting = false;
      if (moving) { clearTimeout(settleTimer); settleTimer = window.setTimeout(settle, SETTLE_MS); }
    });
    controls!.addEventListener("change", () => { if (interacting || flying) motion(); requestRender(); });
    new ResizeObserver(resize).observe(stage);
    resize();
  }

  quantitySel.addEventListener("change", () => { state.quantity = quantitySel.value as Quantity; recolour(); });
  scaleSel.addEventListener("change", () => { state.scale = scaleSel.value as Scale; recolour(); });
  excSel.addEventListener("change", () => { state.excitation = Number(excSel.value); state.selectedSpot = -1; recolour(); });
  edgesBox.addEventListener("change", () => setEdges(edgesBox.checked));
  for (const c of [clipBox, clipFlip]) c.addEventListener("change", setClip);
  clipAxis.addEventListener("change", setClip);
  clipPos.addEventListener("input", setClip);
  fitBtn.addEventListener("click", fit);
  shotBtn.addEventListener("click", snapshot);

  camera.position.set(1, -1.3, 0.9);
  fit();
  recolour();
  root.dataset.ready = "1";
  // Build the proxies once the first frame is up (or at the first motion, if sooner).
  if (renderer && useProxies) requestAnimationFrame(() => setTimeout(buildProxies, 0));
}

function matrixTable(caption: string, m: number[][], names: string[], id: string): HTMLTableElement {
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
    for (const x of row) { const td = el("td", undefined, formatSI(x, "F")); td.dataset.value = String(x); tr.appendChild(td); }
    t.appendChild(tr);
  });
  return t;
}

function summaryTable(report: Record<string, any>, names: string[], unit: LengthUnit): HTMLTableElement {
  const t = el("table", "sm-summary");
  t.id = "sm-summary";
  const head = el("tr");
  for (const h of ["conductor", "potential", "charge", "peak |E|", "of breakdown", "area", "panels"]) head.appendChild(el("th", undefined, h));
  t.appendChild(head);
  const rows = (report.conductors as any[] | undefined) ?? [];
  rows.forEach((c, i) => {
    const tr = el("tr");
    const cells = [
      names[i] ?? String(c.name),
      formatSI(c.potential, "V"),
      formatSI(c.charge, "C"),
      c.peakField === null ? "—" : formatSI(c.peakField, "V/m"),
      c.fieldRatio === null ? "—" : `${formatNumber(100 * c.fieldRatio, 3)} %`,
      formatArea(c.area, unit),
      String(c.triangles),
    ];
    for (const x of cells) tr.appendChild(el("td", undefined, x));
    t.appendChild(tr);
  });
  return t;
}

function boot(): void {
  const root = document.getElementById("sigmesh-app") ?? document.body.appendChild(el("div"));
  try {
    start(root, readPageData(document));
  } catch (err) {
    root.replaceChildren(el("p", "sm-error", `This sigmesh report could not be shown: ${err instanceof Error ? err.message : String(err)}`));
    root.dataset.error = "1";
  }
}

if (document.readyState === "loading") document.addEventListener("DOMContentLoaded", boot);
else boot();
