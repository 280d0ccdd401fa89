/**
 * The sigmesh viewer page: conductor surfaces coloured per panel by σ or |E|, hot spots,
 * panel read-out, visibility, opacity, edges, a clipping plane, snapshot, and the
 * capacitance tables. Everything a user file names is written with textContent.
 *
 * This file only wires the parts together around ONE state object (state.ts):
 *   panels.ts, tables.ts   the page layout and what the side panel and read-out say
 *   colour-scale.ts        per-panel colours and the colour bar's scale; legend.ts draws the bar
 *   scene.ts               three.js scene, camera, conductor meshes, clipping, markers, fit
 *   detail.ts              drawing on demand; proxies while the view moves, full mesh at rest
 *   picking.ts             hover and click read-out, flights to hot spots
 */
import { readPageData, type PageData } from "./data.js";
import { el } from "./dom.js";
import { createViewerState, chooseExcitation, type Quantity, type Scale } from "./state.js";
import { colourScale, colourTables, tableOf, wordsOf } from "./colour-scale.js";
import { buildPage, inputUnit, readClipControls } from "./panels.js";
import { fillHotSpots, sheetBoundNote } from "./tables.js";
import { drawColourBar, saveSnapshot } from "./legend.js";
import { applyClip, applyEdges, applySurrounding, applyVisibility, createScene, fit, panelLists, placeMarkers, recolourMeshes } from "./scene.js";
import { motion, renderLoop, usesProxies, wireControls, type DetailContext } from "./detail.js";
import { flyTo, wirePointer, refreshPinned, type PickingContext } from "./picking.js";
import "./style.css";

function start(root: HTMLElement, data: PageData): void {
  const { report, viewer: v } = data;
  const unit = inputUnit(report);
  const state = createViewerState(v.names.length, (v.bodies?.names.length ?? 0) + (v.groundPlane ? 1 : 0));
  const page = buildPage(root, data);
  const tables = colourTables();
  const { counts, lists } = panelLists(v.panelConductor, v.names.length);
  const sv = createScene(v, report, state, lists, page.canvas, page.glNote, root);
  const loop = renderLoop(root, page.stage, sv, state);
  const detail: DetailContext = { root, v, state, sv, loop, counts, useProxies: usesProxies(v.panelConductor.length, sv.software) };
  const picking: PickingContext = { root, v, unit, state, page, sv, loop, lists };

  function recolour(): void {
    const e = v.excitations[state.excitation];
    const scale = colourScale(e, state.quantity, state.scale);
    recolourMeshes(sv, state.quantity === "field" ? e.field : e.sigma, scale, wordsOf(tables, state.quantity));
    drawColourBar(page.colourBar, scale, tableOf(tables, state.quantity));
    fillHotSpots(page.hotList, page.hotNote, v, e, unit, (i) => flyTo(picking, i));
    placeMarkers(sv, v, state);
    page.boundNote.textContent = sheetBoundNote(e);
    root.dataset.excitation = e.id;
    refreshPinned(picking);
    loop.requestRender();
  }
  const refit = (): void => { fit(sv, state); loop.requestRender(); };
  const clip = (): void => { readClipControls(page, state.clip); applyClip(sv, state); loop.requestRender(); };

  page.conductors.forEach((row, c) => {
    const changed = (): void => { applyVisibility(sv, state, sv.views[c]); loop.requestRender(); };
    row.visible.addEventListener("change", () => { state.conductors[c].visible = row.visible.checked; changed(); });
    row.opacity.addEventListener("input", () => { state.conductors[c].opacity = Number(row.opacity.value); changed(); });
  });
  page.surroundings.forEach((row, i) => {
    const changed = (): void => { applySurrounding(sv.surroundings[i], state.surroundings[i]); loop.requestRender(); };
    row.visible.addEventListener("change", () => { state.surroundings[i].visible = row.visible.checked; changed(); });
    row.opacity.addEventListener("input", () => { state.surroundings[i].opacity = Number(row.opacity.value); changed(); });
  });
  wirePointer(picking);
  if (sv.renderer) {
    wireControls(detail);
    // A resize clears the canvas: draw again at once, so no blank frame is ever shown.
    new ResizeObserver(() => { if (loop.sizeBuffer()) loop.render(); }).observe(page.stage);
    loop.sizeBuffer();
    loop.requestRender();
  }
  page.quantity.addEventListener("change", () => { state.quantity = page.quantity.value as Quantity; recolour(); });
  page.scale.addEventListener("change", () => { state.scale = page.scale.value as Scale; recolour(); });
  page.excitation.addEventListener("change", () => { chooseExcitation(state, Number(page.excitation.value)); recolour(); });
  page.edges.addEventListener("change", () => { state.edges = page.edges.checked; applyEdges(sv, state.edges); loop.requestRender(); });
  for (const c of [page.clip, page.clipFlip]) c.addEventListener("change", clip);
  page.clipAxis.addEventListener("change", clip);
  page.clipPosition.addEventListener("input", clip);
  page.fit.addEventListener("click", refit);
  page.snapshot.addEventListener("click", () => {
    if (!sv.renderer) return;
    loop.render();
    saveSnapshot(page.canvas, page.colourBar);
  });

  sv.camera.position.set(1, -1.3, 0.9);
  refit();
  recolour();
  // The first frame is drawn now, before the page's load event (a screenshot taken at load
  // shows the model): on a large model the coarse proxies first, the full mesh once the view
  // has rested a moment (detail.ts), as after any motion.
  if (sv.renderer) {
    if (detail.useProxies) motion(detail);
    loop.render();
    root.dataset.firstFrame = root.dataset.detail ?? "";
  }
  root.dataset.ready = "1";
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
