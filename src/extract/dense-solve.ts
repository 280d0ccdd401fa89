/**
 * The dense solve of any entry source (operator.ts): the whole matrix assembled, then factored
 * (Cholesky where symmetric positive definite, LU otherwise) or solved by the Krylov method its
 * symmetry calls for (krylov.ts) with block-Jacobi over the leaves of a cluster tree of the
 * panel centroids (preconditioner.ts).
 */
import { choleskyFactor, choleskySolve, NotPositiveDefiniteError } from "../linalg/cholesky.js";
import { luFactor, luSolve } from "../linalg/lu.js";
import type { KrylovResult } from "../linalg/cg.js";
import type { WorkerPool } from "../linalg/pool.js";
import { variationalCorrection } from "./capacitance.js";
import { assertDenseFits } from "./memory.js";
import { denseOperator, type DenseOperator, type OperatorEntries } from "./operator.js";
import { buildPreconditioner, DENSE_PRECONDITIONER_CLUSTER } from "./preconditioner.js";
import { krylovMethod, runKrylov } from "./krylov.js";
import { krylovTolerance } from "./tolerance-policy.js";
import { unitRightHandSides, type SolveInfo, type SolveOptions, type UnitSolution } from "./unit-solution.js";

/** Every conductor at 1 V in turn (conductorOf: conductor of the panels [0, conductorOf.length), the rest at 0 on the right). */
export async function solveDense(entries: OperatorEntries, conductorOf: Uint32Array, k: number, opts: SolveOptions,
  solver: "direct" | "iterative", choice: string): Promise<UnitSolution> {
  const n = entries.panels.n;
  assertDenseFits(n, k, opts.memoryLimit);
  const progress = opts.progress ?? (() => {});

  progress("assembly", 0);
  const t0 = performance.now();
  const op = await denseOperator(entries, opts.pool);
  const t1 = performance.now();
  progress("assembly", 1);
  const entryCount = op.symmetric ? (n * (n + 1)) / 2 : n * n;

  const B = unitRightHandSides(n, k, conductorOf);
  const info: SolveInfo = {
    method: entries.method, solver, choice, panels: n, rightHandSides: k,
    assemblySeconds: (t1 - t0) / 1e3, solveSeconds: 0, entriesPerSecond: entryCount / Math.max(1e-9, (t1 - t0) / 1e3),
  };
  progress("solve", 0);
  const t2 = performance.now();
  let x: Float64Array;
  let chargeCorrection: Float64Array | undefined;
  if (solver === "direct") {
    x = await factorAndSolve(op, B, k, opts.pool, info);
  } else {
    const tol = opts.krylovTolerance ?? krylovTolerance(opts.tolerance);
    const res = await denseKrylov(op, B, k, tol, opts.pool, info, opts.blockKrylov);
    x = res.X;
    if (op.symmetric && res.residual) chargeCorrection = variationalCorrection(res.X, res.residual, n, k);
  }
  info.solveSeconds = (performance.now() - t2) / 1e3;
  progress("solve", 1);
  return { x, panels: entries.panels, info, chargeCorrection };
}

/** B ← A⁻¹·B by Cholesky (symmetric) or LU, factoring A in place on the pool; records the factorisation rate. */
async function factorAndSolve(op: DenseOperator, B: Float64Array, k: number, pool: WorkerPool, info: SolveInfo): Promise<Float64Array> {
  const A = op.matrix, n = op.n;
  const t0 = performance.now();
  if (op.symmetric) {
    try {
      await choleskyFactor(A, n, { pool });
    } catch (err) {
      if (err instanceof NotPositiveDefiniteError) {
        throw new Error(`the Galerkin matrix is not positive definite (pivot ${err.pivot}): the mesh has overlapping or duplicated panels`);
      }
      throw err;
    }
    info.factorGflops = (n * n * n) / 3 / ((performance.now() - t0) / 1e3) / 1e9;
    choleskySolve(A, n, B, k);
  } else {
    const piv = await luFactor(A, n, { pool });
    info.factorGflops = (2 * n * n * n) / 3 / ((performance.now() - t0) / 1e3) / 1e9;
    luSolve(A, piv, n, B, k);
  }
  return B;
}

/** The Krylov solve over the dense matrix, block-Jacobi over the leaves of a cluster tree of the centroids. */
async function denseKrylov(op: DenseOperator, B: Float64Array, k: number, tol: number, pool: WorkerPool, info: SolveInfo,
  block?: boolean): Promise<KrylovResult> {
  const n = op.n;
  const precondition = await buildPreconditioner("block-jacobi", op, { cluster: DENSE_PRECONDITIONER_CLUSTER, pool });
  const maxIter = Math.max(200, Math.ceil(4 * Math.sqrt(n)));
  const res = await runKrylov(krylovMethod(op.symmetric, k, block), op.apply, precondition.apply, B, k, { tol, maxIter, pool });
  if (!res.converged) {
    throw new Error(`the iterative solver did not converge in ${res.iterations} iterations (residual ${Math.max(...res.residuals).toExponential(2)}); try --solver direct`);
  }
  info.iterations = res.iterations;
  info.residual = Math.max(...res.residuals);
  info.krylovTolerance = tol;
  return res;
}
