/**
 * The boundary-element solve: assemble the operator of the chosen discretisation and solve
 * it for every conductor at 1 V (one right-hand side per conductor, all at once).
 *
 * Unknowns are panel charges scaled by 4πε: with P the geometric operator of src/bem
 * (entries in 1/m), P·x = v gives physical panel charges Q = 4π ε0 εr x.
 */
import { panelSetShared, type PanelSet } from "../bem/panels.js";
import { assembleDense, assembleWithInterfaces, preparedImages, type Discretisation } from "../bem/assembly.js";
import { assembleBlockTask, assembleInterfaceBlockTask, normalFieldBlockTask } from "../bem/assembly.js";
import type { ImageSet } from "../bem/images.js";
import type { InterfaceTesting } from "../bem/interface.js";
import type { KernelSpec } from "../bem/images.js";
import { choleskyFactor, choleskySolve, NotPositiveDefiniteError } from "../linalg/cholesky.js";
import { luFactor, luSolve } from "../linalg/lu.js";
import { pcg, type KrylovResult, type BlockOperator, type BlockPreconditioner } from "../linalg/cg.js";
import { blockPcg, type BlockKrylovOptions } from "../linalg/block-cg.js";
import { variationalCorrection } from "./capacitance.js";
import { gmres } from "../linalg/gmres.js";
import { blockJacobi } from "../linalg/block-jacobi.js";
import { clusterPoints, leafIndexSets } from "../linalg/cluster.js";
import { denseMultiply } from "../linalg/dense.js";
import { sharedFloat64, type WorkerPool } from "../linalg/pool.js";
import { buildHMatrix, type HMatrix } from "../linalg/hmatrix.js";
import { parallelBlockJacobi, type AsyncBlockPreconditionerFn } from "../linalg/cluster-jacobi.js";
import { twoLevelPreconditioner } from "../linalg/two-level.js";
import type { ClusterTree } from "../linalg/cluster.js";
import { assertDenseFits, assertCompressedFits, compressedBytes, peakResidentBytes } from "./memory.js";

export type SolverChoice = "auto" | "direct" | "iterative" | "compressed";

export interface SolveOptions {
  method: Discretisation;
  solver: SolverChoice;
  /** Requested relative accuracy of the capacitances (sets the Krylov tolerance). */
  tolerance: number;
  pool: WorkerPool;
  progress?: (phase: string, fraction: number) => void;
  /** Bytes available for the dense matrix (default: most of the free memory). */
  memoryLimit?: number;
  /** Compressed solver: largest cluster of the block-Jacobi preconditioner (default PRECONDITIONER_CLUSTER). */
  preconditionerCluster?: number;
  /** Compressed solver: aggregates of the two-level coarse correction, most panels each
   *  (default COARSE_CLUSTER; 0 for one-level block-Jacobi only). */
  coarseCluster?: number;
  /** Compressed solver: admissibility η (default 2) and leaf size (default 32). */
  eta?: number;
  leafSize?: number;
  /** Mirror images (ground plane, symmetry planes; bem/images.ts); free space when absent. */
  kernel?: KernelSpec;
  /** Relative residual of the Krylov solvers, overriding krylovTolerance(tolerance) (for measurements). */
  krylovTolerance?: number;
  /** Galerkin Krylov paths: block PCG (true) or column-wise PCG (false) instead of choosing by BLOCK_CG_MIN_RHS (for measurements). */
  blockKrylov?: boolean;
}

