/**
 * Vitest global setup: worker threads run the compiled modules in dist/ (src/linalg/pool.ts
 * compiledUrl), not the TypeScript the tests import, so before any test runs the TypeScript
 * is rebuilt when some src/ or cli/ module is newer than its compiled file. Without this a
 * change to code that runs in a worker would pass or fail on the last build's code.
 */
import { spawnSync } from "node:child_process";
import { readdirSync, statSync } from "node:fs";
import { createRequire } from "node:module";
import { join, relative } from "node:path";
import { fileURLToPath } from "node:url";

const ROOT = fileURLToPath(new URL("../..", import.meta.url));

/** The .ts modules under root/src and root/cli whose dist/…/.js is missing or older. */
export function staleModules(root: string): string[] {
  const stale: string[] = [];
  const walk = (dir: string): void => {
    let entries;
    try { entries = readdirSync(dir, { withFileTypes: true }); } catch { return; }
    for (const e of entries) {
      const path = join(dir, e.name);
      if (e.isDirectory()) { walk(path); continue; }
      if (!e.name.endsWith(".ts") || e.name.endsWith(".d.ts")) continue;
      const js = join(root, "dist", relative(root, path)).replace(/\.ts$/, ".js");
      let built = -Infinity;
      try { built = statSync(js).mtimeMs; } catch { /* missing: stale */ }
      if (built < statSync(path).mtimeMs) stale.push(relative(root, path));
    }
  };
  walk(join(root, "src"));
  walk(join(root, "cli"));
  return stale;
}

export default function setup(): void {
  const stale = staleModules(ROOT);
  if (stale.length === 0) return;
  const shown = stale.slice(0, 3).join(", ") + (stale.length > 3 ? ` and ${stale.length - 3} more` : "");
  console.log(`tests/setup/build.ts: ${shown} newer than dist/; compiling (tsc -p tsconfig.json)`);
  const tsc = createRequire(import.meta.url).resolve("typescript/bin/tsc");
  const run = spawnSync(process.execPath, [tsc, "-p", "tsconfig.json"], { cwd: ROOT, encoding: "utf8" });
  // tsc emits despite type errors; the tests may still run on what it emitted, but say so.
  if (run.status !== 0) console.warn(`tests/setup/build.ts: tsc reported errors:\n${run.stdout}${run.stderr}`);
  const still = staleModules(ROOT);
  if (still.length > 0) throw new Error(`tests/setup/build.ts: ${still.join(", ")} still newer than dist/ after tsc; run npm run build`);
}
