/**
 * Parameter sweeps: a scene extracted at every point of a grid of parameter values, with
 * chosen entries of the Maxwell (C) and mutual (Cm) matrices tabulated per point.
 *
 * Points are numbered from 0 in grid order, the first `--vary` parameter varying slowest.
 * `--shard i/N` (0 ≤ i < N) takes the points whose number is ≡ i (mod N), so N jobs of a
 * batch scheduler's job array cover the sweep between them; `mergeSweepCsv` joins their
 * tables, refusing mismatched headers and repeated points and naming the missing ones.
 *
 * Each point is an independent extraction of the scene with its parameters replaced
 * (`loadScene(..., { parameters })`, the same reading as a scene written by hand with those
 * numbers). They run either one after another in this process, each using every core
 * through the worker pool, or as child processes (src/extract/sweep-point.ts, the library's
 * `extract` on one point) with one thread each, several at once. Both go through `extract`
 * (extract.ts), as `sigmesh extract` does. The tables and plots are src/report/sweep-table.ts.
 */
import { spawn } from "node:child_process";
import { createHash } from "node:crypto";
import { mkdtempSync, writeFileSync, rmSync } from "node:fs";
import { readInputBytes, readInputText } from "../io/input-file.js";
import { tmpdir } from "node:os";
import { join, dirname, resolve, isAbsolute } from "node:path";
import { InputError } from "../errors.js";
import { loadScene } from "../io/inputs.js";
import type { LengthUnit } from "../io/units.js";
import { substituteScene, loadSceneFile } from "../io/scene.js";
import { compiledUrl } from "../linalg/pool.js";
import { extract, extractionWarnings } from "./extract.js";
import type { PointSettings } from "./sweep-point.js";
import { fileURLToPath } from "node:url";

/** One swept parameter and its values, in the order they are run. */
export interface SweepAxis {
  name: string;
  values: number[];
  /** Values are logarithmically spaced (the plot's x axis is then logarithmic). */
  log: boolean;
}

const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/**
 * Read `NAME=START:STOP:COUNT` (linear steps), `NAME=log:START:STOP:COUNT` (logarithmic
 * steps, START and STOP positive) or `NAME=V1,V2,...` (the values given). Both ends are
 * included and exact. InputError naming the option and the fault otherwise.
 */
export function parseVary(text: string): SweepAxis {
  const bad = (fault: string): never => { throw new InputError(`--vary "${text}": ${fault}`); };
  const eq = text.indexOf("=");
  if (eq < 0) bad("expected NAME=START:STOP:COUNT, NAME=log:START:STOP:COUNT or NAME=V1,V2,... (e.g. gap=1:5:9)");
  const name = text.slice(0, eq).trim();
  if (!/^[A-Za-z_][A-Za-z0-9_]*$/.test(name)) bad(name === "" ? "no parameter name before \"=\"" : `"${name}" is not a parameter name (letters, digits, underscores)`);
  const spec = text.slice(eq + 1).trim();
  const num = (s: string, what: string): number => {
    const t = s.trim();
    if (!NUMBER.test(t)) bad(`${what} "${t}" is not a number`);
    const x = Number(t);
    if (!Number.isFinite(x)) bad(`${what} "${t}" is out of range`);
    return x;
  };
  if (spec.includes(":")) {
    const parts = spec.split(":");
    const log = parts[0].trim().toLowerCase() === "log";
    if (log) parts.shift();
    if (parts.length !== 3) bad(`expected ${log ? "log:" : ""}START:STOP:COUNT, got ${parts.length} field${parts.length === 1 ? "" : "s"} after "${log ? "log:" : "="}"`);
    const a = num(parts[0], "start"), b = num(parts[1], "stop");
    const c = parts[2].trim();
    if (!/^\d+$/.test(c) || Number(c) < 2) bad(`count "${c}" must be a whole number of at least 2 (the points from start to stop inclusive)`);
    const n = Number(c);
    if (n > 100000) bad(`count ${n} is more than 100000 points`);
    if (a === b) bad(`start and stop are both ${a}: give a list (${name}=${a}) for one value`);
    if (log && !(a > 0 && b > 0)) bad("logarithmic steps need a positive start and stop");
    const values: number[] = [];
    for (let k = 0; k < n; k++) {
      const f = k / (n - 1);
      values.push(k === 0 ? a : k === n - 1 ? b : log ? a * (b / a) ** f : a + (b - a) * f);
    }
    return { name, values, log };
  }
  if (spec === "") bad("no values after \"=\"");
  const values = spec.split(",").map((s, i) => num(s, `value ${i + 1}`));
  const seen = new Set<number>();
  for (const v of values) { if (seen.has(v)) bad(`${v} is listed twice`); seen.add(v); }
  return { name, values, log: false };
}

