/**
 * What the 3D viewer needs from an extraction: the panels of the finest mesh, the conductor
 * of each panel, and per excitation the surface charge density σ and the normal field |E|
 * on every panel, with the hot spots (strongest-field panels) of each excitation.
 *
 * Excitations: the scene at its working potentials first, then each conductor at 1 V with
 * the others at 0 V (the columns of the Maxwell matrix, panel by panel).
 *
 * Geometry is stored relative to the centre of the bounding box so that single precision
 * keeps ~1e-7 of the model size wherever the model sits in space; value ranges and hot-spot
 * numbers are kept in double precision so that what the page prints equals the JSON report.
 */
import type { ExtractionResult } from "../extract/result.js";
import { panelExcitation } from "../extract/excitation.js";
import { centroidFields } from "../extract/probe.js";
import { boundingBox } from "../mesh/model.js";
import type { DielectricResult } from "../extract/result.js";

export interface HotSpot {
  /** Panel index (triangle of the finest mesh). */
  panel: number;
  conductor: number;
  /** Normal field strength at the panel; V/m. */
  field: number;
  /** Surface charge density; C/m². */
  sigma: number;
  /** Panel centroid; metres (absolute, not relative to `origin`). */
  at: [number, number, number];
  /** Field over the breakdown strength (≥ 1: breakdown expected there, unless at a sharp edge). */
  fieldRatio: number;
  /** The panel touches a sharp edge (peak-field.ts): its value depends on the mesh and is no breakdown verdict. Absent otherwise. */
  sharpEdge?: true;
}

export interface ViewerExcitation {
  /** "scene" or "unit:<conductor index>". */
  id: string;
  /** Potential of each conductor; volts. */
  potentials: number[];
  /** σ per panel; C/m². */
  sigma: Float32Array;
  /** |E| per panel (stronger face on sheets); V/m. */
  field: Float32Array;
  /** [min, max] of σ over all panels, double precision; C/m². */
  sigmaRange: [number, number];
  /** [min, max] of |E| over all panels, double precision; V/m. */
  fieldRange: [number, number];
  /** Smallest positive |E|, for the lower end of a log scale; V/m. */
  fieldMinPositive: number;
  /** True when the sheet fields of this excitation are the bound |σ|/ε (see `viewerData`). */
  sheetFieldBound: boolean;
  hotSpots: HotSpot[];
}

export interface ViewerData {
  names: string[];
  /** Closed surface per conductor (false: open sheet). */
  closed: boolean[];
  /** Centre of the model's bounding box; metres. `positions` are relative to it. */
  origin: [number, number, number];
  /** Vertex positions relative to `origin`, 3 per vertex; metres. */
  positions: Float32Array;
  /** Vertex indices, 3 per panel. */
  triangles: Uint32Array;
  /** Conductor index of each panel. */
  panelConductor: Uint32Array;
  /** Panel areas; m². */
  areas: Float32Array;
  /** V/m. */
  breakdownField: number;
  /** Absolute permittivity; F/m. */
  permittivity: number;
  excitations: ViewerExcitation[];
  /** What the two-terminal matrix's diagonal refers to (as `ExtractionResult.reference`). */
  reference?: "ground plane" | "infinity";
  /** The grounded plane: axis 0 x, 1 y, 2 z, and its offset in metres (absolute, not relative to `origin`). */
  groundPlane?: { axis: 0 | 1 | 2; offset: number };
  /** Dielectric bodies as solved (their interface panels on the finest mesh), drawn translucent. */
  bodies?: ViewerBodies;
}

/** The surfaces of the dielectric bodies: an indexed mesh of their own, in the frame of `positions`. */
export interface ViewerBodies {
  names: string[];
  /** Relative permittivity inside each body. */
  permittivity: number[];
  /** Vertex positions relative to the data's `origin`, 3 per vertex; metres. */
  positions: Float32Array;
  /** Vertex indices, 3 per triangle. */
  triangles: Uint32Array;
  /** Body index of each triangle. */
  body: Uint32Array;
}

