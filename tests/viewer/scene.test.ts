// The viewer's scene and its detail switch (viewer/src/scene.ts, detail.ts) in Node: three.js
// builds meshes, materials and planes without WebGL, so the scene is made here as a page
// without WebGL would make it, and checked against the ViewerState: one mesh per conductor,
// per-panel colours, faces, opacity, clipping, edges, fitting, hot-spot markers, and the
// proxies drawn while the view moves and dropped when it rests.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import * as THREE from "three";
import { sphereMesh, plateMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes } from "../../src/mesh/model.js";
import {
  panelLists, createScene, applyVisibility, applyClip, applyEdges, recolourMeshes, fit, fitDistance, markerPositions,
  placeMarkers, shownMeshes, groundRectangle, applySurrounding, GROUND_MARGIN, type SceneView,
} from "../../viewer/src/scene.js";
import {
  usesProxies, pixelRatio, buildProxies, motion, settle, endInteraction, PROXY_ABOVE_PANELS, PROXY_ABOVE_PANELS_GPU,
  MOVING_PIXELS, type DetailContext, type RenderLoop,
} from "../../viewer/src/detail.js";
import { createViewerState, SURROUNDING_OPACITY, type ViewerState } from "../../viewer/src/state.js";
import { colourScale, colourTables, wordsOf } from "../../viewer/src/colour-scale.js";
import type { ViewerData, HotSpot } from "../../viewer/src/data.js";

describe("plain parts", () => {
  it("groups the panels by conductor, in panel order", () => {
    const { counts, lists } = panelLists(Uint32Array.of(1, 0, 1, 2, 1), 3);
    expect(Array.from(counts)).toEqual([1, 3, 1]);
    expect(lists.map((l) => Array.from(l))).toEqual([[1], [0, 2, 4], [3]]);
  });

  it("fits a sphere of radius r at 1.15 r / sin(fov / 2)", () => {
    expect(fitDistance(2, 90)).toBeCloseTo(2.3 / Math.SQRT1_2, 12);
    expect(fitDistance(1, 60)).toBeCloseTo(2.3, 12);
  });

  it("places hot-spot markers relative to the data's origin", () => {
    const spots = [{ at: [1, 2, 3] }, { at: [-1, 0.5, 0] }] as HotSpot[];
    expect(Array.from(markerPositions(spots, [1, 1, 1]))).toEqual([0, 1, 2, -2, -0.5, -1]);
  });

  it("draws proxies above 60k panels in software and 2M with a GPU", () => {
    expect(usesProxies(PROXY_ABOVE_PANELS, true)).toBe(false);
    expect(usesProxies(PROXY_ABOVE_PANELS + 1, true)).toBe(true);
    expect(usesProxies(PROXY_ABOVE_PANELS + 1, false)).toBe(false);
    expect(usesProxies(PROXY_ABOVE_PANELS_GPU + 1, false)).toBe(true);
  });

  it("draws every pixel at rest, and at most MOVING_PIXELS while moving in software", () => {
    expect(pixelRatio(false, true, 2, 1600, 1000)).toBe(2);
    expect(pixelRatio(false, false, 3, 100, 100)).toBe(2);
    expect(pixelRatio(false, false, 0, 100, 100)).toBe(1);
    expect(pixelRatio(true, false, 2, 1600, 1000)).toBe(2);
    const r = pixelRatio(true, true, 2, 1600, 1000);
    expect(r * r * 1600 * 1000).toBeCloseTo(MOVING_PIXELS, 6);
    expect(pixelRatio(true, true, 1, 400, 300)).toBe(1); // small: every pixel kept
  });
});

// ---- A scene as a page without WebGL makes it ----

/**
 * A level-5 sphere (20480 panels, closed) and a wide 4 × 4 plate (32 panels, open) below it;
 * the plate's area leaves the sphere a small share of the proxy budget, so it gets a proxy.
 */