/** Every combination of the axes' values, the first axis varying slowest. */
export function sweepGrid(axes: readonly SweepAxis[]): Array<Record<string, number>> {
  const names = new Set<string>();
  for (const a of axes) {
    if (names.has(a.name)) throw new InputError(`--vary: "${a.name}" is varied twice; give its values once`);
    names.add(a.name);
  }
  let points: Array<Record<string, number>> = [{}];
  for (const a of axes) points = points.flatMap((p) => a.values.map((v) => ({ ...p, [a.name]: v })));
  if (points.length > 1_000_000) throw new InputError(`--vary: the grid has ${points.length} points, more than 1000000`);
  return points;
}

/** A slice of a sweep: points numbered ≡ `index` (mod `count`), 0-based. */
export interface Shard { index: number; count: number }

/** `I/N` with 0 ≤ I < N. */
export function parseShard(text: string): Shard {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  if (!m) throw new InputError(`--shard "${text}": expected I/N (slice I of N, 0-based: 0/4, 1/4, 2/4, 3/4)`);
  const index = Number(m[1]), count = Number(m[2]);
  if (count < 1) throw new InputError(`--shard "${text}": N must be at least 1`);
  if (index >= count) throw new InputError(`--shard "${text}": I must be from 0 to ${count - 1} (slices are numbered from 0)`);
  return { index, count };
}

/** Point numbers of a shard, in order. */
export function shardPoints(total: number, shard?: Shard): number[] {
  const out: number[] = [];
  for (let k = 0; k < total; k++) if (!shard || k % shard.count === shard.index) out.push(k);
  return out;
}

/** An entry of the Maxwell matrix (`C`) or of the two-terminal (mutual) matrix (`Cm`), by conductor names. */
export interface MatrixEntry { matrix: "C" | "Cm"; row: string; column: string }

export const entryLabel = (e: MatrixEntry): string => `${e.matrix}(${e.row},${e.column})`;

/** The default: every Maxwell diagonal entry, then the mutual entries between the first conductor and each other one. */
export function defaultEntries(names: readonly string[]): MatrixEntry[] {
  return [
    ...names.map((n): MatrixEntry => ({ matrix: "C", row: n, column: n })),
    ...names.slice(1).map((n): MatrixEntry => ({ matrix: "Cm", row: names[0], column: n })),
  ];
}

/** `C(a,b),Cm(a,c),...` checked against the conductor names. */
export function parseEntries(text: string, names: readonly string[]): MatrixEntry[] {
  const out: MatrixEntry[] = [];
  const re = /\s*(Cm|C)\s*\(\s*([^,()]+?)\s*,\s*([^,()]+?)\s*\)\s*/y;
  const bad = (at: number): never => {
    throw new InputError(`--entries "${text}": expected a list like C(pad,pad),Cm(pad,ground) (C: Maxwell matrix, Cm: two-terminal), problem at character ${at + 1}`);
  };
  let at = 0;
  for (;;) {
    re.lastIndex = at;
    const m = re.exec(text);
    if (!m) return bad(at);
    const e: MatrixEntry = { matrix: m[1] as "C" | "Cm", row: m[2], column: m[3] };
    for (const n of [e.row, e.column]) {
      if (!names.includes(n)) throw new InputError(`--entries "${text}": ${entryLabel(e)} names "${n}", which is not a conductor; the conductors are: ${names.join(", ")}`);
    }
    out.push(e);
    at = re.lastIndex;
    if (at === text.length) return out;
    if (text[at] !== ",") return bad(at);
    at++;
  }
}

