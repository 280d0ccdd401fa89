// The page's reader of the embedded data (viewer/src/data.ts) against the writer
// (src/report/viewer-data.ts): every typed array comes back bit for bit, through the
// browser's native base64 decoder where it has one and through atob where it has not.
import { describe, it, expect, afterEach } from "vitest";
import { readPageData } from "../../viewer/src/data.js";
import { packViewerData, type ViewerData } from "../../src/report/viewer-data.js";
import { scriptSafeJson } from "../../src/report/html.js";

function sample(): ViewerData {
  return {
    names: ["a <b>", "c"], closed: [true, false], origin: [1e-3, -2e-3, 0],
    positions: Float32Array.from([0, 0, 0, 1e-3, 0, 0, 0, 1e-3, 0, 1.25e-7, -3.5, 6.02e23]),
    triangles: Uint32Array.from([0, 1, 2, 1, 3, 2]),
    panelConductor: Uint32Array.from([0, 1]),
    areas: Float32Array.from([5e-7, 4.9e-7]),
    breakdownField: 3e6, permittivity: 8.8541878188e-12,
    excitations: [{
      id: "scene", potentials: [10, 0], sigma: Float32Array.from([1e-9, -Math.PI * 1e-10]), field: Float32Array.from([112.9, 35.5]),
      sigmaRange: [-Math.PI * 1e-10, 1e-9], fieldRange: [35.5, 112.9], fieldMinPositive: 35.5, sheetFieldBound: false, hotSpots: [],
    }],
  };
}

function page(d: ViewerData): Document {
  const text = scriptSafeJson({ report: { format: "sigmesh-report/1" }, viewer: packViewerData(d) });
  return { getElementById: (id: string) => (id === "sigmesh-data" ? { textContent: text } : null) } as unknown as Document;
}

const U8 = Uint8Array as unknown as { fromBase64?: (s: string) => Uint8Array };
afterEach(() => { delete U8.fromBase64; });

describe("readPageData", () => {
  for (const decoder of ["atob", "native"] as const) {
    it(`returns every array bit for bit (${decoder} base64)`, () => {
      if (decoder === "native") U8.fromBase64 = (s: string) => new Uint8Array(Buffer.from(s, "base64"));
      else delete U8.fromBase64;
      const d = sample();
      const r = readPageData(page(d)).viewer;
      expect(r.positions).toEqual(d.positions);
      expect(r.triangles).toEqual(d.triangles);
      expect(r.panelConductor).toEqual(d.panelConductor);
      expect(r.areas).toEqual(d.areas);
      expect(r.excitations[0].sigma).toEqual(d.excitations[0].sigma);
      expect(r.excitations[0].field).toEqual(d.excitations[0].field);
      expect(r.names).toEqual(d.names);
      expect(r.excitations[0].sigmaRange).toEqual(d.excitations[0].sigmaRange);
    });
  }

  it("refuses an array whose byte count does not match its length", () => {
    const d = sample();
    const packed = packViewerData(d) as Record<string, any>;
    packed.areas = { ...packed.areas, length: 3 };
    const text = JSON.stringify({ report: {}, viewer: packed });
    const doc = { getElementById: () => ({ textContent: text }) } as unknown as Document;
    expect(() => readPageData(doc)).toThrow(/embedded float32 array holds 8 bytes, expected 12/);
  });
});
