// A scene's title and parameters, its ground plane and its dielectric bodies, from the scene
// file to every report that shows them: the JSON report's `input`, the Markdown heading, the
// HTML page's title and embedded data, and the viewer data (the two-terminal reference, the
// plane, the bodies' surfaces as solved).
import { describe, it, expect, beforeAll } from "vitest";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { loadScene } from "../../src/io/inputs.js";
import { extract, type SceneExtraction } from "../../src/extract/extract.js";
import { extractionFiles, sceneReport } from "../../src/report/outputs.js";
import { viewerData, packViewerData } from "../../src/report/viewer-data.js";
import { embeddedResults } from "../../src/report/html.js";
import { readPageData } from "../../viewer/src/data.js";
import { InputError } from "../../src/errors.js";

const TITLE = "Two pads on a <slab> over ground";
let dir = "";
let result: SceneExtraction;

function writeScene(name: string, scene: unknown): string {
  const path = join(dir, name);
  writeFileSync(path, JSON.stringify(scene));
  return path;
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), "sigmesh-title-"));
  const path = writeScene("pads.json", {
    title: TITLE, unit: "mm", parameters: { gap: 2, w: 3 },
    conductors: [
      { name: "left", shape: { box: { size: ["=w", "=w", 0.5], divisions: 2, center: ["=-(w+gap)/2", 0, 0.25] } }, potential: 1 },
      { name: "right", shape: { box: { size: ["=w", "=w", 0.5], divisions: 2, center: ["=(w+gap)/2", 0, 0.25] } }, potential: 0 },
    ],
    dielectrics: [{ name: "slab", shape: { box: { size: [12, 6, 1], divisions: 2, center: [0, 0, -0.5] } }, permittivity: 4 }],
    groundPlane: { z: -1 },
  });
  result = await extract(loadScene(path));
}, 60_000);

describe("a scene's title, parameters, ground plane and bodies in the reports", () => {
  it("carries the title and the parameter values used into the JSON report", () => {
    expect(result.input.title).toBe(TITLE);
    const input = sceneReport(result).input as Record<string, unknown>;
    expect(input.title).toBe(TITLE);
    expect(input.parameters).toEqual({ gap: 2, w: 3 });
  });

  it("heads the Markdown page with the title, lists the parameters and never says infinity over a ground plane", () => {
    const md = extractionFiles(result, { markdown: join(dir, "r.md") })[0].data as string;
    expect(md.split("\n")[0]).toBe("# Two pads on a \\<slab\\> over ground");
    expect(md).toContain("parameters gap = 2, w = 3");
    // As the terminal summary says it: "left – ground plane".
    expect(md).toContain("| left – ground plane |");
    expect(md.toLowerCase()).not.toContain("infinity");
  });

  it("opens the SPICE deck with the title and the scene's file name, on one line", () => {
    const net = extractionFiles(result, { spice: join(dir, "r.cir") })[0].data as string;
    expect(net.split("\n")[0]).toBe(`* ${TITLE} (${join(dir, "pads.json")})`);
  });

  it("names the HTML page after the title and embeds it with the viewer data's reference, plane and bodies", () => {
    const html = extractionFiles(result, { html: join(dir, "r.html") })[0].data as string;
    expect(html).toContain("<title>Two pads on a &#60;slab&#62; over ground — sigmesh report</title>");
    const embedded = embeddedResults(html)!;
    expect((embedded.report.input as Record<string, unknown>).title).toBe(TITLE);
    expect(embedded.viewer.reference).toBe("ground plane");
    expect(embedded.viewer.groundPlane).toEqual({ axis: 2, offset: -1e-3 });
  });

  it("gives the viewer the bodies' surfaces as solved: every interface panel, in the frame of the conductors", () => {
    const v = viewerData(result);
    expect(v.reference).toBe("ground plane");
    const b = v.bodies!;
    expect(b.names).toEqual(["slab"]);
    expect(b.permittivity).toEqual([4]);
    const m = result.dielectric!.model;
    expect(b.triangles.length).toBe(3 * m.ni);
    expect(b.body.length).toBe(m.ni);
    // Each drawn triangle is its interface panel, moved by the same origin as the conductors.
    for (const t of [0, m.ni >> 1, m.ni - 1]) {
      for (let j = 0; j < 3; j++) {
        const src = m.triangles[3 * (m.nc + t) + j], dst = b.triangles[3 * t + j];
        for (let i = 0; i < 3; i++) expect(b.positions[3 * dst + i]).toBeCloseTo(m.positions[3 * src + i] - v.origin[i], 9);
      }
    }
    // The slab spans 12 mm in x: its drawn surface does too.
    let lo = Infinity, hi = -Infinity;
    for (let i = 0; i < b.positions.length; i += 3) { lo = Math.min(lo, b.positions[i]); hi = Math.max(hi, b.positions[i]); }
    expect(hi - lo).toBeCloseTo(12e-3, 9);
    // Through the page's reader, bit for bit.
    const text = JSON.stringify({ report: {}, viewer: packViewerData(v) });
    const read = readPageData({ getElementById: () => ({ textContent: text }) } as unknown as Document).viewer;
    expect(read.bodies!.positions).toEqual(b.positions);
    expect(read.bodies!.triangles).toEqual(b.triangles);
    expect(Array.from(read.bodies!.body)).toEqual(Array.from(b.body));
    expect(read.groundPlane).toEqual({ axis: 2, offset: -1e-3 });
  });

  it("refuses a title that is not a string with one line naming the key", () => {
    const bad = writeScene("bad.json", { title: 3, conductors: [{ name: "a", shape: { box: { size: [1, 1, 1] } } }] });
    expect(() => loadScene(bad)).toThrow(InputError);
    expect(() => loadScene(bad)).toThrow(/title: expected a string/);
  });
});
