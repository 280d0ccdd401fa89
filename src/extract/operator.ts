/**
 * The operator of the boundary-element solve, dense or hierarchical, built from one entry
 * source: the conductor-only matrix of the chosen discretisation (with mirror images), or the
 * mixed matrix whose interface rows enforce the normal-displacement condition (bem/interface.ts).
 * This file is the only one in the solve that names the worker modules computing entries.
 */
import type { PanelSet } from "../bem/panels.js";
import { assembleDense, assembleWithInterfaces, preparedImages, assembleBlockTask, assembleInterfaceBlockTask, normalFieldBlockTask, type Discretisation } from "../bem/assembly.js";
import type { ImageSet, KernelSpec } from "../bem/images.js";
import type { InterfaceTesting } from "../bem/interface.js";
import type { BlockOperator } from "../linalg/cg.js";
import { denseMultiply } from "../linalg/dense.js";
import { buildHMatrix, type HMatrix } from "../linalg/hmatrix.js";
import type { EntrySource, EntrySourceData } from "../linalg/entry-generator.js";
import { sharedFloat64, type WorkerPool } from "../linalg/pool.js";

/** Where the entries come from: bem/assembly.ts, on the panels and kernel given. */
export type OperatorEntries =
  | { kind: "conductors"; panels: PanelSet; method: Discretisation; kernel?: KernelSpec }
  | {
    kind: "interfaces"; panels: PanelSet; method: Discretisation; kernel?: KernelSpec;
    /** Panels [0, conductorPanels) are conductor panels, the rest interface panels with contrasts `lambda`. */
    conductorPanels: number; lambda: Float64Array; testing: InterfaceTesting;
  };

/** Entries of the kinds of OperatorEntries and the normal-field rows, ready for the workers (images prepared, arrays shared). */
export type WorkerEntries =
  | { kind: "conductors"; panels: PanelSet; method: Discretisation; images: ImageSet | undefined }
  | { kind: "interfaces"; panels: PanelSet; conductorPanels: number; lambda: Float64Array; method: Discretisation; testing: InterfaceTesting; images: ImageSet | undefined }
  | { kind: "normal field"; panels: PanelSet; flag: Uint8Array; images: ImageSet | undefined };

/**
 * The worker task computing the entries (a typed handle, src/linalg/task.ts) and the arguments
 * before and after (rows, cols, out). The one place of the solve that names worker entry generators.
 */
export function workerEntrySource(entries: WorkerEntries): EntrySourceData {
  switch (entries.kind) {
    case "conductors":
      return checkedSource({ task: assembleBlockTask, before: [entries.panels], after: [entries.method, entries.images] });
    case "interfaces":
      return checkedSource({ task: assembleInterfaceBlockTask, before: [entries.panels, entries.conductorPanels, entries.lambda], after: [entries.method, entries.testing, entries.images] });
    case "normal field":
      return checkedSource({ task: normalFieldBlockTask, before: [entries.panels, entries.flag], after: [entries.images] });
  }
}

/** The source as written, its arguments checked against the generator's parameters. */
function checkedSource<const B extends unknown[], const A extends unknown[]>(source: EntrySource<B, A>): EntrySourceData {
  return source;
}

/**
 * Galerkin conductor-only matrices are symmetric positive definite; collocation rows and
 * interface rows (whatever their testing) make the matrix non-symmetric.
 */
export function isSymmetric(entries: OperatorEntries): boolean {
  return entries.kind === "conductors" && entries.method === "galerkin";
}

/** Y = A·X for n×k row-major blocks, with what the preconditioners may read of A. */
export interface Operator {
  readonly n: number;
  /** Symmetric positive definite (isSymmetric). */
  readonly symmetric: boolean;
  readonly apply: BlockOperator;
}

export interface DenseOperator extends Operator {
  readonly storage: "dense";
  /** n×n row-major, shared with the workers. */
  readonly matrix: Float64Array;
  /** Panel centroids, x, y, z per row; metres. */
  readonly points: Float64Array;
}

