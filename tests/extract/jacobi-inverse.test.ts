import { describe, it, expect, afterAll } from "vitest";
import { plateMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { panelSetShared } from "../../src/bem/panels.js";
import { assembleBlockTask } from "../../src/bem/assembly.js";
import { buildHMatrix } from "../../src/linalg/hmatrix.js";
import { parallelBlockJacobi, BLOCK_INVERSE } from "../../src/linalg/cluster-jacobi.js";
import { pcg } from "../../src/linalg/cg.js";
import { WorkerPool, sharedFloat64 } from "../../src/linalg/pool.js";
import { clusterCover, PRECONDITIONER_CLUSTER } from "../../src/extract/preconditioner.js";

const pool = new WorkerPool(2);
afterAll(async () => { await pool.close(); });

// The compressed solver's own operator: the Galerkin single-layer H-matrix of a 2 × 2 pad
// array (the compressed bench's pads, coarser), its diagonal blocks as the preconditioner.
describe("block-Jacobi inverses on the Galerkin H-matrix of a pad array", () => {
  it("apply as the substitution to 1e-12 relative; PCG takes the same iterations to the same charges", async () => {
    const parts = [];
    for (let i = 0; i < 2; i++) for (let j = 0; j < 2; j++)
      parts.push({ ...plateMesh({ size: [0.008, 0.008], divisions: 16, center: [0.01 * i, 0.01 * j, 0] }), names: [`pad${i}${j}`] });
    const m = concatMeshes(parts), k = 4;
    const P = panelSetShared(m.positions, m.triangles), n = P.n;
    const H = await buildHMatrix(P.centroids, { source: { task: assembleBlockTask, before: [P], after: ["galerkin", undefined] } },
      { tolerance: 1e-5, leafSize: 32, eta: 2, symmetric: true, pad: P.radii, pool });
    try {
      // Unit potential on each pad in turn, as the extraction's right-hand sides.
      const B = sharedFloat64(n * k);
      for (let p = 0; p < n; p++) B[p * k + m.conductor[p]] = 1;
      const nodes = clusterCover(H.tree, PRECONDITIONER_CLUSTER);
      expect(nodes.length).toBeGreaterThan(4);
      const sets = nodes.map((v) => H.tree.order.slice(H.tree.start[v], H.tree.end[v]));
      const subst = await parallelBlockJacobi((into) => { H.diagonalBlocks(nodes, into); }, sets, n, pool, { inverse: false });
      const inv = await parallelBlockJacobi((into) => { H.diagonalBlocks(nodes, into); }, sets, n, pool);
      try {
        expect([...inv.kind].every((t) => t === BLOCK_INVERSE)).toBe(true);
        const Z0 = sharedFloat64(n * k), Z1 = sharedFloat64(n * k);
        await subst.apply(B, Z0, k);
        await inv.apply(B, Z1, k);
        let d = 0, s = 0;
        for (let i = 0; i < Z0.length; i++) { d = Math.max(d, Math.abs(Z1[i] - Z0[i])); s = Math.max(s, Math.abs(Z0[i])); }
        expect(d / s).toBeLessThan(1e-12);
        const apply = (X: Float64Array, Y: Float64Array, kk: number) => H.apply(X, Y, kk);
        const a = await pcg(apply, subst.apply, B, k, { tol: 1e-6, maxIter: 300 });
        const b = await pcg(apply, inv.apply, B, k, { tol: 1e-6, maxIter: 300 });
        expect(a.converged && b.converged).toBe(true);
        expect(b.iterations).toBe(a.iterations);
        let e = 0, x = 0;
        for (let i = 0; i < a.X.length; i++) { e = Math.max(e, Math.abs(b.X[i] - a.X[i])); x = Math.max(x, Math.abs(a.X[i])); }
        expect(e / x).toBeLessThan(1e-9);
      } finally { await subst.release(); await inv.release(); }
    } finally { await H.release(); }
  });
});
