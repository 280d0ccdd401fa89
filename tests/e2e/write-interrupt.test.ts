// End to end: SIGINT and SIGTERM sent to `sigmesh extract` at random moments leave either the
// complete earlier set of outputs or the complete new set, and never a hidden temporary. The
// scene has 400 probe lines, so the set is 404 files (a field plot per line, an HTML report
// carrying every plot) and its write phase lasts long enough (about a second here) to be hit.
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawn } from "node:child_process";
import { mkdtempSync, rmSync, existsSync, writeFileSync, readFileSync, readdirSync, mkdirSync, watch } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
const LINES = 400;
const TRIES = 10;
let dir = "";
const out = () => join(dir, "out");
const names = ["r.json", "r.html", "p.csv", ...Array.from({ length: LINES }, (_, i) => `p-ray${i}.svg`)].sort();

interface Outcome { code: number | null; signal: NodeJS.Signals | null; sent: boolean; firstHidden?: number; end: number }

/**
 * Run the extraction into out/; `kill` chooses when to send `signal`: a delay in ms after the
 * first hidden file appears in out/ (the write phase has begun), or after the start.
 */
function runExtract(signal?: NodeJS.Signals, kill?: { afterStart?: number; afterFirstHidden?: number }): Promise<Outcome> {
  return new Promise((done) => {
    const t0 = performance.now();
    const child = spawn(process.execPath, [cli, "extract", "scene.json", "--json", "out/r.json", "--html", "out/r.html", "--probe-csv", "out/p.csv", "--quiet"], { cwd: dir, stdio: "ignore" });
    let firstHidden: number | undefined, sent = false;
    const send = (): void => { if (signal && child.exitCode === null && child.signalCode === null) sent = child.kill(signal); };
    const watcher = watch(out(), (_event, name) => {
      if (firstHidden !== undefined || !name || !name.startsWith(".")) return;
      firstHidden = performance.now() - t0;
      if (kill?.afterFirstHidden !== undefined) setTimeout(send, kill.afterFirstHidden);
    });
    if (kill?.afterStart !== undefined) setTimeout(send, kill.afterStart);
    child.on("exit", (code, sig) => { watcher.close(); done({ code, signal: sig, sent, firstHidden, end: performance.now() - t0 }); });
  });
}

function writeEarlierSet(): void {
  rmSync(out(), { recursive: true, force: true });
  mkdirSync(out());
  for (const name of names) writeFileSync(join(out(), name), `earlier ${name}`);
}

/** "old" when every file is the earlier one, "new" when every file is a complete new one; throws on anything else. */
function setState(): "old" | "new" {
  expect(readdirSync(out()).sort()).toEqual(names); // nothing hidden, nothing missing
  const old = names.filter((n) => readFileSync(join(out(), n), "utf8") === `earlier ${n}`);
  if (old.length === names.length) return "old";
  expect(old).toEqual([]);
  expect(JSON.parse(readFileSync(join(out(), "r.json"), "utf8")).format).toBe("sigmesh-extraction/1");
  expect(readFileSync(join(out(), "r.html"), "utf8")).toMatch(/<\/html>\s*$/);
  expect(readFileSync(join(out(), "p.csv"), "utf8").trim().split("\n")).toHaveLength(LINES * 4 + 1);
  for (const n of names.filter((x) => x.endsWith(".svg"))) expect(readFileSync(join(out(), n), "utf8")).toMatch(/<\/svg>\s*$/);
  return "new";
}

beforeAll(() => {
  if (!existsSync(cli)) throw new Error("dist/cli/main.js missing: run `npx tsc -p tsconfig.json` first");
  dir = mkdtempSync(join(tmpdir(), "sigmesh-interrupt-"));
  const probes = Array.from({ length: LINES }, (_, i) => {
    const a = (2 * Math.PI * i) / LINES, c = Math.cos(a), s = Math.sin(a);
    return { name: `ray${i}`, line: { from: [6 * c, 6 * s, 0], to: [12 * c, 12 * s, 0], points: 4 } };
  });
  writeFileSync(join(dir, "scene.json"), JSON.stringify({ unit: "mm", conductors: [{ name: "ball", shape: { sphere: { radius: 5, level: 3 } }, potential: 1000 }], probes }));
});
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

describe("an interrupt during the write of the outputs", () => {
  it(`leaves the complete earlier set or the complete new set, and no temporary (${TRIES} tries at random moments)`, async () => {
    // A run undisturbed gives the length of the write phase on this machine.
    writeEarlierSet();
    const calm = await runExtract();
    expect(calm.code).toBe(0);
    expect(setState()).toBe("new");
    const phase = calm.end - calm.firstHidden!;
    const log: string[] = [];
    let hitPhase = 0;
    for (let t = 0; t < TRIES; t++) {
      writeEarlierSet();
      const signal: NodeJS.Signals = t % 2 === 0 ? "SIGINT" : "SIGTERM";
      // Two tries during the solve, before any file is written; the others anywhere in the write phase.
      const kill = t < 2 ? { afterStart: Math.random() * calm.firstHidden! * 0.8 } : { afterFirstHidden: Math.random() * phase };
      const r = await runExtract(signal, kill);
      const state = setState();
      log.push(`${signal} ${JSON.stringify(kill)}: ${r.signal ?? `exit ${r.code}`}, ${state} set`);
      if (r.sent) {
        // Ended by the signal it was sent, once it could act on it: after the write, or before it
        // began. A signal that lands while the finished process is already exiting may find it
        // past acting on it: then the run is complete (exit 0, the new set).
        if (r.signal === null && r.code === 0 && r.firstHidden !== undefined) expect(setState(), log.join("\n")).toBe("new");
        else expect(r.signal, log.join("\n")).toBe(signal);
        if (r.firstHidden !== undefined) hitPhase++;
      } else {
        expect(r.code, log.join("\n")).toBe(0);
      }
      expect(state, log.join("\n")).toBe(r.firstHidden === undefined ? "old" : "new");
    }
    // The tries must have reached the write phase for the test to mean anything. The moments are
    // drawn from an undisturbed run's timing, which a loaded machine stretches: 4 of 10 seen at
    // load 15, so three are asked for.
    expect(hitPhase, log.join("\n")).toBeGreaterThanOrEqual(3);
  });
});
