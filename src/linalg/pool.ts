/**
 * A small pool of worker threads for the heavy loops (assembly, factorisation, products).
 *
 * A task is a named export of an ES module, called in a worker with arguments that are
 * structured-cloned; `SharedArrayBuffer`s inside them are shared, not copied, so tasks
 * work in place on shared typed arrays. The pool knows nothing of what tasks compute.
 *
 * Workers load compiled JavaScript. When the caller's module is TypeScript source (as
 * under the test runner), `compiledUrl` maps `<root>/src/a/b.ts` to `<root>/dist/src/a/b.js`;
 * `npm test` builds first, so the compiled files are current.
 */
import { Worker } from "node:worker_threads";
import { availableParallelism } from "node:os";
import { existsSync } from "node:fs";
import { fileURLToPath, pathToFileURL } from "node:url";

/** URL of the compiled JavaScript module for a module URL (identity for .js). */
export function compiledUrl(url: string): string {
  if (!url.endsWith(".ts")) return url;
  const path = fileURLToPath(url);
  const m = /^(.*)[\\/](src|cli)[\\/](.*)\.ts$/.exec(path);
  if (!m) throw new Error(`cannot map ${path} to its compiled module`);
  const js = `${m[1]}/dist/${m[2]}/${m[3]}.js`;
  if (!existsSync(js)) throw new Error(`compiled module ${js} is missing: run npm run build`);
  return pathToFileURL(js).href;
}

const WORKER_SOURCE = `
const { parentPort } = require("node:worker_threads");
const modules = new Map();
parentPort.on("message", async (msg) => {
  try {
    let mod = modules.get(msg.module);
    if (!mod) { mod = await import(msg.module); modules.set(msg.module, mod); }
    const fn = mod[msg.fn];
    if (typeof fn !== "function") throw new Error("no task " + msg.fn + " in " + msg.module);
    const result = await fn(...msg.args);
    parentPort.postMessage({ id: msg.id, ok: true, result });
  } catch (err) {
    parentPort.postMessage({ id: msg.id, ok: false, error: String(err && err.stack || err) });
  }
});
`;

interface Pending { resolve: (v: unknown) => void; reject: (e: Error) => void }

export class WorkerPool {
  readonly size: number;
  private workers: Worker[] = [];
  private pending = new Map<number, Pending>();
  private nextId = 1;

  constructor(size: number = defaultThreads()) {
    this.size = Math.max(1, size);
    for (let i = 0; i < this.size; i++) {
      const w = new Worker(WORKER_SOURCE, { eval: true });
      w.on("message", (msg: { id: number; ok: boolean; result?: unknown; error?: string }) => {
        const p = this.pending.get(msg.id);
        if (!p) return;
        this.pending.delete(msg.id);
        if (msg.ok) p.resolve(msg.result);
        else p.reject(new Error(`worker task failed: ${msg.error}`));
      });
      w.on("error", (err) => {
        for (const p of this.pending.values()) p.reject(err);
        this.pending.clear();
      });
      w.unref();
      this.workers.push(w);
    }
  }

  /** Run `fn` of `module` on worker `index` (mod size). */
  runOn<T>(index: number, module: string, fn: string, args: unknown[]): Promise<T> {
    const w = this.workers[index % this.size];
    const id = this.nextId++;
    return new Promise<T>((resolve, reject) => {
      this.pending.set(id, { resolve: resolve as (v: unknown) => void, reject });
      w.ref();
      w.postMessage({ id, module: compiledUrl(module), fn, args });
    }).finally(() => { if (this.pending.size === 0) for (const x of this.workers) x.unref(); });
  }

  /** Run one call per argument list, spread across the workers; resolves in order. */
  map<T>(module: string, fn: string, argLists: unknown[][]): Promise<T[]> {
    return Promise.all(argLists.map((args, i) => this.runOn<T>(i, module, fn, args)));
  }

  async close(): Promise<void> {
    await Promise.all(this.workers.map((w) => w.terminate()));
    this.workers = [];
  }
}

/** Threads to use: SIGMESH_THREADS if set, else the machine's available parallelism. */
export function defaultThreads(): number {
  const env = Number(process.env.SIGMESH_THREADS);
  if (Number.isInteger(env) && env > 0) return env;
  return availableParallelism();
}

let shared: WorkerPool | undefined;

/** The process-wide pool, created on first use. */
export function sharedPool(): WorkerPool {
  if (!shared) shared = new WorkerPool();
  return shared;
}

export async function closeSharedPool(): Promise<void> {
  if (shared) { const p = shared; shared = undefined; await p.close(); }
}

/** A Float64Array over fresh shared memory. */
export function sharedFloat64(length: number): Float64Array {
  return new Float64Array(new SharedArrayBuffer(8 * length));
}

/** A copy of `a` in shared memory (returned as is when already shared). */
export function toShared(a: Float64Array): Float64Array {
  if (a.buffer instanceof SharedArrayBuffer) return a;
  const s = sharedFloat64(a.length);
  s.set(a);
  return s;
}
