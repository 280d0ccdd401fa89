/**
 * Reading the data the page embeds (`<script type="application/json" id="sigmesh-data">`):
 * `{ report, viewer }` with the viewer part in the packed form of src/report/viewer-data.ts
 * (typed arrays as little-endian bytes in base64).
 */

export interface Packed { dtype: "float32" | "uint32" | "uint16" | "uint8"; length: number; base64: string }

export interface HotSpot {
  panel: number; conductor: number; field: number; sigma: number; at: [number, number, number]; fieldRatio: number;
  /** At a sharp edge: the value depends on the mesh (no breakdown verdict). */
  sharpEdge?: true;
}

export interface Excitation {
  id: string; potentials: number[];
  sigma: Float32Array; field: Float32Array;
  sigmaRange: [number, number]; fieldRange: [number, number]; fieldMinPositive: number;
  sheetFieldBound: boolean; hotSpots: HotSpot[];
}

export interface ViewerData {
  names: string[]; closed: boolean[]; origin: [number, number, number];
  positions: Float32Array; triangles: Uint32Array; panelConductor: Uint32Array; areas: Float32Array;
  breakdownField: number; permittivity: number; excitations: Excitation[];
  /** The two-terminal diagonal's reference (absent in data written before it was carried: the report's is used). */
  reference?: "ground plane" | "infinity";
  /** The grounded plane: axis index (0 x, 1 y, 2 z) and offset in metres, absolute. */
  groundPlane?: { axis: 0 | 1 | 2; offset: number };
  bodies?: Bodies;
}

/** Dielectric bodies' surfaces: positions relative to the data's origin, a body index per triangle. */
export interface Bodies {
  names: string[]; permittivity: number[];
  positions: Float32Array; triangles: Uint32Array; body: Uint32Array;
}

export interface PageData {
  report: Record<string, any>;
  viewer: ViewerData;
}

function bytesOf(b64: string): Uint8Array {
  // The native decoder where the browser has it (ES2026 Uint8Array.fromBase64): no binary string in between.
  const native = (Uint8Array as unknown as { fromBase64?: (s: string) => Uint8Array }).fromBase64;
  if (native) return native(b64);
  const s = atob(b64);
  const out = new Uint8Array(s.length);
  for (let i = 0; i < s.length; i++) out[i] = s.charCodeAt(i);
  return out;
}

function unpack(p: Packed): Float32Array | Uint32Array | Uint16Array | Uint8Array {
  const bytes = bytesOf(p.base64);
  const size = p.dtype === "uint8" ? 1 : p.dtype === "uint16" ? 2 : 4;
  if (bytes.length !== p.length * size) throw new Error(`embedded ${p.dtype} array holds ${bytes.length} bytes, expected ${p.length * size}`);
  const buf = bytes.buffer;
  switch (p.dtype) {
    case "float32": return new Float32Array(buf, 0, p.length);
    case "uint32": return new Uint32Array(buf, 0, p.length);
    case "uint16": return new Uint16Array(buf, 0, p.length);
    default: return bytes;
  }
}

export function readPageData(doc: Document): PageData {
  const el = doc.getElementById("sigmesh-data");
  if (!el || !el.textContent) throw new Error("this page carries no sigmesh results");
  const raw = JSON.parse(el.textContent);
  const v = raw.viewer;
  if (!v || v.format !== "sigmesh-viewer/1") throw new Error(`unknown viewer data format ${String(v?.format)}`);
  const pc = unpack(v.panelConductor);
  const viewer: ViewerData = {
    names: v.names, closed: v.closed, origin: v.origin,
    positions: unpack(v.positions) as Float32Array,
    triangles: unpack(v.triangles) as Uint32Array,
    panelConductor: pc instanceof Uint32Array ? pc : Uint32Array.from(pc),
    areas: unpack(v.areas) as Float32Array,
    breakdownField: v.breakdownField, permittivity: v.permittivity,
    excitations: v.excitations.map((e: any) => ({ ...e, sigma: unpack(e.sigma), field: unpack(e.field) })),
  };
  if (v.reference === "ground plane" || v.reference === "infinity") viewer.reference = v.reference;
  if (v.groundPlane) viewer.groundPlane = v.groundPlane;
  if (v.bodies) {
    const b = unpack(v.bodies.body);
    viewer.bodies = {
      names: v.bodies.names, permittivity: v.bodies.permittivity,
      positions: unpack(v.bodies.positions) as Float32Array, triangles: unpack(v.bodies.triangles) as Uint32Array,
      body: b instanceof Uint32Array ? b : Uint32Array.from(b),
    };
  }
  return { report: raw.report ?? {}, viewer };
}
