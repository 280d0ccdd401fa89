/**
 * The boundary-element solve: every conductor at 1 V in turn (one right-hand side per conductor,
 * all at once), composed of an operator (operator.ts) from an entry source, a preconditioner
 * (preconditioner.ts), a Krylov method (krylov.ts) or a factorisation (dense-solve.ts), at the
 * accuracies of the tolerance policy (tolerance-policy.ts), the solver chosen by the cost model
 * (solver-choice.ts).
 *
 * Unknowns are panel charges scaled by 4πε: with P the geometric operator of src/bem
 * (entries in 1/m), P·x = v gives physical panel charges Q = 4π ε0 εr x.
 */
import { panelSetShared } from "../bem/panels.js";
import type { InterfaceTesting } from "../bem/interface.js";
import { openSheetNormalField, type OperatorEntries } from "./operator.js";
import { resolveSolver } from "./solver-choice.js";
import { solveDense } from "./dense-solve.js";
import { solveCompressed, type WhileHeld } from "./compressed-solve.js";
import type { SolveOptions, UnitSolution } from "./unit-solution.js";

export type { SolveOptions, SolveInfo, UnitSolution } from "./unit-solution.js";
export { chooseSolver, COMPRESSED_CROSSOVER, INTERFACE_COMPRESSED_CROSSOVER, type SolverChoice } from "./solver-choice.js";
export {
  compressionTolerance, krylovTolerance, FIELD_KRYLOV_TOLERANCE, interfaceCompressionTolerance, interfaceKrylovTolerance,
} from "./tolerance-policy.js";
export { PRECONDITIONER_CLUSTER, COARSE_CLUSTER, clusterCover } from "./preconditioner.js";
export { BLOCK_CG_MIN_RHS } from "./krylov.js";

/**
 * Conductors alone (panels of `conductorOf`'s length) in the medium of the discretisation's
 * kernel, with the mirror images of `opts.kernel`: dense direct or iterative, or compressed.
 */
export async function solveUnitPotentials(
  positions: Float64Array, triangles: Uint32Array, conductorOf: Uint32Array, k: number, opts: SolveOptions,
): Promise<UnitSolution> {
  const { solver, choice } = resolveSolver(opts.solver, conductorOf.length, k, "conductors");
  const entries: OperatorEntries = { kind: "conductors", panels: panelSetShared(positions, triangles), method: opts.method, kernel: opts.kernel };
  return solver === "compressed"
    ? solveCompressed(entries, conductorOf, k, opts, choice)
    : solveDense(entries, conductorOf, k, opts, solver, choice);
}

/**
 * The solve with dielectric interfaces (equivalent-charge formulation, bem/interface.ts):
 * panels [0, nConductor) are conductor panels (conductorOf gives their conductor), the rest
 * interface panels with contrasts `lambda`. Every conductor at 1 V in turn; interface rows have
 * right-hand side 0. The system is not symmetric: LU (direct), GMRES with block-Jacobi LU
 * (iterative), or the compressed solver. x (N×k) holds total charges, Q = 4π ε0 x, on all N
 * panels. `fieldPanels` (nc flags) asks the compressed solver for E_pv·n̂ at those conductor
 * panels (UnitSolution.normalField), which a direct sum would cost O(flagged × N).
 */
export async function solveUnitPotentialsWithInterfaces(
  positions: Float64Array, triangles: Uint32Array, conductorOf: Uint32Array, k: number, lambda: Float64Array,
  testing: InterfaceTesting, opts: SolveOptions, fieldPanels?: Uint8Array,
): Promise<UnitSolution> {
  const nc = conductorOf.length, N = triangles.length / 3;
  if (N - nc !== lambda.length) throw new Error(`solveUnitPotentialsWithInterfaces: ${N} panels, ${nc} conductor panels, ${lambda.length} contrasts`);
  const { solver, choice } = resolveSolver(opts.solver, N, k, "interfaces");
  const entries: OperatorEntries = {
    kind: "interfaces", panels: panelSetShared(positions, triangles), method: opts.method, kernel: opts.kernel,
    conductorPanels: nc, lambda, testing,
  };
  if (solver !== "compressed") return solveDense(entries, conductorOf, k, opts, solver, choice);
  const normalField: WhileHeld | undefined = fieldPanels && fieldPanels.some((f) => f !== 0)
    ? async (op, x, o) => ({ normalField: await openSheetNormalField(entries.panels, nc, fieldPanels, x, k, op.images, o) })
    : undefined;
  return solveCompressed(entries, conductorOf, k, opts, choice, normalField);
}
