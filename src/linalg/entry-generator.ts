/**
 * Entry generators: how a matrix that is never stored is known to the compression code
 * (hmatrix.ts, apply-once.ts), as in H2Lib's `matrixentry_t` callback. The linear algebra
 * asks for the entries of blocks and never learns what they mean.
 *
 * A worker cannot receive a function, so a generator that runs in the workers travels as an
 * `EntrySource`: the typed handle (task.ts) of a function
 *   fn(...before, rows, cols, out, ...after)
 * exported by the module that defines it, with the arguments placed before and after the
 * block's (rows, cols, out). The handle's type checks `before` and `after` against the
 * function's parameters where the source is written.
 */
import { compiledUrl } from "./pool.js";
import type { Task } from "./task.js";

/** out[a·cols.length + b] = M[rows[a], cols[b]]: the entries of any block, row-major. */
export type EntryGenerator = (rows: Uint32Array, cols: Uint32Array, out: Float64Array) => void;

/** The block's arguments between `before` and `after`. */
export type BlockArguments = [rows: Uint32Array, cols: Uint32Array, out: Float64Array];

/**
 * entry(rows, cols, out) = fn(...before, rows, cols, out, ...after) for the function `task`
 * names; B and A are inferred from `before` and `after`, and the function must accept them.
 */
export interface EntrySource<B extends unknown[] = unknown[], A extends unknown[] = unknown[]> {
  readonly task: Task<NoInfer<(...args: [...B, ...BlockArguments, ...A]) => void>>;
  readonly before?: B;
  readonly after?: A;
}

/** An EntrySource with its argument types forgotten, as it crosses to a worker. */
export interface EntrySourceData {
  readonly task: Task<(...args: any[]) => void>;
  readonly before?: readonly unknown[];
  readonly after?: readonly unknown[];
}

/** The generator an EntrySource names (the module loads once per thread: import() caches it). */
export async function loadGenerator(source: EntrySourceData): Promise<EntryGenerator> {
  const { module, name } = source.task;
  const mod = (await import(compiledUrl(module))) as Record<string, unknown>;
  const fn = mod[name];
  if (typeof fn !== "function") throw new Error(`no entry generator ${name} in ${module}`);
  const before = source.before ?? [], after = source.after ?? [];
  const f = fn as (...a: unknown[]) => void;
  const gen: EntryGenerator = (rows, cols, out) => { f(...before, rows, cols, out, ...after); };
  return gen;
}
