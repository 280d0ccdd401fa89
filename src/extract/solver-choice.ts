/**
 * Which solver `auto` takes: a cost model for the two dense solvers (direct factorisation or
 * Krylov over the dense matrix) and the panel counts from which the compressed solver wins.
 */
import type { EntryKind } from "./tolerance-policy.js";

export type SolverChoice = "auto" | "direct" | "iterative" | "compressed";
export type Solver = "direct" | "iterative" | "compressed";

/**
 * Cost model for `auto` (seconds), calibrated by tests/bench/solver.bench.mjs on a 2-core machine:
 * dense Cholesky at FACTOR_RATE flop/s, an iteration of the dense product streaming the
 * n×n matrix at PRODUCT_RATE entries/s, and iterations that grow slowly with n.
 */
// Measured by tests/bench/extract.bench.mjs on the 2-core machine, quiet (2026-12-01, WebAssembly
// SIMD kernel): Cholesky on 2 workers 10.5–13.6 GFLOP/s at n = 2560–10240; a PCG iteration over a
// 5120² matrix ≈ 36 ms with the preconditioner (≈ 0.73 G entries/s); extra right-hand sides cost
// the JavaScript multiply's ≈ 3 GFLOP/s (2560 panels, 8 columns: 45 ms per iteration).
const FACTOR_RATE = 12e9;
const PRODUCT_RATE = 0.73e9;
const MULTIPLY_RATE = 3e9;
function expectedIterations(n: number): number {
  return 12 + 3 * Math.log2(Math.max(2, n / 64));
}

/**
 * Panels from which `auto` takes the compressed solver. Measured by
 * tests/bench/compressed.bench.mjs (one sphere, 2 workers, load average ~7 on the shared
 * machine): at 5120 panels dense iterative 1.9 s, compressed 2.8 s, dense direct 9.9 s; at
 * 20480 compressed 32 s under the same load while dense needs 3.3 GB. 8000 lies between
 * the two measured sizes and is not itself measured; rerun the bench on a quiet machine.
 */
export const COMPRESSED_CROSSOVER = 8000;

/**
 * Panels (conductor and interface) from which `auto` takes the compressed solver for models with
 * dielectric interfaces: the dense path pays LU (twice the Cholesky flops) and the costlier
 * interface rows, so the crossover sits below COMPRESSED_CROSSOVER. Measured by
 * tests/bench/dielectric.bench.mjs (four open pads on a slab over ground, load average ~4.2 on
 * the shared 2-core machine, with the interface tolerance policy of tolerance-policy.ts): 2048 panels dense LU
 * 3.3 s wall / 3.4 s CPU, compressed 3.3 s / 3.3 s; 4896 panels dense 17.6 s / 17.2 s,
 * compressed 8.4 s / 8.6 s. 3000 lies between the tie and the measured factor of two and is
 * not itself measured.
 */
export const INTERFACE_COMPRESSED_CROSSOVER = 3000;

/** The faster dense solver for n panels and k right-hand sides by the cost model, with the estimates. */
export function chooseSolver(n: number, k: number): { solver: "direct" | "iterative"; reason: string } {
  const direct = (n * n * n) / 3 / FACTOR_RATE + (2 * n * n * k) / FACTOR_RATE;
  // One pass over the matrix serves all k columns; the arithmetic then grows with k.
  const perProduct = (n * n) / PRODUCT_RATE + (2 * n * n * Math.max(0, k - 1)) / MULTIPLY_RATE;
  const iterative = expectedIterations(n) * perProduct;
  const solver = direct <= iterative ? "direct" : "iterative";
  return { solver, reason: `estimated direct ${direct.toFixed(2)} s, iterative ${iterative.toFixed(2)} s` };
}

/**
 * The solver for `requested` over n panels (conductor and interface) and k right-hand sides,
 * and why (SolveInfo.choice). Operators with interface rows are not symmetric: their direct
 * solve is LU.
 */
export function resolveSolver(requested: SolverChoice, n: number, k: number, entries: EntryKind): { solver: Solver; choice: string } {
  if (requested === "direct" || requested === "iterative" || requested === "compressed") return { solver: requested, choice: "requested" };
  if (requested !== "auto") throw new RangeError(`unknown solver ${String(requested)}`);
  if (entries === "conductors") {
    if (n >= COMPRESSED_CROSSOVER) {
      return { solver: "compressed", choice: `auto: ${n} panels ≥ ${COMPRESSED_CROSSOVER}, where the compressed solver overtakes the dense ones (tests/bench/compressed.bench.mjs)` };
    }
    const c = chooseSolver(n, k);
    return { solver: c.solver, choice: `auto: ${c.reason}` };
  }
  if (n >= INTERFACE_COMPRESSED_CROSSOVER) {
    return { solver: "compressed", choice: `auto (dielectric interfaces): ${n} panels ≥ ${INTERFACE_COMPRESSED_CROSSOVER}, where the compressed solver overtakes the dense ones (tests/bench/dielectric.bench.mjs)` };
  }
  const c = chooseSolver(n, k);
  // LU costs twice the Cholesky flops the model counts.
  const lu = chooseSolver(Math.round(n * Math.cbrt(2)), k);
  return {
    solver: lu.solver === "direct" && c.solver === "direct" ? "direct" : "iterative",
    choice: `auto (dielectric interfaces, non-symmetric): ${lu.reason}`,
  };
}
