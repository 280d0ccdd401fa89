/**
 * The three.js side of the page: scene, camera, lights, the renderer (or its absence), one
 * mesh per conductor, their visibility, opacity, edges and clipping, the hot-spot markers and
 * fitting the camera to the model.
 *
 * One BufferGeometry per conductor, three vertices per panel (so colours are per panel),
 * positions and sRGB colour bytes only (normals and edges come from the shader, see
 * panel-material.ts). What is drawn follows the ViewerState (state.ts); the render loop and
 * the proxies drawn while the view moves are in detail.ts.
 */
import * as THREE from "three";
import { OrbitControls } from "three/examples/jsm/controls/OrbitControls.js";
import type { HotSpot, ViewerData } from "./data.js";
import { panelMaterial, type PanelMaterial } from "./panel-material.js";
import { fillPanelColours, copyProxyColours, type ColourScale } from "./colour-scale.js";
import { clipPlaneOf, conductorDetail, frontFacesOnly, type ConductorState, type ViewerState } from "./state.js";

const MARKER_COLOUR = 0xff00ff;

export interface ConductorView {
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
}

export interface SceneView {
  scene: any;
  camera: any;
  /** Bounding box and radius of the whole model (positions relative to the data's origin). */
  box: any;
  radius: number;
  clipPlane: any;
  markers: any;
  ring: any | null;
  views: ConductorView[];
  /** null: no WebGL; the tables and lists still work. */
  renderer: any | null;
  /** The renderer draws on the CPU (SwiftShader, llvmpipe). */
  software: boolean;
  controls: any | null;
  closed: boolean[];
  /** Cut at a symmetry plane: a closed part is open in the drawn half. */
  symmetric: boolean;
  /** Dielectric bodies (data order), then the ground plane: translucent, never picked or fitted. */
  surroundings: SurroundingView[];
}

export interface SurroundingView {
  /** Body index, -1 for the ground plane. */
  body: number;
  mesh: any;
  material: any;
}

const BODY_COLOUR = 0x6f8fb0;
const GROUND_COLOUR = 0x8c8272;
/** Margin of the drawn ground plane around the model, as a share of the model's larger extent in the plane. */
export const GROUND_MARGIN = 0.3;

/** The panels of each conductor (indices into the page data's panels), in panel order. */
export function panelLists(panelConductor: Uint32Array, k: number): { counts: Uint32Array; lists: Uint32Array[] } {
  const counts = new Uint32Array(k);
  for (let p = 0; p < panelConductor.length; p++) counts[panelConductor[p]]++;
  const lists = Array.from({ length: k }, (_, c) => new Uint32Array(counts[c]));
  const fill = new Uint32Array(k);
  for (let p = 0; p < panelConductor.length; p++) { const c = panelConductor[p]; lists[c][fill[c]++] = p; }
  return { counts, lists };
}

/** A WebGL renderer on `canvas`, or null with the reason shown in `glNote` when the browser has none. */
function createRenderer(canvas: HTMLCanvasElement, glNote: HTMLElement, root: HTMLElement): { renderer: any | null; software: boolean } {
  try {
    const probe = document.createElement("canvas");
    const gl = (probe.getContext("webgl2") || probe.getContext("webgl")) as WebGLRenderingContext | null;
    if (!gl) throw new Error("no WebGL context");
    const info = gl.getExtension("WEBGL_debug_renderer_info");
    const name = info ? String(gl.getParameter(info.UNMASKED_RENDERER_WEBGL)) : "";
    const software = /swiftshader|llvmpipe|software/i.test(name);
    // Multisampling on the CPU costs about 3x per frame at 300k panels (tests/bench/viewer.bench.mjs).
    const renderer = new THREE.WebGLRenderer({ canvas, antialias: !software, preserveDrawingBuffer: true });
    if (software) {
      glNote.textContent = "Software rendering (no GPU acceleration): large models may respond slowly.";
      glNote.dataset.kind = "software";
    }
    return { renderer, software };
  } catch {
    glNote.textContent = "WebGL is not available in this browser, so the 3D view cannot be drawn. Every number is still in the tables and the hot-spot list.";
    glNote.dataset.kind = "missing";
    glNote.classList.add("sm-glmissing");
    root.dataset.webgl = "missing";
    return { renderer: null, software: false };
  }
}

