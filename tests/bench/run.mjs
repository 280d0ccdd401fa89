// Benchmark runner: `npm run bench [-- name-filter]` runs every tests/bench/*.bench.mjs in turn.
// Benches import the compiled library from dist/ and print their figures; none is a pass/fail test.
import { readdirSync } from "node:fs";
import { cpus, totalmem, freemem } from "node:os";
import { spawnSync } from "node:child_process";
import { fileURLToPath } from "node:url";

const dir = fileURLToPath(new URL(".", import.meta.url));
const filter = process.argv[2] ?? "";
const c = cpus();
console.log(`machine: ${c.length} x ${c[0]?.model ?? "unknown CPU"}, ${(totalmem() / 2 ** 30).toFixed(1)} GiB RAM (${(freemem() / 2 ** 30).toFixed(1)} GiB free), Node ${process.version}, ${process.platform}/${process.arch}`);
let failed = 0;
for (const f of readdirSync(dir).filter((n) => n.endsWith(".bench.mjs") && n.includes(filter)).sort()) {
  console.log(`\n== ${f}`);
  // Each bench in its own process so peak-memory figures do not mix.
  const r = spawnSync(process.execPath, ["--expose-gc", "--max-old-space-size=20000", `${dir}/${f}`], { stdio: "inherit" });
  if (r.status !== 0) { failed++; console.log(`!! ${f} exited with ${r.status}`); }
}
process.exitCode = failed ? 1 : 0;
