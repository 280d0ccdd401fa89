/**
 * Typed handles for functions that run in worker threads (pool.ts).
 *
 * A worker cannot receive a function, only the URL of the module that exports it and the
 * export's name. A handle carries both, made once beside the function it names:
 *
 *   export function assembleRowsTask(...) { ... }
 *   export const assembleRows = task(import.meta.url, { assembleRowsTask });
 *
 * The object shorthand takes the name from the function itself, so renaming the function
 * without its handle fails to compile, and the handle's type carries the function's
 * signature: `pool.run(handle, w, args)` checks the arguments against it and types the result.
 * A handle is plain data (structured-cloneable), so it can itself be passed to a worker.
 */

/** Type only: the key under which a handle keeps its function's signature (never set). */
export declare const taskSignature: unique symbol;

export interface Task<F extends (...args: any[]) => unknown> {
  /** URL of the module that exports the function (TypeScript source under the test runner). */
  readonly module: string;
  /** Name of the export. */
  readonly name: string;
  /** Never present at run time: it only ties the handle's type to the function's. */
  readonly [taskSignature]?: F;
}

/** The handle of `fn`'s single entry, exported by the module at `moduleUrl` (pass import.meta.url). */
export function task<F extends (...args: any[]) => unknown>(moduleUrl: string, fn: Record<string, F>): Task<F> {
  const names = Object.keys(fn);
  if (names.length !== 1) throw new Error(`task() takes one function, written { name }; got ${names.length}`);
  const name = names[0];
  if (typeof fn[name] !== "function") throw new Error(`task(): ${name} is not a function`);
  return { module: moduleUrl, name };
}
