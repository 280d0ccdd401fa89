import { rng } from "./random.js";
import { task, type Task } from "../../src/linalg/task.js";

/**
 * Points in `groups` tight clusters (spread `spread` around centres in the unit cube).
 * A generic stand-in for a clustered discretisation: linalg tests may not import bem.
 */
export function clusteredPoints(n: number, groups: number, spread: number, seed: number): Float64Array {
  const r = rng(seed), centres = new Float64Array(3 * groups), pts = new Float64Array(3 * n);
  for (let i = 0; i < 3 * groups; i++) centres[i] = r();
  for (let i = 0; i < n; i++) {
    const g = i % groups;
    for (let d = 0; d < 3; d++) pts[3 * i + d] = centres[3 * g + d] + spread * (r() - 0.5);
  }
  return pts;
}

/**
 * A[i][j] = 1/√(|xᵢ − xⱼ|² + δ²): the inverse multiquadric, a strictly positive definite
 * kernel in ℝ³ (Wendland, Scattered Data Approximation, Cambridge 2005, Theorem 8.15), so
 * A is SPD for distinct points; like a 1/r collocation matrix it is dominated by near pairs.
 */
export function inverseMultiquadricMatrix(pts: Float64Array, delta: number): Float64Array {
  const n = pts.length / 3, A = new Float64Array(new SharedArrayBuffer(8 * n * n));
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      const dx = pts[3 * i] - pts[3 * j], dy = pts[3 * i + 1] - pts[3 * j + 1], dz = pts[3 * i + 2] - pts[3 * j + 2];
      A[i * n + j] = 1 / Math.sqrt(dx * dx + dy * dy + dz * dz + delta * delta);
    }
  return A;
}

/** The inverse multiquadric entries as an H-matrix entry generator, before-arguments (pts, delta). */
export function inverseMultiquadricEntries(pts: Float64Array, delta: number, rows: Uint32Array, cols: Uint32Array, out: Float64Array): void {
  const nc = cols.length;
  for (let a = 0; a < rows.length; a++) {
    const i = 3 * rows[a];
    for (let b = 0; b < nc; b++) {
      const j = 3 * cols[b];
      const dx = pts[i] - pts[j], dy = pts[i + 1] - pts[j + 1], dz = pts[i + 2] - pts[j + 2];
      out[a * nc + b] = 1 / Math.sqrt(dx * dx + dy * dy + dz * dz + delta * delta);
    }
  }
}

/**
 * The handle of a self-contained function (no imports, no free variables) as a worker task:
 * the module is the function's own source as a data: URL, since workers load compiled
 * modules and tests are not compiled.
 */
export function inlineTask<F extends (...args: any[]) => unknown>(fn: Record<string, F>): Task<F> {
  const name = Object.keys(fn)[0];
  return task("data:text/javascript," + encodeURIComponent(`export const ${name} = ${fn[name].toString()};`), fn);
}

export const inverseMultiquadricTask = inlineTask({ inverseMultiquadricEntries });