function sample(): ViewerData {
  const m = concatMeshes([
    sphereMesh({ radius: 1, level: 5, center: [0, 0, 0], name: "ball" }),
    plateMesh({ size: [30, 30], divisions: 4, center: [0, 0, -2], name: "plate" }),
  ]);
  const n = m.triangles.length / 3;
  const P = m.positions, T = m.triangles;
  const areas = Float32Array.from({ length: n }, (_, p) => {
    const [a, b, c] = [3 * T[3 * p], 3 * T[3 * p + 1], 3 * T[3 * p + 2]];
    const u = [P[b] - P[a], P[b + 1] - P[a + 1], P[b + 2] - P[a + 2]], w = [P[c] - P[a], P[c + 1] - P[a + 1], P[c + 2] - P[a + 2]];
    return 0.5 * Math.hypot(u[1] * w[2] - u[2] * w[1], u[2] * w[0] - u[0] * w[2], u[0] * w[1] - u[1] * w[0]);
  });
  const field = Float32Array.from({ length: n }, (_, p) => (m.conductor[p] === 0 ? 2 : 1));
  return {
    names: m.names, closed: [true, false], origin: [0, 0, 0],
    positions: Float32Array.from(m.positions), triangles: m.triangles, panelConductor: m.conductor,
    areas, breakdownField: 3e6, permittivity: 8.85e-12,
    excitations: [{
      id: "scene", potentials: [1, 0], sigma: new Float32Array(n), field, sigmaRange: [0, 0], fieldRange: [1, 2], fieldMinPositive: 1,
      sheetFieldBound: false, hotSpots: [{ panel: 0, conductor: 0, field: 2, sigma: 0, at: [0, 0, 1], fieldRatio: 0 }],
    }],
  };
}

/** The bits of an element the scene touches. */
function stub(): any {
  const classes: string[] = [];
  return { textContent: "", dataset: {} as Record<string, string>, classList: { add: (c: string) => classes.push(c) }, classes };
}

const g = globalThis as Record<string, unknown>;
const saved = { document: g.document, window: g.window };
beforeAll(() => {
  // No WebGL: the probe canvas has no context. Canvases for textures get a 2D context of nothing.
  g.document = { createElement: () => ({ getContext: () => null }) };
  g.window = globalThis;
});
afterAll(() => { g.document = saved.document; g.window = saved.window; });

function scene(v: ViewerData, state: ViewerState): { sv: SceneView; glNote: any; root: any; lists: Uint32Array[]; counts: Uint32Array } {
  const { counts, lists } = panelLists(v.panelConductor, v.names.length);
  const glNote = stub(), root = stub();
  const sv = createScene(v, {}, state, lists, {} as HTMLCanvasElement, glNote, root);
  return { sv, glNote, root, lists, counts };
}

