/**
 * The viewer server behind `sigmesh view`: one result's page served on 127.0.0.1. The server
 * holds the page in memory and answers exactly two paths, `/` (the page) and `/report.json`
 * (the JSON report); it never touches the file system after start-up, so there is nothing to
 * list and no path to traverse.
 */
import { createServer, type Server } from "node:http";
import { InputError } from "../errors.js";
import { readInputText } from "../io/input-file.js";
import { parseJson } from "../io/json-value.js";
import { htmlReport, embeddedResults, type PackedViewerData } from "./html.js";
import { VIEWER_FORMAT } from "./viewer-data.js";

export interface ViewPage {
  html: string;
  reportJson: string;
}

/** The page and report to serve for a report file (.json with panel data, or .html from `extract --html`). */
export function viewPage(path: string): ViewPage {
  const text = readInputText(path, "report");
  if (/^\s*</.test(text)) {
    const found = embeddedResults(text);
    if (!found) throw new InputError("not a sigmesh HTML report (no embedded results)", path);
    return { html: text, reportJson: JSON.stringify(found.report, null, 2) };
  }
  if (!/^\s*[{[]/.test(text)) {
    throw new InputError("not a sigmesh report: give the .json written by `sigmesh extract --json FILE --json-panels` or the .html written by `--html`", path);
  }
  const report = parseJson(text, path) as Record<string, unknown>;
  if (typeof report !== "object" || report === null || typeof report.format !== "string" || !report.format.startsWith("sigmesh-extraction/")) {
    throw new InputError("not a sigmesh extraction report (no \"format\": \"sigmesh-extraction/…\")", path);
  }
  const viewer = report.viewer as PackedViewerData | undefined;
  if (!viewer || viewer.format !== VIEWER_FORMAT) {
    throw new InputError("the report carries no panel data for the viewer; write it with `sigmesh extract ... --json-panels`, or write `--html`", path);
  }
  const { viewer: _omit, ...rest } = report;
  return { html: htmlReport(rest, viewer), reportJson: JSON.stringify(rest, null, 2) };
}

const HEADERS = {
  "X-Content-Type-Options": "nosniff",
  "Cache-Control": "no-store",
  "Referrer-Policy": "no-referrer",
  "Cross-Origin-Resource-Policy": "same-origin",
};

/** Start serving `page` on 127.0.0.1:port; resolves with the server and its URL. */
export function serveViewPage(page: ViewPage, port: number): Promise<{ server: Server; url: string }> {
  const html = Buffer.from(page.html, "utf8");
  const json = Buffer.from(page.reportJson, "utf8");
  const server = createServer((req, res) => {
    const method = req.method ?? "GET";
    if (method !== "GET" && method !== "HEAD") {
      res.writeHead(405, { ...HEADERS, Allow: "GET, HEAD", "Content-Type": "text/plain; charset=utf-8" });
      res.end("method not allowed\n");
      return;
    }
    // The raw request target, unnormalised: only the exact two paths are served.
    const target = (req.url ?? "").split("?")[0];
    const body = target === "/" || target === "/index.html" ? html : target === "/report.json" ? json : undefined;
    if (!body) {
      res.writeHead(404, { ...HEADERS, "Content-Type": "text/plain; charset=utf-8" });
      res.end("not found\n");
      return;
    }
    res.writeHead(200, {
      ...HEADERS,
      "Content-Type": body === html ? "text/html; charset=utf-8" : "application/json; charset=utf-8",
      "Content-Length": body.length,
    });
    res.end(method === "HEAD" ? undefined : body);
  });
  return new Promise((resolve, reject) => {
    server.once("error", (err: NodeJS.ErrnoException) => {
      if (err.code === "EADDRINUSE") reject(new InputError(`--port ${port}: the port is in use`));
      else if (err.code === "EACCES") reject(new InputError(`--port ${port}: permission denied (ports below 1024 need privileges)`));
      else reject(err);
    });
    server.listen(port, "127.0.0.1", () => {
      const addr = server.address();
      const p = typeof addr === "object" && addr ? addr.port : port;
      resolve({ server, url: `http://127.0.0.1:${p}/` });
    });
  });
}

