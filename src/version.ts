/**
 * The program's version, from package.json: written into every report and into the sweep
 * journal's point keys. Found by walking up from this module, so it holds for the TypeScript
 * source (src/version.ts) and the build (dist/src/version.js) alike.
 */
import { readFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";

let cached: string | undefined;

/** The sigmesh version ("0.1.0"), or "unknown" when package.json cannot be found. */
export function version(): string {
  if (cached !== undefined) return cached;
  cached = "unknown";
  let dir = dirname(fileURLToPath(import.meta.url));
  for (let up = 0; up < 4; up++, dir = dirname(dir)) {
    try {
      const pkg = JSON.parse(readFileSync(join(dir, "package.json"), "utf8")) as { name?: string; version?: string };
      if (pkg.name === "sigmesh" && typeof pkg.version === "string") { cached = pkg.version; break; }
    } catch { /* not here: one level up */ }
  }
  return cached;
}
