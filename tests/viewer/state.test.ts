// The viewer's one UI state object (viewer/src/state.ts) and its transitions, without a
// browser: what a fresh page shows, what an excitation change resets, the read-out's pin,
// the motion → rest cycle that switches proxies and full meshes, the faces drawn, and
// where the clipping plane lies.
import { describe, it, expect } from "vitest";
import {
  createViewerState, chooseExcitation, axisOf, takeReadout, releaseReadout, pinnedPanel, startMotion, endMotion, frameDrawn,
  settleDelay, conductorDetail, frontFacesOnly, clipPlaneOf, SETTLE_MS, SETTLE_HELD_MS, SURROUNDING_OPACITY, type ClipState,
} from "../../viewer/src/state.js";

describe("createViewerState", () => {
  it("opens on |E|, linear, the first excitation, every conductor shown opaque, no clipping, at rest", () => {
    const s = createViewerState(3);
    expect(s).toMatchObject({ excitation: 0, quantity: "field", scale: "linear", edges: false, selectedSpot: -1, pinned: false, renderQueued: false });
    expect(s.conductors).toEqual([{ visible: true, opacity: 1 }, { visible: true, opacity: 1 }, { visible: true, opacity: 1 }]);
    expect(s.clip).toEqual({ on: false, axis: 0, position: 0.5, flip: false });
    expect(s.motion).toMatchObject({ moving: false, interacting: false, drewCoarse: false, flying: false, flight: 0, proxiesBuilt: false });
  });

  it("shows the dielectric bodies and the ground plane translucent, each with its own record", () => {
    expect(createViewerState(2).surroundings).toEqual([]);
    const s = createViewerState(1, 2);
    expect(s.surroundings).toEqual([{ visible: true, opacity: SURROUNDING_OPACITY }, { visible: true, opacity: SURROUNDING_OPACITY }]);
    expect(SURROUNDING_OPACITY).toBeLessThan(1);
    s.surroundings[1].visible = false;
    expect(s.surroundings[0].visible).toBe(true);
  });

  it("gives each conductor its own record (hiding one hides only that one)", () => {
    const s = createViewerState(2);
    s.conductors[0].visible = false;
    expect(s.conductors[1].visible).toBe(true);
  });
});

