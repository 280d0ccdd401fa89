/**
 * The HTML report: ONE self-contained file holding the viewer (built by vite into
 * dist/viewer at package build time and inlined here) and the results (the JSON report and
 * the packed viewer data, typed arrays as base64). It needs no network and no server: it
 * opens by double-click and can be mailed.
 *
 * Safety: the data sits in a non-executed `application/json` script with every `<`, `>`
 * and `&` escaped as \u00XX, so no name from a user file can close the element; the page
 * shows names with textContent only; a Content-Security-Policy allows no network and runs
 * only the inlined viewer script (by its SHA-256 hash).
 */
import { readFileSync, existsSync } from "node:fs";
import { createHash } from "node:crypto";
import { fileURLToPath } from "node:url";
import type { ExtractionResult } from "../extract/result.js";
import { writeFileAtomic } from "../io/atomic.js";
import { nonFiniteAsNull } from "./json.js";
import { packViewerData, viewerData, VIEWER_FORMAT, type ViewerData, type ViewerDataOptions } from "./viewer-data.js";

export interface ViewerBundle {
  script: string;
  css: string;
}

let bundleCache: ViewerBundle | undefined;

/** Where the built viewer lives: dist/viewer beside dist/src (compiled) or under the repository (sources). */
function bundleDir(): string {
  const candidates = ["../../viewer/", "../../dist/viewer/"].map((p) => fileURLToPath(new URL(p, import.meta.url)));
  for (const dir of candidates) if (existsSync(dir + "viewer.js")) return dir;
  throw new Error(`the viewer bundle is missing (looked for viewer.js in ${candidates.join(" and ")}); build it with \`npm run build\``);
}

/** The built viewer script and stylesheet (read once). */
export function viewerBundle(): ViewerBundle {
  if (!bundleCache) {
    const dir = bundleDir();
    bundleCache = {
      script: readFileSync(dir + "viewer.js", "utf8"),
      css: existsSync(dir + "viewer.css") ? readFileSync(dir + "viewer.css", "utf8") : "",
    };
  }
  return bundleCache;
}

/** JSON that can sit inside a <script> element whatever strings it holds. */
export function scriptSafeJson(value: unknown): string {
  const text = JSON.stringify(value, nonFiniteAsNull);
  return text.replace(/[<>&\u2028\u2029]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, "0")}`);
}

/** Text for an HTML text node or attribute value. */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
}

/** Packed viewer data as it is embedded ("sigmesh-viewer/1"). */
export type PackedViewerData = Record<string, unknown> & { format: typeof VIEWER_FORMAT };

function isPacked(d: ViewerData | Record<string, unknown>): d is PackedViewerData {
  return (d as Record<string, unknown>).format === VIEWER_FORMAT;
}

/**
 * The self-contained HTML report. `report` is the JSON report (`extractionReport`), `data`
 * the viewer data (`viewerData(result)`, or its packed form from a JSON report's `viewer`).
 */
export function htmlReport(report: object, data: ViewerData | PackedViewerData, bundle: ViewerBundle = viewerBundle(),
  plots: Array<{ title: string; svg: string }> = []): string {
  const viewer = isPacked(data) ? data : packViewerData(data);
  // A script body must not close its element; the bundle is minified code, where "</script" can only sit in a string or regex.
  const script = bundle.script.replace(/<\/(script)/gi, "<\\/$1");
  const css = bundle.css.replace(/<\/(style)/gi, "<\\/$1");
  const hash = createHash("sha256").update(script, "utf8").digest("base64");
  const csp = [
    "default-src 'none'",
    `script-src 'sha256-${hash}'`,
    "style-src 'unsafe-inline'",
    "img-src data: blob:",
    "connect-src 'none'",
    "base-uri 'none'",
    "form-action 'none'",
  ].join("; ");
  const input = (report as { input?: { files?: unknown; title?: unknown } }).input;
  const files = (input?.files as string[] | undefined) ?? [];
  const title = typeof input?.title === "string" && input.title.trim() !== ""
    ? `${input.title} — sigmesh report`
    : `sigmesh report${files.length ? " — " + files.map(String).join(", ") : ""}`;
  return [
    "<!doctype html>",
    '<html lang="en">',
    "<head>",
    '<meta charset="utf-8">',
    // The policy holds no quote or markup characters (base64 hash, fixed words), so it goes in as is.
    `<meta http-equiv="Content-Security-Policy" content="${csp}">`,
    '<meta name="viewport" content="width=device-width, initial-scale=1">',
    '<meta name="generator" content="sigmesh">',
    `<title>${escapeHtml(title)}</title>`,
    `<style>${css}</style>`,
    "</head>",
    "<body>",
    '<div id="sigmesh-app"><noscript>This sigmesh report needs JavaScript to show its 3D view and tables.</noscript></div>',
    // Plots (field along probe lines, convergence) are static SVG made by src/report/svg-plot.ts,
    // whose text is XML-escaped there; they sit below the viewer and need no script.
    ...(plots.length
      ? ['<section id="sigmesh-plots" style="padding:12px 16px;border-top:1px solid #ccc"><h2 style="font-size:15px">Plots</h2>',
        ...plots.map((p) => `<figure style="margin:0 0 16px 0"><figcaption style="font-weight:600">${escapeHtml(p.title)}</figcaption>${p.svg.replace(/^<\?xml[^>]*>\s*/, "")}</figure>`),
        "</section>"]
      : []),
    `<script type="application/json" id="sigmesh-data">${scriptSafeJson({ report, viewer })}</script>`,
    `<script>${script}</script>`,
    "</body>",
    "</html>",
    "",
  ].join("\n");
}

/** Write the HTML report of an extraction atomically (no half-written file on failure). */
export function writeHtmlReport(path: string, report: object, result: ExtractionResult, opts?: ViewerDataOptions): void {
  writeFileAtomic(path, htmlReport(report, viewerData(result, opts)));
}

/**
 * The embedded results of an HTML report written by `htmlReport`, or undefined when the text
 * is not one. Used by `sigmesh view` to check what it is asked to serve.
 */
export function embeddedResults(html: string): { report: Record<string, unknown>; viewer: PackedViewerData } | undefined {
  const m = /<script type="application\/json" id="sigmesh-data">([\s\S]*?)<\/script>/.exec(html);
  if (!m) return undefined;
  try {
    const data = JSON.parse(m[1]) as { report?: Record<string, unknown>; viewer?: PackedViewerData };
    if (!data.viewer || data.viewer.format !== VIEWER_FORMAT) return undefined;
    return { report: data.report ?? {}, viewer: data.viewer };
  } catch {
    return undefined;
  }
}