export interface ViewerDataOptions {
  /** Hot spots listed per excitation (default 12). */
  hotSpots?: number;
  /**
   * Budget of panel-pair field evaluations for the exact sheet fields of the unit
   * excitations (default 4e8, a few seconds on one core). Beyond it, unit-excitation
   * sheet fields are the upper bound |σ|/ε and flagged `sheetFieldBound`.
   */
  sheetFieldBudget?: number;
}

/**
 * Hot spots of one excitation: the peak panel of every conductor (so that each conductor's
 * peak in the JSON report is listed), then the strongest remaining panels, skipping panels
 * within `separation` metres of one already listed so that one sharp corner does not fill
 * the list. Sorted by field, strongest first.
 */
export function hotSpots(
  field: ArrayLike<number>, sigma: ArrayLike<number>, panelConductor: Uint32Array, k: number,
  centroids: Float64Array, breakdownField: number, count: number, separation: number,
  sharpPanels?: ArrayLike<number>, peaks?: ReadonlyArray<{ panel: number; value: number; at: [number, number, number] }>,
): HotSpot[] {
  const n = field.length;
  const best = new Int32Array(k).fill(-1);
  for (let p = 0; p < n; p++) {
    const c = panelConductor[p];
    if (best[c] < 0 || field[p] > field[best[c]]) best[c] = p;
  }
  const chosen: number[] = [];
  for (let c = 0; c < k; c++) if (best[c] >= 0) chosen.push(best[c]);
  const order = new Uint32Array(n);
  for (let p = 0; p < n; p++) order[p] = p;
  order.sort((a, b) => field[b] - field[a]);
  const sep2 = separation * separation;
  for (let i = 0; i < n && chosen.length < Math.max(count, k); i++) {
    const p = order[i];
    let near = false;
    for (const q of chosen) {
      const dx = centroids[3 * p] - centroids[3 * q], dy = centroids[3 * p + 1] - centroids[3 * q + 1], dz = centroids[3 * p + 2] - centroids[3 * q + 2];
      if (q === p || dx * dx + dy * dy + dz * dz < sep2) { near = true; break; }
    }
    if (!near) chosen.push(p);
  }
  // A conductor's peak as the report gives it (a smooth peak is recovered at a vertex, peak-field.ts).
  const reported = new Map<number, { value: number; at: [number, number, number] }>();
  for (const pk of peaks ?? []) if (pk.panel >= 0 && Number.isFinite(pk.value)) reported.set(pk.panel, pk);
  const spots: HotSpot[] = chosen.map((p) => {
    const r = reported.get(p);
    const f = r ? r.value : field[p];
    return {
      panel: p,
      conductor: panelConductor[p],
      field: f,
      sigma: sigma[p],
      at: r ? [...r.at] as [number, number, number] : [centroids[3 * p], centroids[3 * p + 1], centroids[3 * p + 2]],
      fieldRatio: f / breakdownField,
      ...(sharpPanels?.[p] ? { sharpEdge: true as const } : {}),
    };
  });
  return spots.sort((a, b) => b.field - a.field);
}

function range(a: ArrayLike<number>): [number, number] {
  let lo = Infinity, hi = -Infinity;
  for (let i = 0; i < a.length; i++) { if (a[i] < lo) lo = a[i]; if (a[i] > hi) hi = a[i]; }
  return [lo, hi];
}

function minPositive(a: ArrayLike<number>): number {
  let lo = Infinity;
  for (let i = 0; i < a.length; i++) if (a[i] > 0 && a[i] < lo) lo = a[i];
  return Number.isFinite(lo) ? lo : 0;
}

