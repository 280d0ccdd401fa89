/**
 * The compressed solve of any entry source (operator.ts): the operator as a hierarchical matrix
 * (symmetric for Galerkin conductor-only entries, built once per block pair; non-symmetric
 * otherwise), block-Jacobi over clusters of up to `preconditionerCluster` panels with the
 * diagonal blocks taken from the hierarchical matrix, optionally with the two-level coarse term
 * (preconditioner.ts), and the Krylov method its symmetry calls for (krylov.ts), at the block
 * accuracy and residual of the tolerance policy for its entries (tolerance-policy.ts).
 */
import type { HMatrix } from "../linalg/hmatrix.js";
import { variationalCorrection } from "./capacitance.js";
import { assertCompressedFits, compressedBytes, peakResidentBytes } from "./memory.js";
import { compressedOperator, type CompressedOperator, type CompressedOperatorOptions, type OperatorEntries } from "./operator.js";
import { buildPreconditioner, COARSE_CLUSTER, PRECONDITIONER_CLUSTER, type Preconditioner } from "./preconditioner.js";
import { krylovMethod, runKrylov } from "./krylov.js";
import { compressedTolerances } from "./tolerance-policy.js";
import { unitRightHandSides, type SolveInfo, type SolveOptions, type UnitSolution } from "./unit-solution.js";

/**
 * Work on the solution while the operator is still held (the dielectric solve's open-sheet
 * normal field): returns fields to add to the solution.
 */
export type WhileHeld = (op: CompressedOperator, x: Float64Array, operatorOptions: CompressedOperatorOptions) => Promise<Partial<UnitSolution>>;

/** Every conductor at 1 V in turn (conductorOf: conductor of the panels [0, conductorOf.length), the rest at 0 on the right). */
export async function solveCompressed(entries: OperatorEntries, conductorOf: Uint32Array, k: number, opts: SolveOptions, choice: string,
  whileHeld?: WhileHeld): Promise<UnitSolution> {
  const n = entries.panels.n;
  const leafSize = opts.leafSize ?? 32, eta = opts.eta ?? 2;
  const pcCluster = Math.max(leafSize, opts.preconditionerCluster ?? PRECONDITIONER_CLUSTER);
  const estimate = compressedBytes(n, k, leafSize, pcCluster);
  assertCompressedFits(n, k, leafSize, opts.memoryLimit, pcCluster);
  const progress = opts.progress ?? (() => {});
  const tolerances = compressedTolerances(opts.tolerance, entries.kind);
  const operatorOptions: CompressedOperatorOptions = { tolerance: tolerances.compression, leafSize, eta, pool: opts.pool, progress };

  const t0 = performance.now();
  const op = await compressedOperator(entries, operatorOptions);
  let precondition: Preconditioner | undefined;
  try {
    const t1 = performance.now();
    progress("far field", 1);

    const B = unitRightHandSides(n, k, conductorOf);
    const info = compressedSolveInfo(op.hmatrix, entries, choice, k, (t1 - t0) / 1e3, tolerances.compression, estimate);
    progress("solve", 0);
    const t2 = performance.now();
    const cluster = opts.preconditionerCluster ?? PRECONDITIONER_CLUSTER;
    const coarseCluster = opts.coarseCluster ?? COARSE_CLUSTER;
    precondition = await buildPreconditioner(coarseCluster > 0 ? "two-level" : "block-jacobi", op, { cluster, coarseCluster, pool: opts.pool });
    info.preconditionerCluster = cluster;
    info.coarseAggregates = precondition.coarseAggregates;
    info.preconditionerSeconds = (performance.now() - t2) / 1e3;
    const tol = opts.krylovTolerance ?? tolerances.krylov;
    const maxIter = Math.max(300, Math.ceil(4 * Math.sqrt(n)));
    // Krylov residuals fall about geometrically: log(residual)/log(tol) advances steadily.
    const monitor = (_it: number, res: Float64Array): void => {
      let worst = 0;
      for (let c = 0; c < res.length; c++) if (res[c] > worst) worst = res[c];
      progress("solve", worst > 0 ? Math.min(0.99, Math.max(0, Math.log(worst) / Math.log(tol))) : 0.99);
    };
    const method = krylovMethod(op.symmetric, k, opts.blockKrylov);
    const res = await runKrylov(method, op.apply, precondition.apply, B, k, { tol, maxIter, monitor, pool: opts.pool });
    if (!res.converged) {
      throw new Error(`the compressed solver did not converge in ${res.iterations} iterations (residual ${Math.max(...res.residuals).toExponential(2)}); try a tighter --tol or --solver direct on a coarser mesh`);
    }
    info.iterations = res.iterations;
    info.residual = Math.max(...res.residuals);
    info.krylovTolerance = tol;
    info.solveSeconds = (performance.now() - t2) / 1e3;
    progress("solve", 1);
    const extra = whileHeld ? await whileHeld(op, res.X, operatorOptions) : {};
    info.peakResidentBytes = peakResidentBytes();
    const chargeCorrection = op.symmetric && res.residual ? variationalCorrection(res.X, res.residual, n, k) : undefined;
    return { x: res.X, panels: entries.panels, info, chargeCorrection, ...extra };
  } finally {
    await precondition?.release();
    await op.release();
  }
}

/** The solve record of a compressed run, from its hierarchical matrix's statistics. */
function compressedSolveInfo(H: HMatrix, entries: OperatorEntries, choice: string, k: number, buildSeconds: number,
  hTol: number, estimate: number): SolveInfo {
  const st = H.stats;
  return {
    method: entries.method, solver: "compressed", choice, panels: H.n, rightHandSides: k,
    assemblySeconds: buildSeconds, solveSeconds: 0, entriesPerSecond: st.storedEntries / Math.max(1e-9, buildSeconds),
    compressionTolerance: hTol, compressionRatio: st.compressionRatio, maxRank: st.maxRank, meanRank: st.meanRank,
    nearBlocks: st.nearBlocks, farBlocks: st.farBlocks, farBlocksDense: st.farDense, operatorBytes: st.bytes, estimatedBytes: estimate,
  };
}
