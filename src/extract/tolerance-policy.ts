/**
 * The tolerance policy: from the relative accuracy of C a user asks for (`--tol`, default 1e-4)
 * to the accuracy asked of each part of the solve — the blocks of the compressed operator and
 * the Krylov residual. Every rule below was measured; the measurements are named beside it.
 */

/** Which entries the operator holds (see operator.ts): conductor rows only, or conductor and dielectric-interface rows. */
export type EntryKind = "conductors" | "interfaces";

/** Block accuracy of the compression for a requested accuracy of C (measured: compressed bench). */
export function compressionTolerance(tolerance: number): number {
  return Math.min(1e-3, Math.max(1e-10, 0.1 * tolerance));
}

/**
 * Krylov relative residual for a requested relative accuracy `tolerance` of C (conductor-only
 * paths). Measured by tests/bench/krylov.bench.mjs (table in DEVELOPERS.md: sphere, sphere pair, crossing bars,
 * 16-pad array, against a 1e-10 solve of the same operator): C itself needs little — with the
 * variational correction (Galerkin Krylov paths, UnitSolution.chargeCorrection) a 1e-4 residual
 * leaves C within 2e-7, without it the pads' small mutual entries are off by 1e-3 — but the panel charges, peak fields and forces
 * come from the same solve and follow the residual linearly: at 1e-5 the sphere's peak field is
 * off by 1.3e-3 (the third printed digit), at 1e-6 by 1.1e-4 (pair 1.8e-5, pads 5.9e-6). So
 * tolerance/100 for C, and never looser than FIELD_KRYLOV_TOLERANCE for the fields.
 */
export function krylovTolerance(tolerance: number): number {
  return Math.min(FIELD_KRYLOV_TOLERANCE, Math.max(1e-12, tolerance * 1e-2));
}

/** Loosest Krylov residual that keeps the printed (3-digit) fields right: see krylovTolerance. */
export const FIELD_KRYLOV_TOLERANCE = 1e-6;

/**
 * Block accuracy of the compressed operator with dielectric interfaces for a requested relative
 * accuracy of C. The Maxwell matrix is a sum of panel charges, so block errors average out:
 * measured by tests/bench/dielectric.bench.mjs and the table in DEVELOPERS.md (four pads on a
 * slab over ground, 4896 and 19,592 panels, against dense LU and a 1e-5 / 1e-6 run), blocks at
 * 1e-3 move C by under 1e-6 of its largest entry, so 3·tol (capped at 1e-3) leaves the
 * compression far below tol/10. Separate from compressionTolerance (conductor-only path).
 */
export function interfaceCompressionTolerance(tolerance: number): number {
  return Math.min(1e-3, Math.max(1e-10, 3 * tolerance));
}

/**
 * GMRES relative residual for the compressed interface path: the C error follows it at about a
 * quarter of its size (same measurements: 1e-4 → 2.5e-5, 1e-5 → 2.2e-6, 1e-6 → 1.2e-7), so
 * tol/10 keeps the solver's share of the C error near tol/40.
 */
export function interfaceKrylovTolerance(tolerance: number): number {
  return Math.min(1e-4, Math.max(1e-12, 0.1 * tolerance));
}

/**
 * The compressed path's block accuracy and Krylov residual for operators holding `entries`.
 * The interface rules were measured on the compressed path only; the dense iterative path,
 * with or without interfaces, keeps krylovTolerance (the stricter of the two; not measured
 * separately with interfaces).
 */
export function compressedTolerances(tolerance: number, entries: EntryKind): { compression: number; krylov: number } {
  return entries === "interfaces"
    ? { compression: interfaceCompressionTolerance(tolerance), krylov: interfaceKrylovTolerance(tolerance) }
    : { compression: compressionTolerance(tolerance), krylov: krylovTolerance(tolerance) };
}
