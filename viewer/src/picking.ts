/**
 * Pointing at panels and flying to hot spots. A ray from the camera through the pointer
 * hits the full meshes (never the proxies) of the conductors shown, on the kept side of the
 * clipping plane; the panel hit fills the read-out on hover and pins it on a click. A hot
 * spot's button flies the camera in front of its panel. The maths (pointer to ray
 * coordinates, click or drag, panel normal, flight distance and easing) is plain and works
 * in Node with three.js's math classes (tests/viewer/picking.test.ts).
 */
import * as THREE from "three";
import type { ViewerData } from "./data.js";
import type { PageElements } from "./panels.js";
import { placeMarkers, shownMeshes, type SceneView } from "./scene.js";
import type { RenderLoop } from "./detail.js";
import { markSelectedSpot, readoutLines, showReadout } from "./tables.js";
import { releaseReadout, takeReadout, pinnedPanel, type ViewerState } from "./state.js";
import type { LengthUnit } from "../../src/io/units.js";

/** A press and release closer than this (CSS pixels) is a click; farther, a drag of the view. */
export const CLICK_SLOP = 4;
/** Duration of a flight to a hot spot; ms. */
export const FLIGHT_MS = 600;

const raycaster = new THREE.Raycaster();
const pointer = new THREE.Vector2();

/** Normalised device coordinates (x right, y up, −1 … 1) of a pointer at client (x, y) over `rect`. */
export function pointerNdc(clientX: number, clientY: number, rect: { left: number; top: number; width: number; height: number }): [number, number] {
  return [((clientX - rect.left) / rect.width) * 2 - 1, -((clientY - rect.top) / rect.height) * 2 + 1];
}

export function isClick(down: [number, number] | null, clientX: number, clientY: number): boolean {
  return down !== null && !(Math.hypot(clientX - down[0], clientY - down[1]) > CLICK_SLOP);
}

/**
 * The panel (index into the page data's panels) under normalised device coordinates `ndc`,
 * or -1: the nearest hit on `meshes` (each with `userData.conductor`, three vertices per
 * panel of `lists[conductor]`) not cut away by `clip` (null: no clipping).
 */
export function pickPanel(camera: any, ndc: [number, number], meshes: any[], clip: any | null, lists: Uint32Array[]): number {
  pointer.set(ndc[0], ndc[1]);
  raycaster.setFromCamera(pointer, camera);
  const hits = raycaster.intersectObjects(meshes, false);
  for (const h of hits) {
    if (clip && clip.distanceToPoint(h.point) < 0) continue;
    const c = h.object.userData.conductor as number;
    return lists[c][h.faceIndex];
  }
  return -1;
}

/**
 * The unit normal of panel `p` to look at it along: outward on a closed conductor; an open
 * sheet has no outside, so towards the camera at `eye`.
 */
export function panelNormal(v: ViewerData, p: number, eye: any): any {
  const a = v.triangles[3 * p], b = v.triangles[3 * p + 1], c = v.triangles[3 * p + 2];
  const P = v.positions;
  const u = new THREE.Vector3(P[3 * b] - P[3 * a], P[3 * b + 1] - P[3 * a + 1], P[3 * b + 2] - P[3 * a + 2]);
  const w = new THREE.Vector3(P[3 * c] - P[3 * a], P[3 * c + 1] - P[3 * a + 1], P[3 * c + 2] - P[3 * a + 2]);
  const n = u.cross(w);
  if (n.lengthSq() === 0) n.set(0, 0, 1);
  if (!v.closed[v.panelConductor[p]] && n.dot(eye.clone().sub(new THREE.Vector3(P[3 * a], P[3 * a + 1], P[3 * a + 2]))) < 0) n.negate();
  return n.normalize();
}

/**
 * How far in front of a hot spot the camera stops: close enough to see the panel, far
 * enough to see what surrounds it, and in front of any surface between (a hot spot often
 * faces a neighbour across a narrow gap) at `blocking` along the normal (undefined: none).
 */
export function flightDistance(radius: number, blocking: number | undefined): number {
  const dist = 0.9 * radius;
  return blocking === undefined ? dist : Math.max(0.02 * radius, Math.min(dist, 0.7 * blocking));
}

