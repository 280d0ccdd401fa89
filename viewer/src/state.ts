/**
 * The viewer's UI state: ONE object, made by `createViewerState` in main.ts and passed to
 * every module (scene, detail, picking, colouring, panels). It holds what the user chose and
 * what the view is doing; everything drawn follows from it and the page data. The
 * transitions are plain functions over it, so they are tested without a browser
 * (tests/viewer/state.test.ts).
 */

export type Quantity = "field" | "sigma";
export type Scale = "linear" | "log";
/** Axis index of the clipping plane's normal: 0 x, 1 y, 2 z. */
export type Axis = 0 | 1 | 2;

export interface ConductorState {
  visible: boolean;
  /** 0.1 … 1 */
  opacity: number;
}

export interface ClipState {
  on: boolean;
  axis: Axis;
  /** Where the plane sits across the model's bounding box along `axis`, 0 … 1. */
  position: number;
  /** Keep the other side (the side the axis points to). */
  flip: boolean;
}

/** The view is "moving" from a user's drag, wheel or key (or a flight) until it has rested; proxies are drawn meanwhile. */
export interface MotionState {
  moving: boolean;
  /** A drag (or key or wheel) of the orbit controls goes on. */
  interacting: boolean;
  /** A frame was drawn while moving (so the full mesh must be drawn on settling). */
  drewCoarse: boolean;
  /** A flight moves the camera (counts as motion, like user input). */
  flying: boolean;
  /** Number of the latest flight; an older flight stops at its next step. */
  flight: number;
  settleTimer: number;
  proxiesBuilt: boolean;
}

export interface ViewerState {
  /** Index into the page data's excitations. */
  excitation: number;
  quantity: Quantity;
  scale: Scale;
  edges: boolean;
  /** Hot spot flown to (index into the excitation's hot spots), -1 none. */
  selectedSpot: number;
  /** The read-out holds a clicked panel: hovering does not replace it. */
  pinned: boolean;
  /** The panel the read-out shows, -1 none (a pinned one is shown again for another excitation). */
  readoutPanel: number;
  conductors: ConductorState[];
  /** Dielectric bodies (data order), then the ground plane: drawn translucent at first. */
  surroundings: ConductorState[];
  clip: ClipState;
  motion: MotionState;
  /** A frame is already requested for the next animation frame. */
  renderQueued: boolean;
}

/** Opacity of the dielectric bodies and the ground plane on opening: the conductors inside and beyond stay in view. */
export const SURROUNDING_OPACITY = 0.3;

/** The state of a freshly opened page with `conductors` conductors and `surroundings` bodies and planes. */
export function createViewerState(conductors: number, surroundings = 0): ViewerState {
  return {
    excitation: 0, quantity: "field", scale: "linear", edges: false, selectedSpot: -1, pinned: false, readoutPanel: -1,
    conductors: Array.from({ length: conductors }, () => ({ visible: true, opacity: 1 })),
    surroundings: Array.from({ length: surroundings }, () => ({ visible: true, opacity: SURROUNDING_OPACITY })),
    clip: { on: false, axis: 0, position: 0.5, flip: false },
    motion: { moving: false, interacting: false, drewCoarse: false, flying: false, flight: 0, settleTimer: 0, proxiesBuilt: false },
    renderQueued: false,
  };
}

/** Another excitation: its hot spots are other ones, so no spot stays selected. */
export function chooseExcitation(s: ViewerState, excitation: number): void {
  s.excitation = excitation;
  s.selectedSpot = -1;
}

/** The axis index of the plane control's value ("x", "y", "z"). */
export function axisOf(name: string): Axis {
  return name === "x" ? 0 : name === "y" ? 1 : 2;
}

/**
 * Whether a panel's values replace the read-out: a click (pin) always does and pins it, a
 * hover only when nothing is pinned.
 */
export function takeReadout(s: ViewerState, pin: boolean, panel = -1): boolean {
  if (s.pinned && !pin) return false;
  s.pinned = pin;
  s.readoutPanel = panel;
  return true;
}

/** The panel whose values must be shown again after the excitation or quantity changed (-1: none, the read-out is not pinned). */
export function pinnedPanel(s: ViewerState): number {
  return s.pinned ? s.readoutPanel : -1;
}

/** A click on empty space: hovering shows panels again. */
export function releaseReadout(s: ViewerState): void {
  s.pinned = false;
}

/** Motion begins or goes on; true when the view was at rest until now (detail must switch to proxies). */
export function startMotion(s: ViewerState): boolean {
  if (s.motion.moving) return false;
  s.motion.moving = true;
  return true;
}

/** The full mesh is drawn once the view has not moved for this long; ms. */
export const SETTLE_MS = 160;
/** The same while a drag goes on (the button still held: more motion is likely); ms. */
export const SETTLE_HELD_MS = 400;

/** How long the view must rest before it counts as settled; ms. */
export function settleDelay(s: ViewerState): number {
  return s.motion.interacting ? SETTLE_HELD_MS : SETTLE_MS;
}

/**
 * Motion ends. Returns null when the view was already at rest, otherwise whether a coarse
 * frame was drawn while it moved (then a full-detail frame is owed).
 */
export function endMotion(s: ViewerState): boolean | null {
  if (!s.motion.moving) return null;
  s.motion.moving = false;
  const drew = s.motion.drewCoarse;
  s.motion.drewCoarse = false;
  return drew;
}

/** A frame was drawn (proxies count only while moving). */
export function frameDrawn(s: ViewerState): "proxy" | "full" {
  if (s.motion.moving) s.motion.drewCoarse = true;
  return s.motion.moving ? "proxy" : "full";
}

/** What a conductor shows: its full mesh, its proxy (while moving, if it has one), or nothing (hidden). */
export function conductorDetail(s: ViewerState, c: number, hasProxy: boolean): { mesh: boolean; proxy: boolean } {
  const coarse = s.motion.moving && hasProxy;
  const visible = s.conductors[c].visible;
  return { mesh: visible && !coarse, proxy: visible && coarse };
}

/**
 * Whether only front faces of conductor `c` need drawing. The back faces of a closed
 * conductor (extract winds every closed surface outward) lie behind its front faces;
 * skipping them takes a third off a software-rendered frame. They are drawn wherever they
 * can show: past the clipping plane, through a translucent surface, and on a part cut open
 * at a symmetry plane (closed only in the full model).
 */
export function frontFacesOnly(s: ViewerState, c: number, closed: boolean, symmetric: boolean): boolean {
  return closed && !symmetric && !s.clip.on && s.conductors[c].opacity >= 1;
}

/**
 * The clipping plane as three.js takes it (points x with n·x + constant ≥ 0 are kept), for
 * a model whose bounding box runs from `min` to `max` (model frame, same unit).
 */
export function clipPlaneOf(clip: ClipState, min: ArrayLike<number>, max: ArrayLike<number>): { normal: [number, number, number]; constant: number } {
  const i = clip.axis;
  const lo = min[i], hi = max[i];
  const at = lo + clip.position * (hi - lo);
  const s = clip.flip ? 1 : -1;
  return { normal: [(i === 0 ? 1 : 0) * s, (i === 1 ? 1 : 0) * s, (i === 2 ? 1 : 0) * s], constant: -s * at };
}