/** Value of an entry; farads. `maxwell` and `mutual` are row-major k×k in the order of `names`. */
export function entryValue(e: MatrixEntry, names: readonly string[], maxwell: ArrayLike<number>, mutual: ArrayLike<number>): number {
  const k = names.length, i = names.indexOf(e.row), j = names.indexOf(e.column);
  return (e.matrix === "C" ? maxwell : mutual)[i * k + j];
}

/**
 * What one point yields: the conductor names, both matrices (F, row-major) and the warnings its
 * extraction raised (input and solve, each once; absent for a point taken from a journal).
 */
export interface PointMatrices { names: string[]; maxwell: ArrayLike<number>; mutual: ArrayLike<number>; warnings?: string[] }

/** A sweep point as people read it: its number and parameter values. */
export const describePoint = (k: number, p: Record<string, number>): string =>
  `sweep point ${k} (${Object.entries(p).map(([n, v]) => `${n}=${v}`).join(", ")})`;

export interface SweepRunOptions {
  /** Extraction settings passed to every point. */
  method?: "galerkin" | "collocation";
  solver?: "auto" | "direct" | "iterative" | "compressed";
  tolerance?: number;
  refine?: number;
  /** Requested relative accuracy at every point (adaptive refinement; excludes refine). */
  accuracy?: number;
  /** With accuracy: the most panels per point. */
  maxPanels?: number;
  /** Child processes at once (each with one thread); 0 runs the points in this process, one after another, on every core. */
  processes?: number;
  /** Called after each point (for progress). */
  onPoint?: (done: number, total: number) => void;
}

/** The settings every point is extracted with. */
function pointSettings(opts: SweepRunOptions): PointSettings {
  return { method: opts.method ?? "galerkin", solver: opts.solver ?? "auto", tolerance: opts.tolerance ?? 1e-4, refine: opts.refine ?? 0, accuracy: opts.accuracy, maxPanels: opts.maxPanels };
}

/** An InputError of point `k` attributed to the scene and the point. */
function atPoint(err: InputError, scene: string, k: number, point: Record<string, number>): InputError {
  return new InputError(err.fault, err.file ?? scene, [describePoint(k, point), err.place].filter(Boolean).join(", "));
}

/** One point in this process: the scene read with the point's parameters, then `extract`, as `sigmesh extract` does. */
export async function extractPoint(scene: string, point: Record<string, number>, opts: SweepRunOptions = {}, k = 0): Promise<PointMatrices> {
  try {
    const r = await extract(loadScene(scene, { parameters: point }), pointSettings(opts));
    return { names: r.names, maxwell: r.maxwell, mutual: r.mutual, warnings: extractionWarnings(r) };
  } catch (err) {
    if (err instanceof InputError) throw atPoint(err, scene, k, point);
    throw err;
  }
}

/** The child process's script (compiled JavaScript, also under the test runner). */
function pointScript(): string {
  const here = import.meta.url;
  return fileURLToPath(here.endsWith(".ts") ? compiledUrl(new URL("./sweep-point.ts", here).href) : new URL("./sweep-point.js", here).href);
}

/** The substituted scene with mesh paths made absolute, so it can be read from anywhere. */
function standaloneSceneText(scene: string, point: Record<string, number>): string {
  const value = substituteScene(readInputText(scene, "scene"), scene, point);
  const base = dirname(resolve(scene));
  const absolute = (o: unknown): void => {
    if (typeof o !== "object" || o === null) return;
    const e = o as Record<string, unknown>;
    if (typeof e.mesh === "string" && !isAbsolute(e.mesh)) e.mesh = resolve(base, e.mesh);
    if (Array.isArray(e.parts)) e.parts.forEach(absolute);
  };
  for (const key of ["conductors", "dielectrics"]) if (Array.isArray(value[key])) (value[key] as unknown[]).forEach(absolute);
  return JSON.stringify(value, null, 2);
}