/** Scene, camera, lights, renderer and the conductor meshes (uncoloured until `recolourMeshes`). */
export function createScene(v: ViewerData, report: Record<string, any>, state: ViewerState, lists: Uint32Array[],
  canvas: HTMLCanvasElement, glNote: HTMLElement, root: HTMLElement): SceneView {
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

  const { renderer, software } = createRenderer(canvas, glNote, root);
  const symmetric = ((report.model?.symmetry as unknown[] | undefined)?.length ?? 0) > 0;
  const sv: SceneView = {
    scene, camera, box, radius, clipPlane, markers, ring: null, views: [], renderer, software,
    controls: null, closed: v.closed, symmetric, surroundings: [],
  };
  for (let c = 0; c < lists.length; c++) sv.views.push(conductorMesh(sv, v, state, c, lists[c]));
  sv.surroundings = surroundingMeshes(v);
  sv.surroundings.forEach((s, i) => { applySurrounding(s, state.surroundings[i]); scene.add(s.mesh); });
  sv.controls = renderer ? new OrbitControls(camera, canvas) : null;
  if (renderer) renderer.localClippingEnabled = true;
  return sv;
}

/**
 * The ground plane as a rectangle at its offset, around everything drawn (conductors and
 * bodies) with a margin: four corners in the frame of the drawn positions, 3 numbers each.
 */
export function groundRectangle(v: ViewerData): Float32Array {
  const g = v.groundPlane!;
  const a = g.axis, u = (a + 1) % 3, w = (a + 2) % 3;
  const lo = [Infinity, Infinity, Infinity], hi = [-Infinity, -Infinity, -Infinity];
  for (const P of [v.positions, v.bodies?.positions ?? new Float32Array(0)]) {
    for (let i = 0; i < P.length; i += 3) for (let j = 0; j < 3; j++) { lo[j] = Math.min(lo[j], P[i + j]); hi[j] = Math.max(hi[j], P[i + j]); }
  }
  const span = Math.max(hi[u] - lo[u], hi[w] - lo[w], 1e-12);
  const m = GROUND_MARGIN * span;
  const at = g.offset - v.origin[a];
  const corners = [[lo[u] - m, lo[w] - m], [hi[u] + m, lo[w] - m], [hi[u] + m, hi[w] + m], [lo[u] - m, hi[w] + m]];
  const out = new Float32Array(12);
  corners.forEach(([x, y], i) => { out[3 * i + a] = at; out[3 * i + u] = x; out[3 * i + w] = y; });
  return out;
}

/** One translucent mesh per dielectric body and one for the ground plane. */
function surroundingMeshes(v: ViewerData): SurroundingView[] {
  const out: SurroundingView[] = [];
  const material = (colour: number): any => new THREE.MeshLambertMaterial({
    color: colour, transparent: true, depthWrite: false, side: THREE.DoubleSide,
  });
  const b = v.bodies;
  if (b) {
    const count = new Uint32Array(b.names.length);
    for (let t = 0; t < b.body.length; t++) count[b.body[t]]++;
    for (let i = 0; i < b.names.length; i++) {
      const tri = new Uint32Array(3 * count[i]);
      for (let t = 0, a = 0; t < b.body.length; t++) if (b.body[t] === i) { tri[a++] = b.triangles[3 * t]; tri[a++] = b.triangles[3 * t + 1]; tri[a++] = b.triangles[3 * t + 2]; }
      const g = new THREE.BufferGeometry();
      g.setAttribute("position", new THREE.BufferAttribute(b.positions, 3));
      g.setIndex(new THREE.BufferAttribute(tri, 1));
      g.computeVertexNormals();
      g.computeBoundingSphere();
      const m = material(BODY_COLOUR);
      const mesh = new THREE.Mesh(g, m);
      mesh.userData.body = i;
      out.push({ body: i, mesh, material: m });
    }
  }
  if (v.groundPlane) {
    const g = new THREE.BufferGeometry();
    g.setAttribute("position", new THREE.BufferAttribute(groundRectangle(v), 3));
    g.setIndex([0, 1, 2, 0, 2, 3]);
    g.computeVertexNormals();
    g.computeBoundingSphere();
    const m = material(GROUND_COLOUR);
    const mesh = new THREE.Mesh(g, m);
    mesh.userData.body = -1;
    out.push({ body: -1, mesh, material: m });
  }
  return out;
}

