// Sweep benchmark: 9 gaps of a pad pair, run (a) one point at a time in the sweep's own process
// (each point on every core through the worker pool), (b) as 1 child process of one thread
// (serial, one core) and (c) as 2 child processes of one thread each (parallel, both cores).
// Prints wall time, speed-up against (b), and CPU seconds over wall seconds, which is the
// number of cores kept busy (the sweep's and its children's user + system time, from
// /proc/self/stat of this process after each sweep process is waited for). Figures, not asserts.
//   node tests/bench/sweep.bench.mjs [quick]
import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync, readFileSync, rmSync } from "node:fs";
import { tmpdir, loadavg, cpus } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";

const quick = process.argv.includes("quick");
const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
const dir = mkdtempSync(join(tmpdir(), "sigmesh-sweep-bench-"));
const load = () => loadavg().map((x) => x.toFixed(2)).join(" ");
console.log(`${cpus().length} cores; load average at start ${load()}`);

/** CPU seconds of this process's waited-for children (utime + stime of the children, /proc/self/stat fields 16-17, in clock ticks of 1/100 s on Linux). */
function childCpu() {
  try {
    const stat = readFileSync("/proc/self/stat", "utf8");
    const f = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
    return (Number(f[13]) + Number(f[14])) / 100; // fields 16 and 17, counted from field 3 after the name
  } catch { return NaN; }
}

const scene = (divisions) => JSON.stringify({
  unit: "mm", parameters: { gap: 1 }, conductors: [
    { name: "pad", shape: { box: { size: [10, 10, 0.5], divisions: [divisions, divisions, 1] } }, potential: 1 },
    { name: "top", shape: { box: { size: [10, 10, 0.5], divisions: [divisions, divisions, 1] } }, place: { translate: [0, 0, "=gap + 0.5"] }, potential: 0 },
  ] });

const sizes = quick ? [4, 8] : [4, 12];
console.log("\npanels  mode                                   wall s  speed-up  cores busy");
for (const d of sizes) {
  const file = join(dir, `pair${d}.json`);
  writeFileSync(file, scene(d));
  const panels = 2 * (2 * d * d * 2 + 4 * d * 2);
  let serial = NaN;
  const tables = [];
  for (const [processes, what] of [["1", "1 child process, 1 thread (serial)"], ["2", "2 child processes, 1 thread each"], ["0", "in-process, pool on every core"]]) {
    const csv = join(dir, `pair${d}-${processes}.csv`);
    const cpu0 = childCpu();
    const t = performance.now();
    const r = spawnSync(process.execPath, [cli, "sweep", file, "--vary", "gap=0.5:4.5:9", "--csv", csv, "--processes", processes, "--quiet"], { encoding: "utf8" });
    const wall = (performance.now() - t) / 1e3;
    const cpu = childCpu() - cpu0;
    if (r.status !== 0) { console.log(`${what}: exit ${r.status}: ${r.stderr.trim()}`); continue; }
    if (processes === "1") serial = wall;
    tables.push(readFileSync(csv, "utf8"));
    console.log(`${String(panels).padStart(6)}  ${what.padEnd(38)} ${wall.toFixed(2).padStart(6)}  ${(serial / wall).toFixed(2).padStart(8)}  ${(cpu / wall).toFixed(2).padStart(10)}`);
  }
  console.log(`        tables of the three modes identical: ${tables.length === 3 && tables.every((x) => x === tables[0]) ? "yes" : "NO"}`);
}
console.log(`\nload average at end ${load()} (the machine is shared: compare ratios within one run)`);
rmSync(dir, { recursive: true, force: true });