export interface SolveInfo {
  method: Discretisation;
  solver: "direct" | "iterative" | "compressed";
  /** Why `auto` chose what it chose. */
  choice: string;
  panels: number;
  rightHandSides: number;
  assemblySeconds: number;
  solveSeconds: number;
  /** Matrix entries computed per second of assembly (unique entries for Galerkin). */
  entriesPerSecond: number;
  /** Factorisation rate (direct solver); GFLOP/s. */
  factorGflops?: number;
  iterations?: number;
  /** Largest final relative residual over the right-hand sides (iterative solver). */
  residual?: number;
  krylovTolerance?: number;
  /** Compressed solver: relative accuracy asked of every admissible block. */
  compressionTolerance?: number;
  /** Stored numbers over n² (compressed solver; symmetric halves counted both ways). */
  compressionRatio?: number;
  /** Largest and mean rank of the low-rank blocks. */
  maxRank?: number;
  meanRank?: number;
  /** Dense near-field and low-rank far-field block counts; admissible blocks stored dense. */
  nearBlocks?: number;
  farBlocks?: number;
  farBlocksDense?: number;
  /** Bytes held by the compressed operator, estimated before and measured after. */
  operatorBytes?: number;
  estimatedBytes?: number;
  /** Largest cluster of the block-Jacobi preconditioner. */
  preconditionerCluster?: number;
  /** Aggregates of the two-level coarse correction (0: none). */
  coarseAggregates?: number;
  /** Seconds spent building the preconditioner (inside solveSeconds). */
  preconditionerSeconds?: number;
  /** Peak resident memory of the process after the solve; bytes. */
  peakResidentBytes?: number;
}

export interface UnitSolution {
  /** n×k row-major: scaled panel charges x (Q = 4πε x) with conductor j at 1 V in column j. */
  x: Float64Array;
  panels: PanelSet;
  info: SolveInfo;
  /** Dielectric models, compressed solver: E_pv·n̂ in x units at the requested conductor panels, nc×k (solveUnitPotentialsWithInterfaces). */
  normalField?: Float64Array;
  /**
   * Galerkin Krylov paths (iterative, compressed): the variational correction of the conductor
   * charges, k×k in x units, to add to conductorCharges(x) (capacitance.ts variationalCorrection).
   * Absent where there is no residual (direct solver, collocation, dielectric interfaces).
   */
  chargeCorrection?: Float64Array;
}

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

/** Largest cluster of the compressed solver's block-Jacobi preconditioner (measured: compressed bench). */
export const PRECONDITIONER_CLUSTER = 256;
/**
 * Largest aggregate of the compressed solver's two-level coarse correction; 0 = off, the
 * default. Measured on spheres (compressed bench, DEVELOPERS.md): aggregates of 32 panels
 * save 2 of 17-22 iterations at 5k-80k panels but need an n/32 square coarse matrix (4096²
 * and 8 s of setup at 80k, out of reach at 320k); aggregates of 256 save none.
 */
export const COARSE_CLUSTER = 0;

/** Block accuracy of the compression for a requested accuracy of C (measured: compressed bench). */
export function compressionTolerance(tolerance: number): number {
  return Math.min(1e-3, Math.max(1e-10, 0.1 * tolerance));
}