describe("createScene without WebGL", () => {
  const v = sample();
  const state = createViewerState(2);
  const { sv, glNote, root, lists } = scene(v, state);

  it("says so, and builds the meshes all the same", () => {
    expect(sv.renderer).toBeNull();
    expect(sv.controls).toBeNull();
    expect(glNote.dataset.kind).toBe("missing");
    expect(glNote.classes).toContain("sm-glmissing");
    expect(root.dataset.webgl).toBe("missing");
    expect(sv.views.map((cv) => cv.panels.length)).toEqual([20480, 32]);
  });

  it("gives every panel its own three vertices, at the data's positions", () => {
    const cv = sv.views[1];
    const pos = cv.mesh.geometry.attributes.position.array as Float32Array;
    expect(pos.length).toBe(9 * 32);
    const p = lists[1][5];
    for (let j = 0; j < 3; j++) {
      const vtx = v.triangles[3 * p + j];
      expect(Array.from(pos.subarray(45 + 3 * j, 48 + 3 * j))).toEqual(Array.from(v.positions.subarray(3 * vtx, 3 * vtx + 3)));
    }
    expect(cv.mesh.userData.conductor).toBe(1);
    expect(sv.radius).toBeGreaterThan(2);
  });

  it("draws only the front faces of the closed sphere, both faces of the open plate", () => {
    expect(sv.views[0].material.side).toBe(THREE.FrontSide);
    expect(sv.views[1].material.side).toBe(THREE.DoubleSide);
  });

  it("colours each conductor's panels from its values", () => {
    const e = v.excitations[0];
    const words = wordsOf(colourTables(), "field");
    const before = sv.views[0].mesh.geometry.attributes.color.version;
    recolourMeshes(sv, e.field, colourScale(e, "field", "linear"), words);
    expect(sv.views[0].colours.every((w) => w === words[255])).toBe(true); // |E| = 2, the peak
    expect(sv.views[1].colours.every((w) => w === words[128])).toBe(true); // |E| = 1, half of it
    expect(sv.views[0].mesh.geometry.attributes.color.version).toBeGreaterThan(before);
  });

  it("makes a translucent conductor draw both faces without writing depth, and hides a hidden one", () => {
    state.conductors[0].opacity = 0.5;
    applyVisibility(sv, state, sv.views[0]);
    const m = sv.views[0].material;
    expect([m.opacity, m.transparent, m.depthWrite, m.side]).toEqual([0.5, true, false, THREE.DoubleSide]);
    state.conductors[0].opacity = 1;
    state.conductors[1].visible = false;
    applyVisibility(sv, state, sv.views[0]);
    applyVisibility(sv, state, sv.views[1]);
    expect([m.transparent, m.depthWrite, m.side]).toEqual([false, true, THREE.FrontSide]);
    expect(sv.views[1].mesh.visible).toBe(false);
    expect(shownMeshes(sv, state)).toEqual([sv.views[0].mesh]);
    state.conductors[1].visible = true;
    applyVisibility(sv, state, sv.views[1]);
  });

  it("clips every material at the plane of the state, and then draws back faces", () => {
    state.clip = { on: true, axis: 2, position: 0.5, flip: true };
    applyClip(sv, state);
    const plane = sv.clipPlane;
    const mid = (sv.box.min.z + sv.box.max.z) / 2;
    expect(plane.distanceToPoint(new THREE.Vector3(0, 0, mid + 0.1))).toBeCloseTo(0.1, 6);
    for (const cv of sv.views) {
      expect(cv.material.clippingPlanes).toEqual([plane]);
      expect(cv.material.side).toBe(THREE.DoubleSide);
    }
    state.clip.on = false;
    applyClip(sv, state);
    expect(sv.views[0].material.clippingPlanes).toEqual([]);
    expect(sv.views[0].material.side).toBe(THREE.FrontSide);
  });

  it("switches the shader's mesh edges on every conductor", () => {
    applyEdges(sv, true);
    expect(sv.views.map((cv) => cv.edgeSwitch.value)).toEqual([1, 1]);
    applyEdges(sv, false);
    expect(sv.views.map((cv) => cv.edgeSwitch.value)).toEqual([0, 0]);
  });

  it("fits the camera to the shown conductors", () => {
    state.conductors[1].visible = false;
    sv.camera.position.set(1, -1.3, 0.9);
    fit(sv, state);
    // Only the sphere is shown: the camera looks at its box's bounding sphere from fitDistance away.
    const b = new THREE.Sphere();
    new THREE.Box3().setFromObject(sv.views[0].mesh).getBoundingSphere(b);
    expect(b.radius).toBeCloseTo(Math.sqrt(3), 2);
    expect(sv.camera.position.distanceTo(b.center)).toBeCloseTo(fitDistance(b.radius, sv.camera.fov), 9);
    // The direction of view is kept.
    const dir = sv.camera.position.clone().sub(b.center).normalize();
    expect(dir.dot(new THREE.Vector3(1, -1.3, 0.9).normalize())).toBeCloseTo(1, 9);
    state.conductors[1].visible = true;
  });

  it("marks the hot spots, and the selected one with a second ring", () => {
    placeMarkers(sv, v, state);
    expect(sv.markers.children).toHaveLength(1);
    state.selectedSpot = 0;
    placeMarkers(sv, v, state);
    expect(sv.markers.children).toHaveLength(2);
    expect(Array.from(sv.markers.children[1].geometry.attributes.position.array)).toEqual([0, 0, 1]);
    state.selectedSpot = -1;
  });
});

describe("proxies while the view moves", () => {
  const v = sample();
  const state = createViewerState(2);
  const { sv, root, counts } = scene(v, state);
  const calls: string[] = [];
  const loop: RenderLoop = { render: () => calls.push("render"), requestRender: () => calls.push("request"), sizeBuffer: () => { calls.push("size"); return true; } };
  const ctx: DetailContext = { root, v, state, sv, loop, counts, useProxies: true };

  it("builds a coarse proxy for the large sphere only, once", () => {
    buildProxies(ctx);
    const [ball, plate] = sv.views;
    expect(ball.proxy).not.toBeNull();
    expect(plate.proxy).toBeNull();
    const nt = ball.proxySource!.length;
    expect(nt).toBeGreaterThan(100);
    expect(nt).toBeLessThan(ball.panels.length / 4);
    expect(Number(root.dataset.proxyPanels)).toBe(nt + 32);
    expect(ball.proxy.visible).toBe(false);
    const first = ball.proxy;
    buildProxies(ctx);
    expect(ball.proxy).toBe(first);
  });

  it("draws the proxy while moving and the full mesh once the view rests", async () => {
    const [ball, plate] = sv.views;
    state.motion.interacting = true;
    motion(ctx);
    expect(state.motion.moving).toBe(true);
    expect([ball.mesh.visible, ball.proxy.visible, plate.mesh.visible]).toEqual([false, true, true]);
    state.motion.drewCoarse = true;
    endInteraction(ctx);
    expect(state.motion.interacting).toBe(false);
    await new Promise((r) => setTimeout(r, 250)); // SETTLE_MS after the end of the drag
    expect(state.motion.moving).toBe(false);
    expect([ball.mesh.visible, ball.proxy.visible]).toEqual([true, false]);
    expect(calls).toContain("request"); // a coarse frame was drawn: the full one is owed
  });

  it("gives a proxy triangle the colour of its source panel", () => {
    const ball = sv.views[0];
    const e = v.excitations[0];
    recolourMeshes(sv, e.field, colourScale(e, "field", "linear"), wordsOf(colourTables(), "field"));
    const src = ball.proxySource!;
    for (const i of [0, 7, src.length - 1]) expect(ball.proxyColours![3 * i]).toBe(ball.colours[3 * src[i]]);
  });

  it("does nothing on a model too small for proxies", () => {
    const s2 = createViewerState(2);
    const small = scene(v, s2);
    const c2: DetailContext = { ...ctx, state: s2, sv: small.sv, root: small.root, useProxies: false };
    motion(c2);
    settle(c2);
    expect(s2.motion.moving).toBe(false);
    expect(small.sv.views[0].proxy).toBeNull();
  });
});