/** The viewer's data from an extraction (finest mesh). */
export function viewerData(result: ExtractionResult, opts: ViewerDataOptions = {}): ViewerData {
  const { mesh, panels: P, k } = result;
  const n = P.n;
  const nHot = opts.hotSpots ?? 12;
  const budget = opts.sheetFieldBudget ?? 4e8;
  const box = boundingBox(mesh.positions);
  const origin: [number, number, number] = [(box[0] + box[3]) / 2, (box[1] + box[4]) / 2, (box[2] + box[5]) / 2];
  const diag = Math.hypot(box[3] - box[0], box[4] - box[1], box[5] - box[2]);
  // A tenth of the model apart: one corner or one electrode face does not fill the list.
  const separation = 0.1 * diag;
  const positions = new Float32Array(mesh.positions.length);
  for (let i = 0; i < positions.length; i += 3) {
    positions[i] = mesh.positions[i] - origin[0];
    positions[i + 1] = mesh.positions[i + 1] - origin[1];
    positions[i + 2] = mesh.positions[i + 2] - origin[2];
  }
  const closed = result.conductors.map((c) => c.closed);
  const openPanel = new Uint8Array(n);
  let nOpen = 0;
  for (let p = 0; p < n; p++) { openPanel[p] = closed[result.panelConductor[p]] ? 0 : 1; nOpen += openPanel[p]; }

  const excitations: ViewerExcitation[] = [];
  const add = (id: string, potentials: number[], sigma: Float64Array, field: Float64Array, bound: boolean, peaks?: ExtractionResult["peaks"]): void => {
    excitations.push({
      id, potentials,
      sigma: Float32Array.from(sigma), field: Float32Array.from(field),
      sigmaRange: range(sigma), fieldRange: range(field), fieldMinPositive: minPositive(field),
      sheetFieldBound: bound,
      hotSpots: hotSpots(field, sigma, result.panelConductor, k, P.centroids, result.breakdownField, nHot, separation, result.sharpPanels, peaks),
    });
  };
  add("scene", Array.from(result.potentials), result.excitation.sigma, result.excitation.field, false, result.peaks);

  // unitCharges = 4πε·x, so potentials with 1/(4πε) at conductor j give the unit column's charges.
  const fourPiEps = 4 * Math.PI * result.permittivity;
  const exactSheets = nOpen > 0 && nOpen * n * k <= budget;
  const openList = new Uint32Array(nOpen);
  for (let p = 0, a = 0; p < n; p++) if (openPanel[p]) openList[a++] = p;
  for (let j = 0; j < k; j++) {
    const v = new Float64Array(k);
    v[j] = 1 / fourPiEps;
    let ex = panelExcitation(result.unitCharges, k, P, v, result.permittivity, openPanel);
    if (exactSheets) {
      // Sheets need the principal-value normal field of all the charge (see excitation.ts).
      const e = centroidFields(P, ex.charge, result.permittivity, openList);
      const normalPv = new Float64Array(n);
      for (let a = 0; a < nOpen; a++) {
        const p = openList[a];
        normalPv[p] = e[3 * a] * P.normals[3 * p] + e[3 * a + 1] * P.normals[3 * p + 1] + e[3 * a + 2] * P.normals[3 * p + 2];
      }
      ex = panelExcitation(result.unitCharges, k, P, v, result.permittivity, openPanel, normalPv);
    }
    const potentials = new Array<number>(k).fill(0);
    potentials[j] = 1;
    add(`unit:${j}`, potentials, ex.sigma, ex.field, nOpen > 0 && !exactSheets);
  }
  const axisIndex = { x: 0, y: 1, z: 2 } as const;
  return {
    names: result.names.slice(), closed, origin, positions,
    triangles: mesh.triangles, panelConductor: result.panelConductor, areas: Float32Array.from(P.areas),
    breakdownField: result.breakdownField, permittivity: result.permittivity, excitations,
    reference: result.reference,
    ...(result.groundPlane ? { groundPlane: { axis: axisIndex[result.groundPlane.axis], offset: result.groundPlane.offset } } : {}),
    ...(result.dielectric ? { bodies: bodySurfaces(result.dielectric, origin) } : {}),
  };
}

/**
 * The interface panels of the dielectric model (the bodies' surfaces as solved, without the
 * panels a conductor covers), with only the vertices they use. No values ride on them, so
 * they cost about 20 bytes per triangle in the page.
 */