/** A dielectric body's or the ground plane's visibility and opacity, from its state. */
export function applySurrounding(s: SurroundingView, st: ConductorState): void {
  const { visible, opacity } = st;
  s.mesh.visible = visible;
  s.material.opacity = opacity;
  s.material.depthWrite = opacity >= 1;
  s.material.transparent = opacity < 1;
  s.material.needsUpdate = true;
}

function conductorMesh(sv: SceneView, v: ViewerData, state: ViewerState, c: number, list: Uint32Array): ConductorView {
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
  const { material, edges: edgeSwitch } = panelMaterial(faceSide(sv, state, c));
  const mesh = new THREE.Mesh(geometry, material);
  mesh.userData.conductor = c;
  sv.scene.add(mesh);
  return { index: c, panels: list, mesh, colours, material, edgeSwitch, proxy: null, proxySource: null, proxyColours: null, proxyMaterial: null };
}

/** The faces a conductor's material draws (see `frontFacesOnly`). */
export function faceSide(sv: SceneView, state: ViewerState, c: number): number {
  return frontFacesOnly(state, c, sv.closed[c], sv.symmetric) ? THREE.FrontSide : THREE.DoubleSide;
}

/** A conductor's opacity and visibility from the state, on its mesh and its proxy. */
export function applyVisibility(sv: SceneView, state: ViewerState, cv: ConductorView): void {
  const opacity = state.conductors[cv.index].opacity;
  for (const m of [cv.material, cv.proxyMaterial]) {
    if (!m) continue;
    m.opacity = opacity;
    m.transparent = opacity < 1;
    m.depthWrite = opacity >= 1;
    m.side = faceSide(sv, state, cv.index);
    m.needsUpdate = true;
  }
  applyDetail(state, cv);
}

/** Full mesh or proxy, by whether the view is moving. */
export function applyDetail(state: ViewerState, cv: ConductorView): void {
  const d = conductorDetail(state, cv.index, cv.proxy !== null);
  cv.mesh.visible = d.mesh;
  if (cv.proxy) cv.proxy.visible = d.proxy;
}

/** The meshes of the conductors shown (picking and fitting use the full meshes, never proxies). */
export function shownMeshes(sv: SceneView, state: ViewerState): any[] {
  return sv.views.filter((cv) => state.conductors[cv.index].visible).map((cv) => cv.mesh);
}

/** Every conductor's vertex colours for `values` (per panel) on `scale`, and its proxy's. */
export function recolourMeshes(sv: SceneView, values: ArrayLike<number>, scale: ColourScale, words: Uint32Array): void {
  for (const cv of sv.views) {
    fillPanelColours(cv.colours, cv.panels, values, scale, words);
    cv.mesh.geometry.attributes.color.needsUpdate = true;
    colourProxy(cv);
  }
}

export function colourProxy(cv: ConductorView): void {
  if (!cv.proxy || !cv.proxySource || !cv.proxyColours) return;
  copyProxyColours(cv.proxyColours, cv.colours, cv.proxySource);
  cv.proxy.geometry.attributes.color.needsUpdate = true;
}

/** Mesh edges are drawn by the panel shader of the full mesh only (a proxy's edges are not the mesh's). */
export function applyEdges(sv: SceneView, on: boolean): void {
  for (const cv of sv.views) cv.edgeSwitch.value = on ? 1 : 0;
}