/** Smoothstep easing of a flight's progress f ∈ [0, 1]. */
export function easeFlight(f: number): number {
  return f * f * (3 - 2 * f);
}

/** What picking and flights work on. */
export interface PickingContext {
  root: HTMLElement;
  v: ViewerData;
  unit: LengthUnit;
  state: ViewerState;
  page: PageElements;
  sv: SceneView;
  loop: RenderLoop;
  lists: Uint32Array[];
}

/** Panel `p`'s values in the read-out: on hover unless a panel is pinned, or pinned by a click. */
export function showPanel(ctx: PickingContext, p: number, pin: boolean): void {
  const { v, state } = ctx;
  if (!takeReadout(state, pin, p)) return;
  showReadout(ctx.page.readout, readoutLines(v, v.excitations[state.excitation], p, pin, ctx.unit), p);
}

/** A pinned read-out shows the current excitation's values (after the user switched it). */
export function refreshPinned(ctx: PickingContext): void {
  const p = pinnedPanel(ctx.state);
  if (p >= 0) showPanel(ctx, p, true);
}

/** The i-th hot spot of the current excitation: selected, its panel pinned, and the camera flown in front of it. */
export function flyTo(ctx: PickingContext, i: number): void {
  const { v, state, sv, root } = ctx;
  const spots = v.excitations[state.excitation].hotSpots;
  const h = spots[i];
  if (!h) return;
  state.selectedSpot = i;
  placeMarkers(sv, v, state);
  showPanel(ctx, h.panel, true);
  markSelectedSpot(ctx.page.hotList, i);
  const { controls, camera, radius } = sv;
  if (!controls) return;
  const target = new THREE.Vector3(h.at[0] - v.origin[0], h.at[1] - v.origin[1], h.at[2] - v.origin[2]);
  const n = panelNormal(v, h.panel, camera.position);
  raycaster.set(target.clone().addScaledVector(n, 1e-4 * radius), n);
  const blocking = raycaster.intersectObjects(shownMeshes(sv, state), false);
  const dist = flightDistance(radius, blocking.length > 0 ? blocking[0].distance : undefined);
  const endPos = target.clone().addScaledVector(n, dist);
  const startPos = camera.position.clone(), startTarget = controls.target.clone();
  const t0 = performance.now(), id = ++state.motion.flight;
  const step = (): void => {
    if (id !== state.motion.flight) return;
    const f = Math.min(1, (performance.now() - t0) / FLIGHT_MS);
    const e = easeFlight(f);
    camera.position.lerpVectors(startPos, endPos, e);
    controls.target.lerpVectors(startTarget, target, e);
    state.motion.flying = true;
    controls.update();
    state.motion.flying = false;
    ctx.loop.render();
    if (f < 1) requestAnimationFrame(step);
    else root.dataset.flown = String(i);
  };
  requestAnimationFrame(step);
}

/** Hover shows a panel (once per animation frame at most), a click pins it, a click on empty space releases it. */
export function wirePointer(ctx: PickingContext): void {
  const { canvas, readout } = ctx.page;
  const pick = (ev: PointerEvent): number => {
    const { sv, state } = ctx;
    return pickPanel(sv.camera, pointerNdc(ev.clientX, ev.clientY, canvas.getBoundingClientRect()), shownMeshes(sv, state),
      state.clip.on ? sv.clipPlane : null, ctx.lists);
  };
  let hoverPending: PointerEvent | null = null;
  canvas.addEventListener("pointermove", (ev) => {
    if (ev.buttons !== 0) return;
    if (hoverPending === null) requestAnimationFrame(() => {
      const e = hoverPending; hoverPending = null;
      if (!e) return;
      const p = pick(e);
      if (p >= 0) showPanel(ctx, p, false);
    });
    hoverPending = ev;
  });
  let downAt: [number, number] | null = null;
  canvas.addEventListener("pointerdown", (ev) => { downAt = [ev.clientX, ev.clientY]; });
  canvas.addEventListener("pointerup", (ev) => {
    if (!isClick(downAt, ev.clientX, ev.clientY)) return;
    const p = pick(ev);
    if (p >= 0) showPanel(ctx, p, true);
    else { releaseReadout(ctx.state); readout.dataset.panel = ""; }
  });
}
