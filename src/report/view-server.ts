/**
 * The viewer server behind `sigmesh view`: one result's page served on 127.0.0.1. The server
 * holds the page in memory and answers exactly two paths, `/TOKEN/` (the page) and
 * `/TOKEN/report.json` (the JSON report); it never touches the file system after start-up,
 * so there is nothing to list and no path to traverse.
 *
 * Two locks keep other web sites out. The Host header must name the loopback address and
 * port it listens on (`127.0.0.1:PORT` or `localhost:PORT`): a page on another site that
 * rebinds its own DNS name to 127.0.0.1 sends its own name, and is answered 421 Misdirected
 * Request (RFC 9110, section 15.5.20); checking the Host header is the common-practice
 * defence of a local server against DNS rebinding. And TOKEN is 24 random bytes (base64url)
 * made at start and printed only in the URL: a request without it is answered 403, so a page
 * that guesses ports, or another user of this machine, reads nothing either.
 */
import { randomBytes, timingSafeEqual } from "node:crypto";
import { createServer, type Server, type ServerResponse } from "node:http";
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

/** The Host header names this server: the loopback address or localhost, with its port. */
function hostAllowed(host: string | undefined, port: number): boolean {
  if (host === undefined) return false;
  const m = /^(127\.0\.0\.1|localhost)(?::(\d{1,5}))?$/i.exec(host.trim());
  if (!m) return false;
  // A browser leaves out the port only when it is the scheme's default.
  return m[2] === undefined ? port === 80 : Number(m[2]) === port;
}

/** What follows `/TOKEN` in `path` (from the next slash on), or undefined when the token is not there; compared in constant time. */
function tokenPath(path: string, token: Buffer): string | undefined {
  const end = path.indexOf("/", 1);
  if (!path.startsWith("/") || end < 0) return undefined;
  const given = Buffer.from(path.slice(1, end), "utf8");
  if (given.length !== token.length || !timingSafeEqual(given, token)) return undefined;
  return path.slice(end);
}

/**
 * Start serving `page` on 127.0.0.1:port; resolves with the server and its URL, which
 * carries the access token (`http://127.0.0.1:PORT/TOKEN/`).
 */
export function serveViewPage(page: ViewPage, port: number): Promise<{ server: Server; url: string }> {
  const html = Buffer.from(page.html, "utf8");
  const json = Buffer.from(page.reportJson, "utf8");
  const token = randomBytes(24).toString("base64url");
  const tokenBytes = Buffer.from(token, "utf8");
  let listening = port;
  const refuse = (res: ServerResponse, status: number, text: string): void => {
    res.writeHead(status, { ...HEADERS, "Content-Type": "text/plain; charset=utf-8" });
    res.end(text + "\n");
  };
  const server = createServer((req, res) => {
    if (!hostAllowed(req.headers.host, listening)) {
      refuse(res, 421, `misdirected request: this server answers only to 127.0.0.1:${listening} and localhost:${listening}`);
      return;
    }
    const method = req.method ?? "GET";
    if (method !== "GET" && method !== "HEAD") {
      res.writeHead(405, { ...HEADERS, Allow: "GET, HEAD", "Content-Type": "text/plain; charset=utf-8" });
      res.end("method not allowed\n");
      return;
    }
    // The raw request target, unnormalised: only the exact two paths under the token are served.
    const target = tokenPath((req.url ?? "").split("?")[0], tokenBytes);
    if (target === undefined) {
      refuse(res, 403, "forbidden: open the address `sigmesh view` printed, with its token");
      return;
    }
    const body = target === "/" || target === "/index.html" ? html : target === "/report.json" ? json : undefined;
    if (!body) {
      refuse(res, 404, "not found");
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
      listening = typeof addr === "object" && addr ? addr.port : port;
      resolve({ server, url: `http://127.0.0.1:${listening}/${token}/` });
    });
  });
}

