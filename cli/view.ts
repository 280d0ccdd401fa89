/**
 * `sigmesh view <report.json | report.html> [--port N]`: serve the viewer for one result on
 * 127.0.0.1 until Ctrl-C (src/report/view-server.ts).
 */
import type { Command } from "commander";
import { InputError } from "../src/errors.js";
import { viewPage, serveViewPage } from "../src/report/view-server.js";
import { displayText } from "../src/io/display-text.js";
import { action } from "./common.js";

/** Port number 0–65535 (0: the system picks a free one). */
export function parsePort(text: string): number {
  const n = Number(text);
  if (!/^\d+$/.test(text.trim()) || !Number.isInteger(n) || n < 0 || n > 65535) throw new InputError(`--port "${text}": expected a whole number from 0 to 65535`);
  return n;
}

export function registerView(program: Command): void {
  program
    .command("view")
    .description("serve the 3D viewer for one result on 127.0.0.1 (a JSON report with panel data, or an HTML report)")
    .argument("<report>", "report.json written with --json-panels, or report.html written with --html")
    .option("--port <N>", "port to listen on; 0 lets the system pick a free one", "0")
    .action(action(async (path: string, opts: { port: string }) => {
      const port = parsePort(opts.port);
      const page = viewPage(path);
      const { server, url } = await serveViewPage(page, port);
      process.stdout.write(`sigmesh: viewer for ${displayText(path)} at ${url}  (Ctrl-C to stop)\n`);
      const stop = (): void => { server.close(); server.closeAllConnections(); };
      process.once("SIGINT", stop);
      process.once("SIGTERM", stop);
      await new Promise<void>((resolve) => server.once("close", () => resolve()));
    }));
}
