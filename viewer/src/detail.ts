/**
 * Drawing on demand, and the switch between full detail and proxies. A frame is drawn only
 * when something changed (at most one per animation frame). On a large model a coarse proxy
 * of each conductor (proxy.ts) is drawn while the camera moves and the full mesh as soon as
 * it rests, so software WebGL stays interactive; picking always uses the full mesh.
 *
 * `root.dataset.detail` says what the last frame showed ("proxy" or "full"),
 * `root.dataset.frames` counts frames; the browser tests and the viewer bench read both.
 */
import * as THREE from "three";
import type { ViewerData } from "./data.js";
import { clusterProxy, proxyPlan } from "./proxy.js";
import { panelMaterial } from "./panel-material.js";
import { applyDetail, applyVisibility, colourProxy, type SceneView } from "./scene.js";
import { endMotion, frameDrawn, settleDelay, startMotion, SETTLE_MS, type ViewerState } from "./state.js";

/** Above this many panels the view draws proxies while it moves (a frame's cost is mostly per triangle in software WebGL). */
export const PROXY_ABOVE_PANELS = 60000;
/** The same with a GPU, which draws a few hundred thousand triangles far within a frame. */
export const PROXY_ABOVE_PANELS_GPU = 2000000;
/** Triangles of all proxies together, about. */
export const PROXY_TRIANGLES = 30000;
/** Pixels drawn at most per frame while the view moves under software rendering (fill is the rest of a frame's cost). */
export const MOVING_PIXELS = 700000;

/** Whether a model of `panels` panels is drawn by proxies while the view moves. */
export function usesProxies(panels: number, software: boolean): boolean {
  return panels > (software ? PROXY_ABOVE_PANELS : PROXY_ABOVE_PANELS_GPU);
}

/**
 * Device pixels per CSS pixel of the drawing buffer for a `w` × `h` (CSS pixels) stage: the
 * screen's own (at most 2), but while the view moves under software rendering a large or
 * high-density canvas is drawn coarser (MOVING_PIXELS at most); a small one keeps every pixel.
 */
export function pixelRatio(moving: boolean, software: boolean, devicePixelRatio: number, w: number, h: number): number {
  const full = Math.min(2, devicePixelRatio || 1);
  return moving && software ? Math.min(full, Math.sqrt(MOVING_PIXELS / (w * h))) : full;
}

export interface RenderLoop {
  /** Draws a frame now. */
  render(): void;
  /** Draws a frame at the next animation frame (once, however often asked). */
  requestRender(): void;
  /** The drawing buffer to the stage's size (and the pixel ratio of the state's motion); true when it changed (and so was cleared). */
  sizeBuffer(): boolean;
}

export function renderLoop(root: HTMLElement, stage: HTMLElement, sv: SceneView, state: ViewerState): RenderLoop {
  const size = { w: 0, h: 0, ratio: 0 };
  const render = (): void => {
    if (!sv.renderer) return;
    sv.renderer.render(sv.scene, sv.camera);
    root.dataset.detail = frameDrawn(state);
    root.dataset.frames = String(Number(root.dataset.frames ?? "0") + 1);
  };
  return {
    render,
    requestRender: () => {
      if (!sv.renderer || state.renderQueued) return;
      state.renderQueued = true;
      requestAnimationFrame(() => { state.renderQueued = false; render(); });
    },
    sizeBuffer: () => {
      if (!sv.renderer) return false;
      const w = Math.max(1, stage.clientWidth), h = Math.max(1, stage.clientHeight);
      const ratio = pixelRatio(state.motion.moving, sv.software, window.devicePixelRatio, w, h);
      // Setting a canvas's size clears it, even to the same size: only when something changed.
      if (w === size.w && h === size.h && ratio === size.ratio) return false;
      size.w = w; size.h = h; size.ratio = ratio;
      sv.renderer.setPixelRatio(ratio);
      sv.renderer.setSize(w, h, false);
      sv.camera.aspect = w / h;
      sv.camera.updateProjectionMatrix();
      return true;
    },
  };
}

/** What the proxy switch works on. */
export interface DetailContext {
  root: HTMLElement;
  v: ViewerData;
  state: ViewerState;
  sv: SceneView;
  loop: RenderLoop;
  /** Panels per conductor. */
  counts: Uint32Array;
  useProxies: boolean;
}

/** The proxies of the conductors large enough to need one (built once, after the first frame or at the first motion). */
export function buildProxies(ctx: DetailContext): void {
  const { v, state, sv, root } = ctx;
  if (state.motion.proxiesBuilt || !ctx.useProxies) return;
  state.motion.proxiesBuilt = true;
  const t0 = performance.now();
  const k = sv.views.length;
  const areas = new Float64Array(k), extents = new Float64Array(k);
  for (let p = 0; p < v.areas.length; p++) areas[v.panelConductor[p]] += v.areas[p];
  for (const cv of sv.views) {
    const b = cv.mesh.geometry.boundingSphere;
    extents[cv.index] = b ? 2 * b.radius : 0;
  }
  const plan = proxyPlan(ctx.counts, areas, extents, PROXY_TRIANGLES);
  const box = sv.box;
  let drawn = 0;
  for (const cv of sv.views) {
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
    sv.scene.add(cv.proxy);
    applyVisibility(sv, state, cv);
    colourProxy(cv);
    drawn += nt;
  }
  root.dataset.proxyPanels = String(drawn);
  root.dataset.proxyMs = (performance.now() - t0).toFixed(0);
}

/** The view moved (user input or a flight): proxies until it has rested for a while. */
export function motion(ctx: DetailContext): void {
  const { state, sv, loop } = ctx;
  if (!ctx.useProxies) return;
  buildProxies(ctx);
  if (startMotion(state)) {
    for (const cv of sv.views) applyDetail(state, cv);
    if (sv.software) loop.sizeBuffer();
  }
  clearTimeout(state.motion.settleTimer);
  state.motion.settleTimer = window.setTimeout(() => settle(ctx), settleDelay(state));
}

/** The user let go of the view: it settles SETTLE_MS later unless it moves again. */
export function endInteraction(ctx: DetailContext): void {
  const { state } = ctx;
  state.motion.interacting = false;
  if (state.motion.moving) { clearTimeout(state.motion.settleTimer); state.motion.settleTimer = window.setTimeout(() => settle(ctx), SETTLE_MS); }
}

/** The view rests: full detail again. */
export function settle(ctx: DetailContext): void {
  const { state, sv, loop } = ctx;
  const drewCoarse = endMotion(state);
  if (drewCoarse === null) return;
  for (const cv of sv.views) applyDetail(state, cv);
  // Resizing the drawing buffer clears it: draw at once, so no blank canvas is ever shown.
  if (sv.software) { loop.sizeBuffer(); loop.render(); }
  else if (drewCoarse) loop.requestRender();
}

/** Orbit-control events: user input and flights count as motion (fit and resizes jump, they do not move). */
export function wireControls(ctx: DetailContext): void {
  const { sv, state, loop } = ctx;
  sv.controls.addEventListener("start", () => { state.motion.interacting = true; });
  sv.controls.addEventListener("end", () => endInteraction(ctx));
  sv.controls.addEventListener("change", () => { if (state.motion.interacting || state.motion.flying) motion(ctx); loop.requestRender(); });
}