export interface CompressedOperator extends Operator {
  readonly storage: "compressed";
  readonly hmatrix: HMatrix;
  /** The prepared mirror images the entries use (undefined: free space). */
  readonly images: ImageSet | undefined;
  /** Frees the blocks held by the workers. */
  release(): Promise<void>;
}

/** The dense matrix of `entries`, assembled on the pool's workers. */
export async function denseOperator(entries: OperatorEntries, pool: WorkerPool): Promise<DenseOperator> {
  const P = entries.panels, n = P.n;
  const A = entries.kind === "conductors"
    ? await assembleDense(P, entries.method, pool, undefined, entries.kernel)
    : await assembleWithInterfaces(P, entries.conductorPanels, entries.lambda, entries.method, entries.testing, pool, entries.kernel);
  return {
    storage: "dense", n, symmetric: isSymmetric(entries), matrix: A, points: P.centroids,
    apply: (X: Float64Array, Y: Float64Array, kk: number) => denseMultiply(A, n, X, kk, Y, pool),
  };
}

export interface CompressedOperatorOptions {
  /** Relative accuracy of each admissible block. */
  tolerance: number;
  leafSize: number;
  eta: number;
  pool: WorkerPool;
  progress: (phase: string, fraction: number) => void;
}

/**
 * The hierarchical matrix of `entries`, its blocks computed in the workers. With the image kernel
 * a reflection never brings two clusters on the same side closer, so the admissibility of the
 * direct term covers the image terms. The normal-field kernel of the interface rows,
 * n̂_i·(x − y)/|x − y|³, is asymptotically smooth like 1/|x − y|, so the admissibility of the
 * single layer serves both kinds of rows, and the identity part of the interface rows lies in
 * the diagonal (near) blocks.
 */
export async function compressedOperator(entries: OperatorEntries, opts: CompressedOperatorOptions): Promise<CompressedOperator> {
  const panels = entries.panels;
  let images: ImageSet | undefined;
  let source: EntrySourceData;
  if (entries.kind === "conductors") {
    images = preparedImages(panels, entries.kernel, true);
    source = workerEntrySource({ kind: "conductors", panels, method: entries.method, images });
  } else {
    const lam = sharedFloat64(entries.lambda.length);
    lam.set(entries.lambda);
    images = preparedImages(panels, entries.kernel, true);
    source = workerEntrySource({
      kind: "interfaces", panels, conductorPanels: entries.conductorPanels, lambda: lam, method: entries.method, testing: entries.testing, images,
    });
  }
  const symmetric = isSymmetric(entries);
  const H = await buildHMatrix(panels.centroids, { source }, {
    tolerance: opts.tolerance, leafSize: opts.leafSize, eta: opts.eta, symmetric, pad: panels.radii, pool: opts.pool,
    progress: opts.progress,
  });
  return {
    storage: "compressed", n: H.n, symmetric, hmatrix: H, images,
    apply: (X: Float64Array, Y: Float64Array, kk: number) => H.apply(X, Y, kk),
    release: () => H.release(),
  };
}

/**
 * E_pv·n̂ (in the units of x) at the flagged conductor panels [0, nc) of `op`'s panels, nc×k: a
 * second, non-symmetric hierarchical matrix over all panels whose rows are the collocated normal
 * field at the flagged panels (bem/assembly.ts normalFieldBlock; other rows 0), applied to x,
 * with the images and block accuracy of `op`. The sum it replaces costs flagged × N kernel
 * evaluations on one thread.
 */
export async function openSheetNormalField(panels: PanelSet, nc: number, fieldPanels: Uint8Array, X: Float64Array, k: number,
  images: ImageSet | undefined, opts: CompressedOperatorOptions): Promise<Float64Array> {
  const N = panels.n, progress = opts.progress;
  const flag = new Uint8Array(new SharedArrayBuffer(N));
  flag.set(fieldPanels.subarray(0, nc));
  progress("fields", 0);
  const F = await buildHMatrix(panels.centroids, { source: workerEntrySource({ kind: "normal field", panels, flag, images }) }, {
    tolerance: opts.tolerance, leafSize: opts.leafSize, eta: opts.eta, symmetric: false, pad: panels.radii, pool: opts.pool,
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