describe("transitions", () => {
  it("another excitation drops the selected hot spot and keeps the display choices", () => {
    const s = createViewerState(2);
    s.quantity = "sigma"; s.scale = "log"; s.selectedSpot = 3;
    chooseExcitation(s, 2);
    expect(s.excitation).toBe(2);
    expect(s.selectedSpot).toBe(-1);
    expect(s.quantity).toBe("sigma");
    expect(s.scale).toBe("log");
  });

  it("reads the plane control's axis names", () => {
    expect([axisOf("x"), axisOf("y"), axisOf("z")]).toEqual([0, 1, 2]);
  });

  it("a hover fills the read-out until a click pins a panel; then only clicks do, until released", () => {
    const s = createViewerState(1);
    expect(takeReadout(s, false)).toBe(true);
    expect(s.pinned).toBe(false);
    expect(takeReadout(s, true)).toBe(true);
    expect(s.pinned).toBe(true);
    expect(takeReadout(s, false)).toBe(false);
    expect(s.pinned).toBe(true);
    expect(takeReadout(s, true)).toBe(true);
    releaseReadout(s);
    expect(takeReadout(s, false)).toBe(true);
  });

  it("a pinned panel stays the one to show again after another excitation is chosen; a hovered one does not", () => {
    const s = createViewerState(2);
    takeReadout(s, false, 5);
    expect(pinnedPanel(s)).toBe(-1);
    takeReadout(s, true, 7);
    takeReadout(s, false, 9); // a hover while pinned changes nothing
    chooseExcitation(s, 1);
    expect(pinnedPanel(s)).toBe(7);
    releaseReadout(s);
    expect(pinnedPanel(s)).toBe(-1);
  });

  it("motion: proxies while moving, a full frame owed on rest only if a coarse one was drawn", () => {
    const s = createViewerState(1);
    expect(frameDrawn(s)).toBe("full");
    expect(s.motion.drewCoarse).toBe(false);
    expect(startMotion(s)).toBe(true);
    expect(startMotion(s)).toBe(false); // already moving: detail need not switch again
    expect(endMotion(s)).toBe(false); // moved but nothing drawn meanwhile
    expect(endMotion(s)).toBe(null); // already at rest
    startMotion(s);
    expect(frameDrawn(s)).toBe("proxy");
    expect(endMotion(s)).toBe(true);
    expect(s.motion.drewCoarse).toBe(false);
    expect(frameDrawn(s)).toBe("full");
  });

  it("waits longer before settling while a drag is held", () => {
    const s = createViewerState(1);
    expect(settleDelay(s)).toBe(SETTLE_MS);
    s.motion.interacting = true;
    expect(settleDelay(s)).toBe(SETTLE_HELD_MS);
    expect(SETTLE_HELD_MS).toBeGreaterThan(SETTLE_MS);
  });

  it("shows a conductor's proxy only while moving and only if it has one; a hidden conductor shows nothing", () => {
    const s = createViewerState(2);
    s.conductors[1].visible = false;
    expect(conductorDetail(s, 0, true)).toEqual({ mesh: true, proxy: false });
    s.motion.moving = true;
    expect(conductorDetail(s, 0, true)).toEqual({ mesh: false, proxy: true });
    expect(conductorDetail(s, 0, false)).toEqual({ mesh: true, proxy: false });
    expect(conductorDetail(s, 1, true)).toEqual({ mesh: false, proxy: false });
  });

  it("draws front faces only on an opaque, unclipped, closed conductor of an unmirrored model", () => {
    const s = createViewerState(1);
    expect(frontFacesOnly(s, 0, true, false)).toBe(true);
    expect(frontFacesOnly(s, 0, false, false)).toBe(false); // open sheet: seen from both sides
    expect(frontFacesOnly(s, 0, true, true)).toBe(false); // cut open at a symmetry plane
    s.conductors[0].opacity = 0.95;
    expect(frontFacesOnly(s, 0, true, false)).toBe(false);
    s.conductors[0].opacity = 1;
    s.clip.on = true;
    expect(frontFacesOnly(s, 0, true, false)).toBe(false);
  });
});

describe("clipPlaneOf", () => {
  const min = [-1, -2, -3], max = [1, 2, 5];
  const side = (p: { normal: number[]; constant: number }, x: number[]): number => p.normal[0] * x[0] + p.normal[1] * x[1] + p.normal[2] * x[2] + p.constant;

  it("puts the plane at the fraction of the box along its axis and keeps the lower side", () => {
    const clip: ClipState = { on: true, axis: 2, position: 0.25, flip: false };
    const p = clipPlaneOf(clip, min, max);
    // z = -3 + 0.25 · 8 = -1
    expect(p.normal.map((x) => x + 0)).toEqual([0, 0, -1]); // (+0 for -0: the zero components' sign does not matter)
    expect(p.constant).toBe(-1);
    expect(side(p, [0, 0, -2])).toBeGreaterThan(0);
    expect(side(p, [0, 0, 0])).toBeLessThan(0);
    expect(side(p, [7, -9, -1])).toBe(0);
  });

  it("keeps the other side when flipped", () => {
    const p = clipPlaneOf({ on: true, axis: 0, position: 0.75, flip: true }, min, max);
    // x = -1 + 0.75 · 2 = 0.5
    expect(p.normal).toEqual([1, 0, 0]);
    expect(p.constant).toBe(-0.5);
    expect(side(p, [0.6, 0, 0])).toBeGreaterThan(0);
    expect(side(p, [0.4, 0, 0])).toBeLessThan(0);
  });

  it("spans the whole box from position 0 to 1", () => {
    const at = (position: number): number => -clipPlaneOf({ on: true, axis: 1, position, flip: true }, min, max).constant;
    expect(at(0)).toBe(-2);
    expect(at(1)).toBe(2);
    expect(at(0.5)).toBe(0);
  });
});
