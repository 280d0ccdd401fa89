// Shared by the browser tests: a small generated extraction written as an HTML report, and
// Debian's Chromium driven by playwright-core with software WebGL.
import { existsSync, mkdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { sphereMesh, boxMesh, plateMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import type { ExtractionResult } from "../../src/extract/result.js";
import { extractionReport } from "../../src/report/json.js";
import { htmlReport } from "../../src/report/html.js";
import { viewerData } from "../../src/report/viewer-data.js";

export const CHROMIUM = process.env.SIGMESH_CHROMIUM ?? "/usr/bin/chromium";
export const ARTIFACTS = fileURLToPath(new URL("../artifacts/", import.meta.url));

/** A conductor name made of markup: it must show as these characters, never as an element. */
export const MARKUP_NAME = "<img src=x onerror=alert(1)>";

export function chromiumMissing(): string | undefined {
  return existsSync(CHROMIUM) ? undefined : `no Chromium at ${CHROMIUM} (install Debian's chromium package, or set SIGMESH_CHROMIUM)`;
}

export async function launchChromium() {
  const { chromium } = await import("playwright-core");
  return chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--no-first-run", "--use-angle=swiftshader", "--enable-unsafe-swiftshader"],
  });
}

/** Sphere (HV electrode, 2 kV), a grounded box with sharp corners, and a floating-at-0 V sheet with a markup name. */
export async function sampleExtraction(): Promise<{ result: ExtractionResult; report: Record<string, unknown> }> {
  const mesh = concatMeshes([
    sphereMesh({ radius: 4e-3, level: 2, center: [-8e-3, 0, 0], name: "electrode" }),
    boxMesh({ size: [6e-3, 6e-3, 6e-3], divisions: 3, center: [6e-3, 0, 0], name: "ground box" }),
    plateMesh({ size: [10e-3, 10e-3], divisions: 6, center: [0, 0, -9e-3], name: MARKUP_NAME }),
  ]);
  const result = await extractMesh(mesh, { potentials: [2000, 0, 0] });
  const report = extractionReport(result, { version: "test", files: ["generated <scene>.json"], unit: "mm", inputWarnings: [] });
  return { result, report };
}

/** The title of the grounded sample's scene: it must head the page. */
export const GROUNDED_TITLE = "Three electrodes over an insulating slab and a ground plane";

/**
 * The same three conductors over an insulating slab (εr 4) and a ground plane at z = -13 mm,
 * with a scene title and a parameter: the page draws the slab and the plane, names the
 * ground plane as the two-terminal reference and shows the title.
 */
export async function groundedExtraction(): Promise<{ result: ExtractionResult; report: Record<string, unknown> }> {
  const mesh = concatMeshes([
    sphereMesh({ radius: 4e-3, level: 2, center: [-8e-3, 0, 0], name: "electrode" }),
    boxMesh({ size: [6e-3, 6e-3, 6e-3], divisions: 3, center: [6e-3, 0, 0], name: "ground box" }),
    plateMesh({ size: [10e-3, 10e-3], divisions: 6, center: [0, 0, -9e-3], name: MARKUP_NAME }),
  ]);
  const slab = boxMesh({ size: [30e-3, 14e-3, 2e-3], divisions: 2, center: [0, 0, -11e-3], name: "slab" });
  const result = await extractMesh(mesh, {
    potentials: [2000, 0, 0], groundPlane: { axis: "z", offset: -13e-3 }, dielectrics: [{ name: "slab", mesh: slab, permittivity: 4 }],
  });
  const report = extractionReport(result, {
    version: "test", files: ["grounded.json"], scene: "grounded.json", unit: "mm", inputWarnings: [], title: GROUNDED_TITLE, parameters: { gap: 1 },
  });
  return { result, report };
}

export function writeSampleHtml(path: string, report: Record<string, unknown>, result: ExtractionResult): void {
  mkdirSync(join(path, ".."), { recursive: true });
  writeFileSync(path, htmlReport(report, viewerData(result)));
}