export function chooseSolver(n: number, k: number): { solver: "direct" | "iterative"; reason: string } {
  const direct = (n * n * n) / 3 / FACTOR_RATE + (2 * n * n * k) / FACTOR_RATE;
  // One pass over the matrix serves all k columns; the arithmetic then grows with k.
  const perProduct = (n * n) / PRODUCT_RATE + (2 * n * n * Math.max(0, k - 1)) / MULTIPLY_RATE;
  const iterative = expectedIterations(n) * perProduct;
  const solver = direct <= iterative ? "direct" : "iterative";
  return { solver, reason: `estimated direct ${direct.toFixed(2)} s, iterative ${iterative.toFixed(2)} s` };
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

export async function solveUnitPotentials(
  positions: Float64Array, triangles: Uint32Array, conductorOf: Uint32Array, k: number, opts: SolveOptions,
): Promise<UnitSolution> {
  const n = conductorOf.length;
  let solver: "direct" | "iterative" | "compressed";
  let choice: string;
  if (opts.solver === "auto") {
    if (n >= COMPRESSED_CROSSOVER) {
      solver = "compressed";
      choice = `auto: ${n} panels ≥ ${COMPRESSED_CROSSOVER}, where the compressed solver overtakes the dense ones (tests/bench/compressed.bench.mjs)`;
    } else {
      const c = chooseSolver(n, k);
      solver = c.solver; choice = `auto: ${c.reason}`;
    }
  } else if (opts.solver === "direct" || opts.solver === "iterative" || opts.solver === "compressed") {
    solver = opts.solver; choice = "requested";
  } else throw new RangeError(`unknown solver ${String(opts.solver)}`);
  if (solver === "compressed") return solveCompressed(positions, triangles, conductorOf, k, opts, choice);
  assertDenseFits(n, k, opts.memoryLimit);
  const progress = opts.progress ?? (() => {});
  const panels = panelSetShared(positions, triangles);

  progress("assembly", 0);
  const t0 = performance.now();
  const A = await assembleDense(panels, opts.method, opts.pool, undefined, opts.kernel);
  const t1 = performance.now();
  progress("assembly", 1);
  const entries = opts.method === "galerkin" ? (n * (n + 1)) / 2 : n * n;

  // Right-hand sides: column j is 1 on the panels of conductor j.
  const B = sharedFloat64(n * k);
  for (let p = 0; p < n; p++) B[p * k + conductorOf[p]] = 1;

  const info: SolveInfo = {
    method: opts.method, solver, choice, panels: n, rightHandSides: k,
    assemblySeconds: (t1 - t0) / 1e3, solveSeconds: 0, entriesPerSecond: entries / Math.max(1e-9, (t1 - t0) / 1e3),
  };
  progress("solve", 0);
  const t2 = performance.now();
  let x: Float64Array;
  let chargeCorrection: Float64Array | undefined;
  if (solver === "direct") {
    if (opts.method === "galerkin") {
      try {
        await choleskyFactor(A, n, { pool: opts.pool });
      } catch (err) {
        if (err instanceof NotPositiveDefiniteError) {
          throw new Error(`the Galerkin matrix is not positive definite (pivot ${err.pivot}): the mesh has overlapping or duplicated panels`);
        }
        throw err;
      }
      const t = performance.now();
      info.factorGflops = (n * n * n) / 3 / ((t - t2) / 1e3) / 1e9;
      choleskySolve(A, n, B, k);
    } else {
      const piv = await luFactor(A, n, { pool: opts.pool });
      const t = performance.now();
      info.factorGflops = (2 * n * n * n) / 3 / ((t - t2) / 1e3) / 1e9;
      luSolve(A, piv, n, B, k);
    }
    x = B;
  } else {
    const tol = opts.krylovTolerance ?? krylovTolerance(opts.tolerance);
    const spd = opts.method === "galerkin";
    const res = await denseKrylov(A, n, B, k, panels.centroids, spd, tol, opts.pool, info, opts.blockKrylov);
    x = res.X;
    if (spd && res.residual) chargeCorrection = variationalCorrection(res.X, res.residual, n, k);
  }
  info.solveSeconds = (performance.now() - t2) / 1e3;
  progress("solve", 1);
  return { x, panels, info, chargeCorrection };
}

/**
 * The compressed path: the operator as a hierarchical matrix whose entries come from
 * src/bem/assembly.ts assembleBlock (run in the workers; with the image kernel when one is
 * given: a reflection never brings two clusters on the same side closer, so the
 * admissibility of the direct term covers the image terms), solved by PCG (Galerkin, SPD) or
 * GMRES (collocation) with block-Jacobi over clusters of up to `preconditionerCluster`
 * panels, the diagonal blocks taken from the hierarchical matrix itself.
 */
async function solveCompressed(positions: Float64Array, triangles: Uint32Array, conductorOf: Uint32Array, k: number,
  opts: SolveOptions, choice: string): Promise<UnitSolution> {
  const n = conductorOf.length;
  const leafSize = opts.leafSize ?? 32, eta = opts.eta ?? 2;
  const pcCluster = Math.max(leafSize, opts.preconditionerCluster ?? PRECONDITIONER_CLUSTER);
  const estimate = compressedBytes(n, k, leafSize, pcCluster);
  assertCompressedFits(n, k, leafSize, opts.memoryLimit, pcCluster);
  const progress = opts.progress ?? (() => {});
  const panels = panelSetShared(positions, triangles);
  const hTol = compressionTolerance(opts.tolerance);

  const t0 = performance.now();
  const H = await buildHMatrix(panels.centroids, { source: { task: assembleBlockTask, before: [panels], after: [opts.method, preparedImages(panels, opts.kernel, true)] } }, {
    tolerance: hTol, leafSize, eta, symmetric: opts.method === "galerkin", pad: panels.radii, pool: opts.pool,
    progress,
  });
  const t1 = performance.now();
  progress("far field", 1);

  const B = unitRightHandSides(n, k, conductorOf);
  const info = compressedSolveInfo(H, opts, choice, k, (t1 - t0) / 1e3, hTol, estimate);
  progress("solve", 0);
  const t2 = performance.now();
  let releaseJacobi: (() => Promise<void>) | undefined;
  try {
    const cluster = opts.preconditionerCluster ?? PRECONDITIONER_CLUSTER;
    const nodes = clusterCover(H.tree, Math.max(leafSize, cluster));
    const sets = nodes.map((v) => H.tree.order.slice(H.tree.start[v], H.tree.end[v]));
    // Factored and applied on the workers: with many right-hand sides (a pad array) the
    // block solves cost as much as the product with H.
    const jacobi = await parallelBlockJacobi((into) => { H.diagonalBlocks(nodes, into); }, sets, n, opts.pool, { lu: opts.method !== "galerkin" });
    releaseJacobi = jacobi.release;
    let precondition: AsyncBlockPreconditionerFn = jacobi.apply;
    info.preconditionerCluster = cluster;
    const coarseSize = opts.coarseCluster ?? COARSE_CLUSTER;
    info.coarseAggregates = 0;
    if (coarseSize > 0) {
      const agg = clusterCover(H.tree, Math.max(leafSize, coarseSize));
      // One aggregate is only a rescaling of the one-level method.
      if (agg.length > 1) {
        const aggregate = new Int32Array(n);
        agg.forEach((v, a) => { for (let p = H.tree.start[v]; p < H.tree.end[v]; p++) aggregate[H.tree.order[p]] = a; });
        precondition = await twoLevelPreconditioner(precondition, aggregate, agg.length, H.coarseMatrix(agg), { lu: opts.method !== "galerkin", pool: opts.pool });
        info.coarseAggregates = agg.length;
      }
    }
    info.preconditionerSeconds = (performance.now() - t2) / 1e3;
    const tol = opts.krylovTolerance ?? krylovTolerance(opts.tolerance);
    const apply = (X: Float64Array, Y: Float64Array, kk: number) => H.apply(X, Y, kk);
    const maxIter = Math.max(300, Math.ceil(4 * Math.sqrt(n)));
    // Krylov residuals fall about geometrically: log(residual)/log(tol) advances steadily.
    const monitor = (_it: number, res: Float64Array): void => {
      let worst = 0;
      for (let c = 0; c < res.length; c++) if (res[c] > worst) worst = res[c];
      progress("solve", worst > 0 ? Math.min(0.99, Math.max(0, Math.log(worst) / Math.log(tol))) : 0.99);
    };
    const res = opts.method === "galerkin"
      ? await spdKrylov(apply, precondition, B, k, { tol, maxIter, monitor, pool: opts.pool }, opts.blockKrylov)
      : await gmres(apply, precondition, B, k, { tol, maxIter, monitor });
    if (!res.converged) {
      throw new Error(`the compressed solver did not converge in ${res.iterations} iterations (residual ${Math.max(...res.residuals).toExponential(2)}); try a tighter --tol or --solver direct on a coarser mesh`);
    }
    info.iterations = res.iterations;
    info.residual = Math.max(...res.residuals);
    info.krylovTolerance = tol;
    info.solveSeconds = (performance.now() - t2) / 1e3;
    info.peakResidentBytes = peakResidentBytes();
    progress("solve", 1);
    const chargeCorrection = opts.method === "galerkin" && res.residual ? variationalCorrection(res.X, res.residual, n, k) : undefined;
    return { x: res.X, panels, info, chargeCorrection };
  } finally {
    await releaseJacobi?.();
    await H.release();
  }
}

/**
 * Right-hand sides from which the SPD (Galerkin) Krylov paths run block PCG (linalg/block-cg.ts)
 * instead of column-wise PCG: measured in DEVELOPERS.md ("Block PCG").
 */
export const BLOCK_CG_MIN_RHS = 2;

/** The SPD solve: block PCG from BLOCK_CG_MIN_RHS columns (or as `block` says), else column-wise PCG. */
function spdKrylov(apply: BlockOperator, precondition: BlockPreconditioner, B: Float64Array, k: number, o: BlockKrylovOptions, block?: boolean): Promise<KrylovResult> {
  return (block ?? k >= BLOCK_CG_MIN_RHS) ? blockPcg(apply, precondition, B, k, o) : pcg(apply, precondition, B, k, o);
}

/**
 * Krylov solve on a dense shared matrix: PCG when symmetric positive definite, else GMRES,
 * block-Jacobi over leaves of a cluster tree of the panel centroids (leaf size 64).
 */
async function denseKrylov(A: Float64Array, n: number, B: Float64Array, k: number, centroids: Float64Array,
  spd: boolean, tol: number, pool: WorkerPool, info: SolveInfo, block?: boolean): Promise<KrylovResult> {
  const tree = clusterPoints(centroids, 64);
  const precondition = blockJacobi(A, n, leafIndexSets(tree), { lu: !spd });
  const apply = (X: Float64Array, Y: Float64Array, kk: number) => denseMultiply(A, n, X, kk, Y, pool);
  const maxIter = Math.max(200, Math.ceil(4 * Math.sqrt(n)));
  const res = spd ? await spdKrylov(apply, precondition, B, k, { tol, maxIter, pool }, block) : await gmres(apply, precondition, B, k, { tol, maxIter });
  if (!res.converged) {
    throw new Error(`the iterative solver did not converge in ${res.iterations} iterations (residual ${Math.max(...res.residuals).toExponential(2)}); try --solver direct`);
  }
  info.iterations = res.iterations;
  info.residual = Math.max(...res.residuals);
  info.krylovTolerance = tol;
  return res;
}

/** n×k right-hand sides: every conductor at 1 V in turn on its panels, 0 on the others (panels past conductorOf.length). */
function unitRightHandSides(n: number, k: number, conductorOf: Uint32Array): Float64Array {
  const B = sharedFloat64(n * k);
  for (let p = 0; p < conductorOf.length; p++) B[p * k + conductorOf[p]] = 1;
  return B;
}

/** The solve record of a compressed run, from its hierarchical matrix's statistics. */
function compressedSolveInfo(H: HMatrix, opts: SolveOptions, choice: string, k: number, buildSeconds: number,
  hTol: number, estimate: number): SolveInfo {
  const st = H.stats;
  return {
    method: opts.method, solver: "compressed", choice, panels: H.n, rightHandSides: k,
    assemblySeconds: buildSeconds, solveSeconds: 0, entriesPerSecond: st.storedEntries / Math.max(1e-9, buildSeconds),
    compressionTolerance: hTol, compressionRatio: st.compressionRatio, maxRank: st.maxRank, meanRank: st.meanRank,
    nearBlocks: st.nearBlocks, farBlocks: st.farBlocks, farBlocksDense: st.farDense, operatorBytes: st.bytes, estimatedBytes: estimate,
  };
}

/** Disjoint tree nodes covering every point, each the largest node on its path of at most `size` points. */
export function clusterCover(tree: ClusterTree, size: number): number[] {
  const out: number[] = [];
  if (tree.start.length === 0) return out;
  const stack = [0];
  while (stack.length > 0) {
    const v = stack.pop()!;
    if (tree.end[v] - tree.start[v] <= size || tree.left[v] < 0) { if (tree.end[v] > tree.start[v]) out.push(v); continue; }
    stack.push(tree.right[v], tree.left[v]);
  }
  return out;
}

export type { HMatrix };

/**
 * The dense solve with dielectric interfaces (equivalent-charge formulation, bem/interface.ts):
 * panels [0, nConductor) are conductor panels (conductorOf gives their conductor), the rest
 * interface panels with contrasts `lambda`. Every conductor at 1 V in turn; interface rows have
 * right-hand side 0. The system is not symmetric: LU (direct) or GMRES with block-Jacobi LU
 * (iterative), or the compressed solver (solveCompressedWithInterfaces). x (N×k) holds total
 * charges, Q = 4π ε0 x, on all N panels. `fieldPanels` (nc flags) asks the compressed solver for
 * E_pv·n̂ at those conductor panels (UnitSolution.normalField), which a direct sum would cost
 * O(flagged × N).
 */
export async function solveUnitPotentialsWithInterfaces(
  positions: Float64Array, triangles: Uint32Array, conductorOf: Uint32Array, k: number, lambda: Float64Array,
  testing: InterfaceTesting, opts: SolveOptions, fieldPanels?: Uint8Array,
): Promise<UnitSolution> {
  const nc = conductorOf.length, N = triangles.length / 3;
  if (N - nc !== lambda.length) throw new Error(`solveUnitPotentialsWithInterfaces: ${N} panels, ${nc} conductor panels, ${lambda.length} contrasts`);
  let solver: "direct" | "iterative" | "compressed";
  let choice: string;
  if (opts.solver === "auto") {
    if (N >= INTERFACE_COMPRESSED_CROSSOVER) {
      solver = "compressed";
      choice = `auto (dielectric interfaces): ${N} panels ≥ ${INTERFACE_COMPRESSED_CROSSOVER}, where the compressed solver overtakes the dense ones (tests/bench/dielectric.bench.mjs)`;
    } else {
      const c = chooseSolver(N, k);
      // LU costs twice the Cholesky flops the model counts.
      const lu = chooseSolver(Math.round(N * Math.cbrt(2)), k);
      solver = lu.solver === "direct" && c.solver === "direct" ? "direct" : "iterative";
      choice = `auto (dielectric interfaces, non-symmetric): ${lu.reason}`;
    }
  } else if (opts.solver === "direct" || opts.solver === "iterative" || opts.solver === "compressed") {
    solver = opts.solver; choice = "requested";
  } else throw new RangeError(`unknown solver ${String(opts.solver)}`);
  if (solver === "compressed") return solveCompressedWithInterfaces(positions, triangles, conductorOf, k, lambda, testing, opts, choice, fieldPanels);
  assertDenseFits(N, k, opts.memoryLimit);
  const progress = opts.progress ?? (() => {});
  const panels = panelSetShared(positions, triangles);
  progress("assembly", 0);
  const t0 = performance.now();
  const A = await assembleWithInterfaces(panels, nc, lambda, opts.method, testing, opts.pool, opts.kernel);
  const t1 = performance.now();
  progress("assembly", 1);
  const B = sharedFloat64(N * k);
  for (let p = 0; p < nc; p++) B[p * k + conductorOf[p]] = 1;
  const info: SolveInfo = {
    method: opts.method, solver, choice, panels: N, rightHandSides: k,
    assemblySeconds: (t1 - t0) / 1e3, solveSeconds: 0, entriesPerSecond: (N * N) / Math.max(1e-9, (t1 - t0) / 1e3),
  };
  progress("solve", 0);
  const t2 = performance.now();
  let x: Float64Array;
  if (solver === "direct") {
    const piv = await luFactor(A, N, { pool: opts.pool });
    info.factorGflops = (2 * N * N * N) / 3 / ((performance.now() - t2) / 1e3) / 1e9;
    luSolve(A, piv, N, B, k);
    x = B;
  } else {
    const tol = opts.krylovTolerance ?? krylovTolerance(opts.tolerance);
    x = (await denseKrylov(A, N, B, k, panels.centroids, false, tol, opts.pool, info)).X;
  }
  info.solveSeconds = (performance.now() - t2) / 1e3;
  progress("solve", 1);
  return { x, panels, info };
}

/**
 * Panels (conductor and interface) from which `auto` takes the compressed solver for models with
 * dielectric interfaces: the dense path pays LU (twice the Cholesky flops) and the costlier
 * interface rows, so the crossover sits below COMPRESSED_CROSSOVER. Measured by
 * tests/bench/dielectric.bench.mjs (four open pads on a slab over ground, load average ~4.2 on
 * the shared 2-core machine, with the interface tolerance policy below): 2048 panels dense LU
 * 3.3 s wall / 3.4 s CPU, compressed 3.3 s / 3.3 s; 4896 panels dense 17.6 s / 17.2 s,
 * compressed 8.4 s / 8.6 s. 3000 lies between the tie and the measured factor of two and is
 * not itself measured.
 */
export const INTERFACE_COMPRESSED_CROSSOVER = 3000;

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
 * GMRES relative residual for the interface path: the C error follows it at about a quarter of
 * its size (same measurements: 1e-4 → 2.5e-5, 1e-5 → 2.2e-6, 1e-6 → 1.2e-7), so tol/10
 * keeps the solver's share of the C error near tol/40.
 */
export function interfaceKrylovTolerance(tolerance: number): number {
  return Math.min(1e-4, Math.max(1e-12, 0.1 * tolerance));
}

/**
 * The compressed path with dielectric interfaces: the mixed matrix of assembleWithInterfaces as a
 * non-symmetric hierarchical matrix whose entries come from bem/assembly.ts assembleInterfaceBlock
 * (in the workers; images included). The normal-field kernel n̂_i·(x − y)/|x − y|³ is
 * asymptotically smooth like 1/|x − y|, so the admissibility of the single layer serves both
 * kinds of rows, and the identity part of the interface rows lies in the diagonal (near) blocks.
 * GMRES with block-Jacobi LU over clusters of up to `preconditionerCluster` panels, the diagonal
 * blocks taken from the hierarchical matrix.
 */
async function solveCompressedWithInterfaces(positions: Float64Array, triangles: Uint32Array, conductorOf: Uint32Array, k: number,
  lambda: Float64Array, testing: InterfaceTesting, opts: SolveOptions, choice: string, fieldPanels?: Uint8Array): Promise<UnitSolution> {
  const nc = conductorOf.length, N = triangles.length / 3;
  const leafSize = opts.leafSize ?? 32, eta = opts.eta ?? 2;
  const estimate = compressedBytes(N, k, leafSize);
  assertCompressedFits(N, k, leafSize, opts.memoryLimit);
  const progress = opts.progress ?? (() => {});
  const panels = panelSetShared(positions, triangles);
  const lam = sharedFloat64(lambda.length);
  lam.set(lambda);
  const hTol = interfaceCompressionTolerance(opts.tolerance);

  const t0 = performance.now();
  const images = preparedImages(panels, opts.kernel, true);
  const H = await buildHMatrix(panels.centroids, {
    source: { task: assembleInterfaceBlockTask, before: [panels, nc, lam], after: [opts.method, testing, images] },
  }, {
    tolerance: hTol, leafSize, eta, symmetric: false, pad: panels.radii, pool: opts.pool,
    progress,
  });
  const t1 = performance.now();
  progress("far field", 1);

  // Interface rows (panels nc and up) have right-hand side 0.
  const B = unitRightHandSides(N, k, conductorOf);
  const info = compressedSolveInfo(H, opts, choice, k, (t1 - t0) / 1e3, hTol, estimate);
  progress("solve", 0);
  const t2 = performance.now();
  let releaseJacobi: (() => Promise<void>) | undefined;
  try {
    const cluster = opts.preconditionerCluster ?? PRECONDITIONER_CLUSTER;
    const nodes = clusterCover(H.tree, Math.max(leafSize, cluster));
    const sets = nodes.map((v) => H.tree.order.slice(H.tree.start[v], H.tree.end[v]));
    // LU factors and block solves on the workers, as in solveCompressed.
    const jacobi = await parallelBlockJacobi((into) => { H.diagonalBlocks(nodes, into); }, sets, N, opts.pool, { lu: true });
    releaseJacobi = jacobi.release;
    const precondition = jacobi.apply;
    info.preconditionerCluster = cluster;
    info.preconditionerSeconds = (performance.now() - t2) / 1e3;
    const tol = opts.krylovTolerance ?? interfaceKrylovTolerance(opts.tolerance);
    const apply = (X: Float64Array, Y: Float64Array, kk: number) => H.apply(X, Y, kk);
    const maxIter = Math.max(300, Math.ceil(4 * Math.sqrt(N)));
    const res = await gmres(apply, precondition, B, k, { tol, maxIter, monitor: (it) => progress("solve", Math.min(0.99, it / 60)) });
    if (!res.converged) {
      throw new Error(`the compressed solver did not converge in ${res.iterations} iterations (residual ${Math.max(...res.residuals).toExponential(2)}); try a tighter --tol or --solver direct on a coarser mesh`);
    }
    info.iterations = res.iterations;
    info.residual = Math.max(...res.residuals);
    info.krylovTolerance = tol;
    info.solveSeconds = (performance.now() - t2) / 1e3;
    progress("solve", 1);
    const normalField = fieldPanels && fieldPanels.some((f) => f !== 0)
      ? await openSheetNormalField(panels, nc, fieldPanels, res.X, k, images, hTol, leafSize, eta, opts)
      : undefined;
    info.peakResidentBytes = peakResidentBytes();
    return { x: res.X, panels, info, normalField };
  } finally {
    await releaseJacobi?.();
    await H.release();
  }
}

/**
 * E_pv·n̂ (in the units of x) at the flagged conductor panels, nc×k: a second, non-symmetric
 * hierarchical matrix over all panels whose rows are the collocated normal field at the flagged
 * panels (bem/assembly.ts normalFieldBlock; other rows 0), applied to x. The sum it replaces
 * costs flagged × N kernel evaluations on one thread.
 */
async function openSheetNormalField(panels: PanelSet, nc: number, fieldPanels: Uint8Array, X: Float64Array, k: number,
  images: ImageSet | undefined, hTol: number, leafSize: number, eta: number, opts: SolveOptions): Promise<Float64Array> {
  const N = panels.n, progress = opts.progress ?? (() => {});
  const flag = new Uint8Array(new SharedArrayBuffer(N));
  flag.set(fieldPanels.subarray(0, nc));
  progress("fields", 0);
  const F = await buildHMatrix(panels.centroids, { source: { task: normalFieldBlockTask, before: [panels, flag], after: [images] } }, {
    tolerance: hTol, leafSize, eta, symmetric: false, pad: panels.radii, pool: opts.pool,
    progress: (_phase, f) => progress("fields", f),
  });
  try {
    const Y = new Float64Array(N * k);
    await F.apply(X, Y, k);
    progress("fields", 1);
    return Y.slice(0, nc * k);
  } finally {
    await F.release();
  }
}