describe("dielectric bodies and the ground plane", () => {
  // The sample with a slab under the ball (a box's six faces, two triangles each, body 0) and a
  // ground plane at z = -3 (the data's origin at z = 0.5: drawn at -3.5).
  function withSurroundings(): ViewerData {
    const v = sample();
    v.origin = [0, 0, 0.5];
    const c = [[-2, -1, -1.5], [2, 1, -0.5]];
    const positions = new Float32Array(24);
    for (let i = 0; i < 8; i++) { positions[3 * i] = c[i & 1][0]; positions[3 * i + 1] = c[(i >> 1) & 1][1]; positions[3 * i + 2] = c[(i >> 2) & 1][2]; }
    const triangles = Uint32Array.of(0, 1, 3, 0, 3, 2, 4, 7, 5, 4, 6, 7, 0, 5, 1, 0, 4, 5, 2, 3, 7, 2, 7, 6, 0, 2, 6, 0, 6, 4, 1, 5, 7, 1, 7, 3);
    v.bodies = { names: ["slab"], permittivity: [4], positions, triangles, body: new Uint32Array(12) };
    v.groundPlane = { axis: 2, offset: -3 };
    return v;
  }

  it("draws the ground plane as a rectangle at its height around everything, with a margin", () => {
    const v = withSurroundings();
    const r = groundRectangle(v);
    // The plate (30 wide) is the widest part: the rectangle spans it and a margin on each side.
    const half = 15 + GROUND_MARGIN * 30;
    for (let i = 0; i < 4; i++) {
      expect(r[3 * i + 2]).toBeCloseTo(-3.5, 6);
      expect(Math.abs(r[3 * i])).toBeCloseTo(half, 4);
      expect(Math.abs(r[3 * i + 1])).toBeCloseTo(half, 4);
    }
    // A plane across x: the rectangle lies in y and z at that x.
    v.groundPlane = { axis: 0, offset: 7 };
    const q = groundRectangle(v);
    for (let i = 0; i < 4; i++) expect(q[3 * i]).toBe(7);
  });

  it("adds one translucent mesh per body and one for the plane, never picked or fitted, each shown and hidden by its state", () => {
    const v = withSurroundings();
    const state = createViewerState(2, 2);
    const { sv } = scene(v, state);
    expect(sv.surroundings.map((s) => s.body)).toEqual([0, -1]);
    const [slab, ground] = sv.surroundings;
    expect(slab.mesh.geometry.index.count).toBe(36);
    expect(ground.mesh.geometry.index.count).toBe(6);
    for (const s of sv.surroundings) {
      expect(sv.scene.children).toContain(s.mesh);
      expect(s.material.transparent).toBe(true);
      expect(s.material.opacity).toBe(SURROUNDING_OPACITY);
      expect(s.material.side).toBe(THREE.DoubleSide);
      expect(shownMeshes(sv, state)).not.toContain(s.mesh);
    }
    state.surroundings[1].visible = false;
    applySurrounding(ground, state.surroundings[1]);
    expect(ground.mesh.visible).toBe(false);
    state.surroundings[0].opacity = 1;
    applySurrounding(slab, state.surroundings[0]);
    expect(slab.material.opacity).toBe(1);
    expect(slab.material.depthWrite).toBe(true);
    // The clipping plane cuts them as it cuts the conductors.
    state.clip.on = true;
    applyClip(sv, state);
    expect(slab.material.clippingPlanes).toEqual([sv.clipPlane]);
    expect(ground.material.clippingPlanes).toEqual([sv.clipPlane]);
  });
});