function bodySurfaces(d: DielectricResult, origin: [number, number, number]): ViewerBodies {
  const m = d.model;
  const map = new Int32Array(m.positions.length / 3).fill(-1);
  const triangles = new Uint32Array(3 * m.ni);
  let nv = 0;
  for (let t = 0; t < 3 * m.ni; t++) {
    const v = m.triangles[3 * m.nc + t];
    if (map[v] < 0) map[v] = nv++;
    triangles[t] = map[v];
  }
  const positions = new Float32Array(3 * nv);
  for (let v = 0; v < map.length; v++) {
    if (map[v] < 0) continue;
    for (let i = 0; i < 3; i++) positions[3 * map[v] + i] = m.positions[3 * v + i] - origin[i];
  }
  return {
    names: d.bodies.map((b) => b.name), permittivity: d.bodies.map((b) => b.permittivity),
    positions, triangles, body: Uint32Array.from(m.interfaceBody),
  };
}

// ---- Compact JSON form ----------------------------------------------------------------

/** A typed array as JSON: little-endian bytes in base64. */
export interface PackedArray {
  dtype: "float32" | "uint32" | "uint16" | "uint8";
  length: number;
  base64: string;
}

export const VIEWER_FORMAT = "sigmesh-viewer/1";

function pack(a: Float32Array | Uint32Array | Uint16Array | Uint8Array): PackedArray {
  const dtype = a instanceof Float32Array ? "float32" : a instanceof Uint32Array ? "uint32" : a instanceof Uint16Array ? "uint16" : "uint8";
  let bytes = Buffer.from(a.buffer, a.byteOffset, a.byteLength);
  if (a.BYTES_PER_ELEMENT > 1 && new Uint8Array(new Uint16Array([1]).buffer)[0] !== 1) {
    bytes = Buffer.from(bytes);
    if (a.BYTES_PER_ELEMENT === 2) bytes.swap16(); else bytes.swap32();
  }
  return { dtype, length: a.length, base64: bytes.toString("base64") };
}

/** Conductor indices in the narrowest unsigned type that holds them. */
function packIndices(a: Uint32Array, k: number): PackedArray {
  if (k <= 256) return pack(Uint8Array.from(a));
  if (k <= 65536) return pack(Uint16Array.from(a));
  return pack(a);
}

/**
 * The viewer data as plain JSON (format "sigmesh-viewer/1"): typed arrays become
 * `{ dtype, length, base64 }` of their little-endian bytes; every other number is a JSON
 * number in SI units. This is what the HTML report embeds and what a JSON report carries
 * under `viewer` when panel data is asked for.
 */
export function packViewerData(d: ViewerData): Record<string, unknown> {
  return {
    format: VIEWER_FORMAT,
    names: d.names,
    closed: d.closed,
    origin: d.origin,
    positions: pack(d.positions),
    triangles: pack(d.triangles),
    panelConductor: packIndices(d.panelConductor, d.names.length),
    areas: pack(d.areas),
    breakdownField: d.breakdownField,
    permittivity: d.permittivity,
    excitations: d.excitations.map((e) => ({
      id: e.id,
      potentials: e.potentials,
      sigma: pack(e.sigma),
      field: pack(e.field),
      sigmaRange: e.sigmaRange,
      fieldRange: e.fieldRange,
      fieldMinPositive: e.fieldMinPositive,
      sheetFieldBound: e.sheetFieldBound,
      hotSpots: e.hotSpots,
    })),
    ...(d.reference ? { reference: d.reference } : {}),
    ...(d.groundPlane ? { groundPlane: d.groundPlane } : {}),
    ...(d.bodies ? {
      bodies: {
        names: d.bodies.names, permittivity: d.bodies.permittivity, positions: pack(d.bodies.positions),
        triangles: pack(d.bodies.triangles), body: packIndices(d.bodies.body, d.bodies.names.length),
      },
    } : {}),
  };
}

/** `packViewerData(viewerData(result))`: panel data for a JSON report. */
export function viewerDataJson(result: ExtractionResult, opts?: ViewerDataOptions): Record<string, unknown> {
  return packViewerData(viewerData(result, opts));
}
