/**
 * Memory estimates made before the large allocations, and the peak measured after.
 */
import { freemem } from "node:os";
import { InputError } from "../io/errors.js";

/** Bytes the dense path needs for n panels and k conductors: the n×n matrix, panel data, a few n×k blocks. */
export function denseBytes(n: number, k: number): number {
  return 8 * n * n + 8 * n * 60 + 8 * n * k * 8;
}

/** Memory that can be used without swapping: most of what the system reports as available; bytes. */
export function usableMemory(): number {
  return 0.85 * freemem();
}

/** Stop before allocating when the dense matrix cannot fit, naming the ways out. */
export function assertDenseFits(n: number, k: number, limit = usableMemory()): void {
  const need = denseBytes(n, k);
  if (need > limit) {
    throw new InputError(
      `the dense matrix for ${n} panels needs about ${(need / 2 ** 30).toFixed(1)} GiB but only ${(limit / 2 ** 30).toFixed(1)} GiB is free: ` +
        `use a coarser mesh (fewer panels), or a solver that does not store the full matrix`,
    );
  }
}

/** Peak resident set size of this process so far; bytes. */
export function peakResidentBytes(): number {
  // resourceUsage().maxRSS is in kilobytes (getrusage ru_maxrss on Linux).
  return process.resourceUsage().maxRSS * 1024;
}
