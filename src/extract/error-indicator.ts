/**
 * Where the discretisation error is: a per-panel indicator of each panel's share of the
 * capacitance error, from one solve (no extra solve), and Dörfler's marking.
 *
 * Two sources of error add up on a panel:
 * - The charge's approximation. For Galerkin on the single-layer operator the error of a
 *   diagonal capacitance is the squared energy norm of the charge density's error (Galerkin
 *   orthogonality: C − C_h = ⟨σ − σ_h, V(σ − σ_h)⟩), and that norm is estimated panel by panel by
 *   the ZZ-type averaging estimator for first-kind integral equations: the piecewise-constant
 *   density against its nodal average, η_T² = h_T ‖σ_h − Aσ_h‖²_{L²(T)} (C. Carstensen and
 *   D. Praetorius, "Averaging techniques for the effective numerical solution of Symm's integral
 *   equation of the first kind", SIAM J. Sci. Comput. 27, 2006; reviewed with the other
 *   a-posteriori estimators by M. Feischl, T. Führer, N. Heuer, M. Karkulik and D. Praetorius,
 *   "Adaptive boundary element methods", Arch. Comput. Methods Eng. 22, 2015). Aσ_h is
 *   continuous and piecewise linear: at each vertex the area-weighted mean of the densities of the
 *   panels of the same conductor around it.
 * - The geometry's approximation. A flat panel stands a small normal distance δn off the curved
 *   surface it approximates, and moving a conductor's surface by δn changes its capacitance by
 *   ∫ σ²/ε δn dA (Hadamard's variation of the field energy at fixed potential). δn is taken as
 *   2/3 of the mean distance of the panel's edges' new points (those refinement would place on the
 *   true surface) from the straight midpoints: the mean sag of a triangle inscribed in a sphere is
 *   2/3 of the sag at its edge midpoints. Flat faces have δn = 0.
 *
 * Both are written in the units of the solver's x (charges scaled by 4πε, so that a conductor's
 * diagonal entry is 4πε Σx): the averaging term as h‖σ_x − Aσ_x‖² and the geometric one as
 * 4π σ_x² δn A. Their sum over a unit solution's panels, divided by that solution's Σx, is a
 * relative capacitance error up to a constant near one: the indicator only steers the refinement;
 * the reported estimate comes from the sequence of solves (accuracy.ts).
 */
import type { SurfaceMesh } from "../mesh/model.js";
import type { MeshEdges } from "../mesh/edges.js";

/**
 * Per-panel indicators of the unit solutions `xs` (each n×k, column j = conductor j at 1 V, as the
 * solver returns them) on panels of `area` (the solve's PanelSet areas), each column weighted by
 * `weights[j]` (e.g. 1/Σx_j for a relative error).
 * `sag`: per panel, the distance of the true surface from the flat panel (0 on flat faces; metres).
 */
export function panelIndicators(mesh: SurfaceMesh, area: ArrayLike<number>, xs: Float64Array[], k: number, weights: Float64Array, sag?: Float64Array): Float64Array {
  const tr = mesh.triangles;
  const nt = mesh.conductor.length, nv = mesh.positions.length / 3;
  // Vertices are shared within one conductor only (conductors do not touch), so a vertex's
  // average is over its own conductor's panels.
  const out = new Float64Array(nt);
  const vsum = new Float64Array(nv), varea = new Float64Array(nv);
  for (const x of xs) {
    for (let j = 0; j < k; j++) {
      const w = weights[j];
      if (w === 0) continue;
      vsum.fill(0); varea.fill(0);
      for (let t = 0; t < nt; t++) {
        const q = x[t * k + j];
        for (let c = 0; c < 3; c++) { const v = tr[3 * t + c]; vsum[v] += q; varea[v] += area[t]; }
      }
      for (let t = 0; t < nt; t++) {
        const A = area[t];
        if (A === 0) continue;
        const s = x[t * k + j] / A;
        const d0 = vsum[tr[3 * t]] / varea[tr[3 * t]] - s;
        const d1 = vsum[tr[3 * t + 1]] / varea[tr[3 * t + 1]] - s;
        const d2 = vsum[tr[3 * t + 2]] / varea[tr[3 * t + 2]] - s;
        // ∫_T (Σ d_i λ_i)² = A/12 (Σ d_i² + (Σ d_i)²) for the barycentric λ_i.
        const sum = d0 + d1 + d2;
        let eta = Math.sqrt(A) * (A / 12) * (d0 * d0 + d1 * d1 + d2 * d2 + sum * sum);
        if (sag) eta += 4 * Math.PI * s * s * sag[t] * A;
        out[t] += w * eta;
      }
    }
  }
  return out;
}

/**
 * Dörfler's marking (W. Dörfler, "A convergent adaptive algorithm for Poisson's equation", SIAM J.
 * Numer. Anal. 33, 1996): the fewest panels, largest indicators first, whose indicators sum to at
 * least θ of the total. Returns a flag per panel.
 */
export function dorflerMarking(indicators: Float64Array, theta: number): Uint8Array {
  const n = indicators.length;
  const marked = new Uint8Array(n);
  let total = 0;
  for (let i = 0; i < n; i++) total += indicators[i];
  if (!(total > 0)) return marked;
  const order = new Uint32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  order.sort((a, b) => indicators[b] - indicators[a]);
  let acc = 0;
  const goal = theta * total;
  for (let r = 0; r < n && acc < goal; r++) {
    const i = order[r];
    marked[i] = 1;
    acc += indicators[i];
  }
  return marked;
}

/**
 * Per panel, the distance of the true surface from the flat panel, from the new points refinement
 * would place on the edges of `edges` (`points`: as refine.ts `edgePoints` returns them, the mesh's
 * vertices then vertex nv + e the new point of edge e).
 */
export function panelSag(mesh: SurfaceMesh, edges: MeshEdges, points: Float64Array): Float64Array {
  const p = mesh.positions, nv = p.length / 3, nt = mesh.conductor.length;
  const { v0, v1, edgeOfHalf } = edges, ne = edges.count;
  const d = new Float64Array(ne);
  for (let e = 0; e < ne; e++) {
    const a = 3 * v0[e], b = 3 * v1[e], o = 3 * (nv + e);
    d[e] = Math.hypot(points[o] - 0.5 * (p[a] + p[b]), points[o + 1] - 0.5 * (p[a + 1] + p[b + 1]), points[o + 2] - 0.5 * (p[a + 2] + p[b + 2]));
  }
  const sag = new Float64Array(nt);
  for (let t = 0; t < nt; t++) sag[t] = (2 / 3) * (d[edgeOfHalf[3 * t]] + d[edgeOfHalf[3 * t + 1]] + d[edgeOfHalf[3 * t + 2]]) / 3;
  return sag;
}
