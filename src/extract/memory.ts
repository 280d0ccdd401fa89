/**
 * Memory estimates made before the large allocations, and the peak measured after.
 */
import { freemem } from "node:os";
import { InputError } from "../errors.js";

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

/**
 * The peak resident memory of one run, not of the process (a second run in one process, such as
 * the demo's, would otherwise report the first's): when the process-wide peak (getrusage's
 * maxRSS) rose during the run, the run reached it; when it did not, the run stayed below an
 * earlier one and its own peak is the largest resident size sampled (every `intervalMs` while
 * the event loop is free, as it is while the workers solve, and at each `sample()`).
 */
export function runPeakMeter(intervalMs = 20): { sample(): void; stop(): number } {
  const before = peakResidentBytes();
  let peak = process.memoryUsage.rss();
  const sample = (): void => { const r = process.memoryUsage.rss(); if (r > peak) peak = r; };
  const timer = setInterval(sample, intervalMs);
  timer.unref();
  return {
    sample,
    stop(): number {
      clearInterval(timer);
      sample();
      const after = peakResidentBytes();
      return after > before ? Math.max(after, peak) : peak;
    },
  };
}

/** Peak resident set size of this process so far; bytes. */
export function peakResidentBytes(): number {
  // resourceUsage().maxRSS is in kilobytes (getrusage ru_maxrss on Linux).
  return process.resourceUsage().maxRSS * 1024;
}

/**
 * Bytes the compressed path needs for n panels, k conductors, leaves of `leafSize` and
 * block-Jacobi clusters of `cluster` panels: c·N log N for the operator (near field ~ N·leaf·NEAR_LEAVES/2 numbers for the symmetric
 * Galerkin matrix, far field ~ FAR_PER_LEVEL·N numbers per tree level), panel data, the
 * Krylov blocks (about 12 n×k), the per-worker product copies and the preconditioner's factors. Constants measured on
 * spheres and pad arrays by tests/bench/compressed.bench.mjs.
 */
export function compressedBytes(n: number, k: number, leafSize = 32, cluster = 256): number {
  const levels = Math.max(1, Math.log2(Math.max(2, n / leafSize)));
  const operator = 8 * n * (NEAR_PER_PANEL * leafSize + FAR_PER_LEVEL * levels);
  // The block-Jacobi factors: one cluster² block per cluster, n·cluster numbers.
  const preconditioner = 8 * n * Math.min(n, cluster);
  return operator + preconditioner + 8 * n * 60 + 8 * n * k * 16;
}
/** Near-field numbers per panel per unit of leaf size (measured). */
const NEAR_PER_PANEL = 12;
/** Far-field numbers per panel per tree level (measured). */
const FAR_PER_LEVEL = 60;

/** Stop before building when even the compressed operator cannot fit. */
export function assertCompressedFits(n: number, k: number, leafSize = 32, limit = usableMemory(), cluster = 256): void {
  const need = compressedBytes(n, k, leafSize, cluster);
  if (need > limit) {
    throw new InputError(
      `the compressed operator for ${n} panels needs about ${(need / 2 ** 30).toFixed(1)} GiB but only ${(limit / 2 ** 30).toFixed(1)} GiB is free: use a coarser mesh (fewer panels)`,
    );
  }
}

/**
 * Stop before the first solve of a refinement study when its finest level cannot fit: n panels
 * (4^refine times the first level's) on the path `solver` takes there, k conductors. Without it
 * the refusal would come only when the finest level is reached, after the coarser solves.
 */
export function assertFinestFits(solver: "direct" | "iterative" | "compressed", n: number, k: number, refine: number,
  limit = usableMemory(), leafSize = 32, cluster = 256): void {
  try {
    if (solver === "compressed") assertCompressedFits(n, k, leafSize, limit, cluster);
    else assertDenseFits(n, k, limit);
  } catch (e) {
    if (!(e instanceof InputError)) throw e;
    throw new InputError(`refine ${refine} solves up to ${n} panels (4^${refine} times the mesh's) and the last level will not fit: ${e.fault}, or a smaller refine`);
  }
}