function runChild(args: string[], env: NodeJS.ProcessEnv, signal?: AbortSignal): Promise<{ code: number | null; out: string; err: string }> {
  return new Promise((done, fail) => {
    const child = spawn(process.execPath, args, { env, stdio: ["ignore", "pipe", "pipe"], signal });
    const out: Buffer[] = [], err: Buffer[] = [];
    child.stdout.on("data", (b: Buffer) => out.push(b));
    child.stderr.on("data", (b: Buffer) => err.push(b));
    child.on("error", (e) => { if ((e as Error).name === "AbortError") done({ code: null, out: "", err: "" }); else fail(e); });
    child.on("close", (code) => done({ code, out: Buffer.concat(out).toString("utf8"), err: Buffer.concat(err).toString("utf8") }));
  });
}

/** A child's answer as the point's matrices; its failure as an error naming the scene (not the temporary copy) and the point. */
function childResult(r: { code: number | null; out: string; err: string }, file: string, scene: string, k: number, point: Record<string, number>): PointMatrices {
  const own = (text: string | null): string | undefined => (text === null ? undefined : text.split(file).join(scene));
  if (r.code === 0 || r.code === 2) {
    const answer = JSON.parse(r.out) as PointMatrices & { inputError?: { fault: string; file: string | null; place: string | null } };
    const e = answer.inputError;
    if (!e) return { names: answer.names, maxwell: answer.maxwell, mutual: answer.mutual, warnings: (answer.warnings ?? []).map((w) => own(w)!) };
    throw atPoint(new InputError(own(e.fault)!, own(e.file) ?? scene, own(e.place)), scene, k, point);
  }
  throw new Error(`${describePoint(k, point)}: ${r.err.trim().split("\n")[0] || `the point's process ended with code ${r.code}`}`);
}

/** A point that could not be extracted: its number and the error (an InputError naming the point for bad input). */
export interface PointFailure { point: number; error: unknown }

export interface SweepPointsOptions extends SweepRunOptions {
  /** Called with each point's result as soon as it is known (for a journal), in completion order. */
  onResult?: (point: number, result: PointMatrices) => void;
  /** Stops the sweep: no new point starts, child processes are killed, and the run rejects with an AbortError. */
  signal?: AbortSignal;
}

const isFailure = (r: PointMatrices | PointFailure): r is PointFailure => "error" in r;
export { isFailure as isPointFailure };

function aborted(): Error {
  const e = new Error("the sweep was interrupted");
  e.name = "AbortError";
  return e;
}

/**
 * Extract the scene at the given points (numbers `indices` of the grid `points`); resolves with
 * one entry per index, in order of `indices`: the matrices, or the failure of that point. A
 * failing point does not stop the others. Rejects only when `signal` aborts.
 */
export async function runSweepPoints(scene: string, points: ReadonlyArray<Record<string, number>>, indices: readonly number[],
  opts: SweepPointsOptions = {}): Promise<Array<PointMatrices | PointFailure>> {
  const out: Array<PointMatrices | PointFailure> = new Array(indices.length);
  const processes = opts.processes ?? 0;
  const signal = opts.signal;
  let done = 0;
  const settle = (q: number, r: PointMatrices | PointFailure): void => {
    out[q] = r;
    if (!isFailure(r)) opts.onResult?.(indices[q], r);
    opts.onPoint?.(++done, indices.length);
  };
  if (processes <= 0) {
    for (let q = 0; q < indices.length; q++) {
      if (signal?.aborted) throw aborted();
      const k = indices[q];
      try { settle(q, await extractPoint(scene, points[k], opts, k)); } catch (error) { settle(q, { point: k, error }); }
    }
    return out;
  }
  const script = pointScript();
  const dir = mkdtempSync(join(tmpdir(), "sigmesh-sweep-"));
  const env = { ...process.env, SIGMESH_THREADS: "1" };
  const settings = JSON.stringify(pointSettings(opts));
  let next = 0;
  const worker = async (): Promise<void> => {
    while (next < indices.length && !signal?.aborted) {
      const q = next++;
      const k = indices[q], point = points[k];
      try {
        const file = join(dir, `point-${k}.json`);
        writeFileSync(file, standaloneSceneText(scene, point));
        const r = await runChild([script, file, settings], env, signal);
        if (signal?.aborted) return;
        settle(q, childResult(r, file, scene, k, point));
      } catch (error) {
        if (signal?.aborted) return;
        // A point that cannot even be written out (bad scene text) fails like one whose extraction fails.
        settle(q, { point: k, error: error instanceof InputError && !error.place ? atPoint(error, scene, k, point) : error });
      }
    }
  };
  try {
    await Promise.all(Array.from({ length: Math.min(processes, indices.length) }, worker));
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  if (signal?.aborted) throw aborted();
  return out;
}

/**
 * Extract the scene at the given points, in order of `indices`; resolves with one result per
 * index. Every point is run; if any failed, rejects with the failure of the first of them
 * (an InputError naming the point for bad input).
 */
export async function runSweep(scene: string, points: ReadonlyArray<Record<string, number>>, indices: readonly number[],
  opts: SweepPointsOptions = {}): Promise<PointMatrices[]> {
  const all = await runSweepPoints(scene, points, indices, opts);
  const failed = all.find(isFailure);
  if (failed) throw failed.error;
  return all as PointMatrices[];
}

/**
 * A digest of everything a point's result depends on: the scene as written by hand at that
 * point (numbers substituted, mesh paths absolute), the contents of the mesh files it names,
 * the extraction settings and the program version. Equal keys give equal matrices, so a
 * journalled point with the same key is not run again. `fileDigests` caches file contents' digests.
 */
export function sweepPointKey(scene: string, point: Record<string, number>, opts: SweepRunOptions, version: string,
  fileDigests: Map<string, string> = new Map()): string {
  const text = standaloneSceneText(scene, point);
  const value = JSON.parse(text) as Record<string, unknown>;
  const files: string[] = [];
  const collect = (o: unknown): void => {
    if (typeof o !== "object" || o === null) return;
    const e = o as Record<string, unknown>;
    if (typeof e.mesh === "string") files.push(e.mesh);
    if (Array.isArray(e.parts)) e.parts.forEach(collect);
  };
  for (const key of ["conductors", "dielectrics"]) if (Array.isArray(value[key])) (value[key] as unknown[]).forEach(collect);
  const h = createHash("sha256");
  // accuracy and maxPanels only when given: journals of runs without them keep their key.
  h.update(JSON.stringify({ version, method: opts.method ?? "galerkin", solver: opts.solver ?? "auto", tolerance: opts.tolerance ?? 1e-4, refine: opts.refine ?? 0, accuracy: opts.accuracy, maxPanels: opts.maxPanels }));
  h.update("\n");
  h.update(text);
  for (const f of [...new Set(files)].sort()) {
    let d = fileDigests.get(f);
    if (d === undefined) {
      try { d = createHash("sha256").update(readInputBytes(f, "mesh")).digest("hex"); } catch { d = "unreadable"; }
      fileDigests.set(f, d);
    }
    h.update(`\n${f} ${d}`);
  }
  return h.digest("hex");
}

/** Conductor names of the scene at a point, without meshing it (for checking `--entries` before running). */
export function sceneConductorNames(scene: string, point: Record<string, number>): string[] {
  return loadSceneFile(scene, { parameters: point }).conductors.map((c) => c.name);
}

/** The scene's length unit (its lengths and length parameters are in it). */
export function sceneLengthUnit(scene: string, point: Record<string, number>): LengthUnit {
  return loadSceneFile(scene, { parameters: point }).unit;
}
