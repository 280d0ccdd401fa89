// The HTML report and the viewer data: embedding safety, packed arrays, excitation physics
// (closed forms and identities), hot spots, the published colour maps, and `sigmesh view`'s page loader.
import { describe, it, expect, beforeAll } from "vitest";
import { createHash } from "node:crypto";
import { mkdtempSync, readdirSync, readFileSync, writeFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { sphereMesh, boxMesh, plateMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import type { ExtractionResult } from "../../src/extract/result.js";
import { extractionReport } from "../../src/report/json.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { htmlReport, scriptSafeJson, embeddedResults, writeHtmlReport, type ViewerBundle } from "../../src/report/html.js";
import { viewerData, viewerDataJson, packViewerData, hotSpots, type PackedArray } from "../../src/report/viewer-data.js";
import { coolWarmTable, viridisTable, divergingColor, COOL, WARM } from "../../viewer/src/colormap.js";
import { viewPage } from "../../src/report/view-server.js";
import { parsePort } from "../../cli/view.js";
import { InputError } from "../../src/errors.js";

const MARKUP = "<img src=x onerror=alert(1)></script><script>alert(2)</script>";
const bundle: ViewerBundle = { script: "console.log('viewer'); var s = '</script>';", css: "body{}" };

function unpack(p: PackedArray): Float32Array | Uint32Array | Uint16Array | Uint8Array {
  const b = Buffer.from(p.base64, "base64");
  const ab = b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength);
  return p.dtype === "float32" ? new Float32Array(ab) : p.dtype === "uint32" ? new Uint32Array(ab) : p.dtype === "uint16" ? new Uint16Array(ab) : new Uint8Array(ab);
}

let pair: ExtractionResult;
let report: Record<string, unknown>;

beforeAll(async () => {
  const mesh = concatMeshes([
    sphereMesh({ radius: 4e-3, level: 2, center: [-8e-3, 0, 0], name: MARKUP }),
    boxMesh({ size: [6e-3, 6e-3, 6e-3], divisions: 3, center: [6e-3, 0, 0], name: "box" }),
  ]);
  pair = await extractMesh(mesh, { potentials: [300, -50] });
  report = extractionReport(pair, { version: "test", files: [`${MARKUP}.stl`], unit: "mm", inputWarnings: [] });
});

describe("htmlReport", () => {
  it("embeds the results so that no name can leave the data element, and runs only the hashed viewer script", () => {
    const html = htmlReport(report, viewerData(pair), bundle);
    expect(html.includes(MARKUP)).toBe(false);
    expect(html.includes("<img")).toBe(false);
    // Exactly two script elements: the JSON data and the viewer; no external resources.
    expect(html.match(/<script/g)).toHaveLength(2);
    expect(html).not.toMatch(/<script[^>]*\ssrc=|<link\s/i);
    const viewer = /<script>([\s\S]*)<\/script>\n<\/body>/.exec(html)![1];
    expect(viewer).toBe("console.log('viewer'); var s = '<\\/script>';");
    const hash = createHash("sha256").update(viewer, "utf8").digest("base64");
    expect(html).toContain(`script-src 'sha256-${hash}'`);
    expect(html).toContain("connect-src 'none'");
    const back = embeddedResults(html)!;
    expect(back).toBeDefined();
    expect((back.report.conductors as Array<{ name: string }>)[0].name).toBe(MARKUP);
    expect(back.viewer.names).toEqual([MARKUP, "box"]);
    expect(JSON.parse(scriptSafeJson({ a: "</script>&\u2028" })).a).toBe("</script>&\u2028");
  });

  it("uses the built viewer bundle and writes the file atomically", () => {
    const dir = mkdtempSync(join(tmpdir(), "sigmesh-html-"));
    try {
      const path = join(dir, "r.html");
      writeHtmlReport(path, report, pair);
      expect(readdirSync(dir)).toEqual(["r.html"]);
      const html = readFileSync(path, "utf8");
      expect(html.length).toBeGreaterThan(100_000); // three.js is inlined
      expect(html).toContain('id="sigmesh-app"');
      expect(embeddedResults(html)!.viewer.excitations).toHaveLength(3);
    } finally { rmSync(dir, { recursive: true, force: true }); }
  });
});

describe("viewerData", () => {
  it("packs typed arrays as little-endian base64 that decode to the same numbers", () => {
    const d = viewerData(pair);
    const j = packViewerData(d) as Record<string, any>;
    expect(j.format).toBe("sigmesh-viewer/1");
    expect(Array.from(unpack(j.triangles))).toEqual(Array.from(d.triangles));
    expect(j.panelConductor.dtype).toBe("uint8");
    expect(Array.from(unpack(j.panelConductor))).toEqual(Array.from(pair.panelConductor));
    expect(unpack(j.positions)).toEqual(d.positions);
    expect(unpack(j.excitations[1].sigma)).toEqual(d.excitations[1].sigma);
    // Positions are relative to the box centre; adding it back gives the mesh.
    for (let i = 0; i < 30; i++) expect(d.positions[i] + d.origin[i % 3]).toBeCloseTo(pair.mesh.positions[i], 9);
  });

  it("unit excitations hold the Maxwell matrix column by column, and superpose to the scene", () => {
    const d = viewerData(pair);
    expect(d.excitations.map((e) => e.id)).toEqual(["scene", "unit:0", "unit:1"]);
    const k = pair.k, n = pair.panels.n;
    for (let j = 0; j < k; j++) {
      const e = d.excitations[1 + j];
      for (let i = 0; i < k; i++) {
        let q = 0;
        for (let p = 0; p < n; p++) if (pair.panelConductor[p] === i) q += e.sigma[p] * pair.panels.areas[p];
        // Maxwell is symmetrised (and double precision); columns are not: agree to the reported asymmetry.
        expect(Math.abs(q - pair.maxwell[i * k + j])).toBeLessThan(1e-3 * Math.abs(pair.maxwell[i * k + i]));
      }
    }
    const s = d.excitations[0];
    for (let p = 0; p < n; p++) {
      const sum = 300 * d.excitations[1].sigma[p] - 50 * d.excitations[2].sigma[p];
      expect(Math.abs(sum - s.sigma[p])).toBeLessThan(1e-5 * Math.abs(s.sigmaRange[1] - s.sigmaRange[0]));
      // Closed bodies: Gauss's law at a conductor surface, |E| = |σ|/ε.
      expect(s.field[p]).toBeCloseTo(Math.abs(s.sigma[p]) / pair.permittivity, -Math.log10(s.fieldRange[1]) + 5);
    }
    // The colour range ends at the largest panel field; the report's peaks are recovered at a
    // vertex on smooth surfaces (peak-field.ts recoveredPeaks), a few per cent below it at most.
    const peak = Math.max(...pair.conductors.map((c) => c.peakField));
    expect(s.fieldRange[1]).toBe(Math.max(...Array.from(pair.excitation.field)));
    expect(peak).toBeLessThanOrEqual(s.fieldRange[1]);
    expect(peak).toBeGreaterThan(0.95 * s.fieldRange[1]);
  });

  it("an isolated sphere at 1 V carries σ = ε/a and |E| = 1/a (closed form)", async () => {
    // Isolated sphere of radius a at potential V: Q = 4πεaV spread uniformly, so σ = εV/a and E = V/a at the surface.
    const a = 0.01;
    const r = await extractMesh(sphereMesh({ radius: a, level: 3, name: "ball" }));
    const e = viewerData(r).excitations[1];
    let mean = 0;
    for (let p = 0; p < e.field.length; p++) mean += e.field[p] / e.field.length;
    expect(Math.abs(mean - 1 / a) / (1 / a)).toBeLessThan(0.01);
    expect(Math.abs(e.sigma[0] - EPSILON_0 / a) / (EPSILON_0 / a)).toBeLessThan(0.03);
  });

  it("open sheets get the two-sided field per unit excitation, or the flagged bound beyond the budget", async () => {
    const r = await extractMesh(plateMesh({ size: [0.01, 0.01], divisions: 6, name: "sheet" }));
    const exact = viewerData(r);
    // One conductor at 1 V: the unit excitation is the scene, whose sheet field extract computed.
    for (let p = 0; p < r.panels.n; p++) expect(exact.excitations[1].field[p]).toBeCloseTo(exact.excitations[0].field[p], -Math.log10(exact.excitations[0].fieldRange[1]) + 4);
    expect(exact.excitations[1].sheetFieldBound).toBe(false);
    const bound = viewerData(r, { sheetFieldBudget: 0 }).excitations[1];
    expect(bound.sheetFieldBound).toBe(true);
    for (let p = 0; p < r.panels.n; p++) {
      expect(bound.field[p]).toBeCloseTo(Math.abs(bound.sigma[p]) / r.permittivity, -Math.log10(bound.fieldRange[1]) + 4);
      expect(bound.field[p]).toBeGreaterThanOrEqual(exact.excitations[1].field[p] * (1 - 1e-6));
    }
  });

  it("hot spots list every conductor's peak, strongest first, spread apart", () => {
    const d = viewerData(pair, { hotSpots: 8 });
    const spots = d.excitations[0].hotSpots;
    expect(spots.length).toBe(8);
    for (let i = 1; i < spots.length; i++) expect(spots[i].field).toBeLessThanOrEqual(spots[i - 1].field);
    for (const c of pair.conductors) expect(spots.some((h) => h.field === c.peakField && h.at.every((x, i) => x === c.peakFieldAt[i]))).toBe(true);
    for (const h of spots) expect(h.fieldRatio).toBe(h.field / pair.breakdownField);
    // Synthetic: peaks at x = 0 and 0.5 beside weaker neighbours; separation keeps neighbours out.
    const field = [10, 9.9, 5, 8], centroids = new Float64Array([0, 0, 0, 0.01, 0, 0, 0.5, 0, 0, 1, 0, 0]);
    const h = hotSpots(field, [1, 1, 1, 1], new Uint32Array([0, 0, 0, 0]), 1, centroids, 20, 3, 0.1);
    expect(h.map((x) => x.panel)).toEqual([0, 3, 2]);
    expect(h.some((x) => "sharpEdge" in x)).toBe(false);
    // Panels at a sharp edge carry the flag (the result's sharpPanels), the others nothing.
    const flagged = hotSpots(field, [1, 1, 1, 1], new Uint32Array([0, 0, 0, 0]), 1, centroids, 20, 3, 0.1, Uint8Array.of(0, 0, 1, 0));
    expect(flagged.map((x) => x.sharpEdge ?? false)).toEqual([false, false, true]);
  });

  it("viewerDataJson is plain JSON", () => {
    const j = viewerDataJson(pair);
    expect(JSON.parse(JSON.stringify(j))).toEqual(j);
  });
});

describe("colour maps", () => {
  it("cool-warm reproduces Moreland's published table", () => {
    // K. Moreland, ISVC 2009, table of the cool-warm map (values recalled from memory of the paper's table at 33 points).
    const expected: Array<[number, [number, number, number]]> = [
      [0, [59, 76, 192]], [0.03125, [68, 90, 204]], [0.25, [141, 176, 254]], [0.5, [221, 221, 221]],
      [0.75, [244, 154, 123]], [0.96875, [192, 40, 47]], [1, [180, 4, 38]],
    ];
    for (const [t, rgb] of expected) {
      const c = divergingColor(COOL, WARM, t).map((x) => Math.round(255 * x));
      for (let i = 0; i < 3; i++) expect(Math.abs(c[i] - rgb[i])).toBeLessThanOrEqual(1);
    }
    const lut = coolWarmTable();
    expect(Array.from(lut.slice(0, 3))).toEqual([59, 76, 192]);
    expect(Array.from(lut.slice(765))).toEqual([180, 4, 38]);
  });

  it("viridis matches matplotlib's table at its ends and middle", () => {
    // matplotlib _cm_listed.py, _viridis_data entries 0, 128 and 255 (CC0), scaled to bytes.
    const lut = viridisTable();
    const byte = (x: number) => Math.round(255 * x);
    expect(Array.from(lut.slice(0, 3))).toEqual([0.267004, 0.004874, 0.329415].map(byte));
    expect(Array.from(lut.slice(384, 387))).toEqual([0.127568, 0.566949, 0.550556].map(byte));
    expect(Array.from(lut.slice(765))).toEqual([0.993248, 0.906157, 0.143936].map(byte));
    // Perceptually ordered: lightness (approximated by luma) rises monotonically.
    let last = -1;
    for (let i = 0; i < 256; i += 8) {
      const y = 0.2126 * lut[3 * i] + 0.7152 * lut[3 * i + 1] + 0.0722 * lut[3 * i + 2];
      expect(y).toBeGreaterThan(last);
      last = y;
    }
  });
});

describe("sigmesh view: page loader", () => {
  it("accepts an HTML report or a JSON report with panel data, and refuses anything else with one line", () => {
    const dir = mkdtempSync(join(tmpdir(), "sigmesh-viewpage-"));
    try {
      const withPanels = join(dir, "p.json"), bare = join(dir, "b.json"), junk = join(dir, "j.json"), html = join(dir, "r.html"), other = join(dir, "o.html");
      writeFileSync(withPanels, JSON.stringify({ ...report, viewer: viewerDataJson(pair) }));
      writeFileSync(bare, JSON.stringify(report));
      writeFileSync(junk, "{ not json");
      writeFileSync(other, "<html><body>hello</body></html>");
      writeHtmlReport(html, report, pair);
      const a = viewPage(withPanels);
      expect(embeddedResults(a.html)!.viewer.names).toEqual([MARKUP, "box"]);
      expect(JSON.parse(a.reportJson).viewer).toBeUndefined();
      expect(viewPage(html).html).toBe(readFileSync(html, "utf8"));
      expect(() => viewPage(bare)).toThrow(/--json-panels/);
      expect(() => viewPage(junk)).toThrow(InputError);
      expect(() => viewPage(other)).toThrow(/not a sigmesh HTML report/);
      expect(parsePort("8080")).toBe(8080);
      expect(() => parsePort("70000")).toThrow(InputError);
      expect(() => parsePort("12a")).toThrow(InputError);
    } finally { rmSync(dir, { recursive: true, force: true }); }
  });
});