/** The clipping plane of the state on every material (and the faces that then show). */
export function applyClip(sv: SceneView, state: ViewerState): void {
  const { box, clipPlane } = sv;
  const plane = clipPlaneOf(state.clip, [box.min.x, box.min.y, box.min.z], [box.max.x, box.max.y, box.max.z]);
  clipPlane.normal.set(plane.normal[0], plane.normal[1], plane.normal[2]);
  clipPlane.constant = plane.constant;
  const planes = state.clip.on ? [clipPlane] : [];
  for (const s of sv.surroundings) { s.material.clippingPlanes = planes; s.material.needsUpdate = true; }
  for (const cv of sv.views) {
    for (const m of [cv.material, cv.proxyMaterial]) {
      if (!m) continue;
      m.clippingPlanes = planes;
      m.side = faceSide(sv, state, cv.index);
      m.needsUpdate = true;
    }
  }
}

/** Distance from which a sphere of radius `r` fills the view of a camera with vertical field `fov` (degrees), with a margin. */
export function fitDistance(r: number, fov: number): number {
  return (1.15 * r) / Math.sin((fov * Math.PI) / 360);
}

/** The camera turned to the shown conductors (all of them if none is shown), keeping its direction of view. */
export function fit(sv: SceneView, state: ViewerState): void {
  const { camera, controls } = sv;
  const b = new THREE.Box3();
  for (const mesh of shownMeshes(sv, state)) b.expandByObject(mesh);
  if (b.isEmpty()) b.copy(sv.box);
  const s = new THREE.Sphere();
  b.getBoundingSphere(s);
  const r = s.radius > 0 ? s.radius : sv.radius;
  const dist = fitDistance(r, camera.fov);
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
}

/** Hot-spot places in the frame of the drawn positions (the data's origin taken off), 3 per spot. */
export function markerPositions(spots: HotSpot[], origin: ArrayLike<number>): Float32Array {
  const pos = new Float32Array(3 * spots.length);
  spots.forEach((h, i) => {
    pos[3 * i] = h.at[0] - origin[0]; pos[3 * i + 1] = h.at[1] - origin[1]; pos[3 * i + 2] = h.at[2] - origin[2];
  });
  return pos;
}

/** Hot-spot markers of the state's excitation: one Points object drawn over the surfaces, and a ring on the selected one. */
export function placeMarkers(sv: SceneView, v: ViewerData, state: ViewerState): void {
  sv.markers.clear();
  const spots = v.excitations[state.excitation].hotSpots;
  const pos = markerPositions(spots, v.origin);
  const g = new THREE.BufferGeometry();
  g.setAttribute("position", new THREE.BufferAttribute(pos, 3));
  const m = new THREE.PointsMaterial({ color: MARKER_COLOUR, size: 9, sizeAttenuation: false, depthTest: false, map: ringTexture(sv), transparent: true, alphaTest: 0.2 });
  const points = new THREE.Points(g, m);
  points.renderOrder = 10;
  sv.markers.add(points);
  if (state.selectedSpot >= 0 && state.selectedSpot < spots.length) {
    const s = new THREE.BufferGeometry();
    s.setAttribute("position", new THREE.BufferAttribute(pos.slice(3 * state.selectedSpot, 3 * state.selectedSpot + 3), 3));
    const sel = new THREE.Points(s, new THREE.PointsMaterial({ color: 0x000000, size: 18, sizeAttenuation: false, depthTest: false, map: ringTexture(sv), transparent: true, alphaTest: 0.2 }));
    sel.renderOrder = 11;
    sv.markers.add(sel);
  }
}

function ringTexture(sv: SceneView): any {
  if (sv.ring) return sv.ring;
  const c = document.createElement("canvas");
  c.width = c.height = 32;
  const g = c.getContext("2d");
  if (g) {
    g.lineWidth = 6;
    g.strokeStyle = "#ffffff";
    g.beginPath(); g.arc(16, 16, 12, 0, 2 * Math.PI); g.stroke();
  }
  sv.ring = new THREE.CanvasTexture(c);
  return sv.ring;
}
