/** Tasks used by the worker-pool tests: trivial, so a failure points at the pool. */
import { task } from "./task.js";

export function fillRange(a: Float64Array, start: number, end: number, value: number): number {
  for (let i = start; i < end; i++) a[i] = value;
  return end - start;
}
export function fail(message: string): never {
  throw new Error(message);
}

export const fillRangeTask = task(import.meta.url, { fillRange });
export const failTask = task(import.meta.url, { fail });
