/**
 * A small pool of worker threads for the heavy loops (assembly, factorisation, products).
 *
 * A task is an exported function of an ES module, named by a typed handle (task.ts), called
 * in a worker with arguments that are structured-cloned; `SharedArrayBuffer`s inside them are
 * shared, not copied, so tasks work in place on shared typed arrays. The pool knows nothing
 * of what tasks compute.
 *
 * Workers load compiled JavaScript. When the caller's module is TypeScript source (as
 * under the test runner), `compiledUrl` maps `<root>/src/a/b.ts` to `<root>/dist/src/a/b.js`
 * and refuses a compiled file older than its source, so a worker never runs stale code
 * unnoticed (the test setup, tests/setup/build.ts, rebuilds before the run).
 */
import { Worker } from "node:worker_threads";
import { availableParallelism } from "node:os";
import { statSync } from "node:fs";
import { fileURLToPath, pathToFileURL } from "node:url";
import type { Task } from "./task.js";

/**
 * URL of the compiled JavaScript module for a module URL (identity for anything but .ts).
 * Throws, naming both files, when the compiled module is missing or older than its source.
 */
export function compiledUrl(url: string): string {
  if (!url.endsWith(".ts")) return url;
  const path = fileURLToPath(url);
  const m = /^(.*)[\\/](src|cli)[\\/](.*)\.ts$/.exec(path);
  if (!m) throw new Error(`cannot map ${path} to its compiled module`);
  const js = `${m[1]}/dist/${m[2]}/${m[3]}.js`;
  let built: number;
  try { built = statSync(js).mtimeMs; } catch { throw new Error(`compiled module ${js} is missing: run npm run build`); }
  if (built < statSync(path).mtimeMs) throw new Error(`compiled module ${js} is older than its source ${path}: run npm run build`);
  return pathToFileURL(js).href;
}

// Read as CommonJS or, when the parent runs with --input-type=module (a script given with -e), as
// a module: only dynamic import() works in both, so the source uses nothing else.
const WORKER_SOURCE = `
(async () => {
  const { parentPort } = await import("node:worker_threads");
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
})();
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

  /** Run the task on worker `index` (mod size). */
  run<F extends (...args: any[]) => unknown>(task: Task<F>, index: number, args: Parameters<F>): Promise<Awaited<ReturnType<F>>> {
    const w = this.workers[index % this.size];
    const id = this.nextId++;
    return new Promise<Awaited<ReturnType<F>>>((resolve, reject) => {
      const module = compiledUrl(task.module); // throws (a rejection) before anything waits on the worker
      this.pending.set(id, { resolve: resolve as (v: unknown) => void, reject });
      w.ref();
      w.postMessage({ id, module, fn: task.name, args });
    }).finally(() => { if (this.pending.size === 0) for (const x of this.workers) x.unref(); });
  }

  /** Run the task once per argument list, call i on worker i (mod size); resolves in order. */
  map<F extends (...args: any[]) => unknown>(task: Task<F>, argLists: Parameters<F>[]): Promise<Awaited<ReturnType<F>>[]> {
    return Promise.all(argLists.map((args, i) => this.run(task, i, args)));
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
