/**
 * How far to trust a conductor's peak field: is it at a sharp edge (where the exact field is
 * unbounded and the computed peak grows as the panels shrink), and if not, how large is its error.
 *
 * Near an edge of opening angle β (inside the conductor measured from outside: a thin sheet's rim
 * has β = 2π, a right-angle solid edge β = 3π/2) the surface charge density behaves as
 * σ ~ ρ^(π/β − 1) (Jackson, Classical Electrodynamics, 3rd ed., §2.11): ρ^(−1/2) at a sheet's rim,
 * ρ^(−1/3) at a right-angle edge. A panel of size h touching the edge averages σ over it, so its
 * field grows as h^(−p) with p = 1 − π/β. Away from edges the panel field converges.
 *
 * The rule: a panel is at a sharp feature when one of its corners lies on a sharp edge of the
 * conductor. A sharp edge is a rim of an open sheet or a non-manifold edge; an edge between two
 * faces of the reference surface whose exact normals meet at more than SHARP_ANGLE somewhere
 * (a box's edge, not a fillet's tangent join; the facet creases inside one smooth face never
 * count); without a reference surface, a crease of the mesh above SHARP_ANGLE (featureEdges).
 * A rim along a symmetry plane is the cut of a half model, not an edge (nor is any rim of a
 * conductor closed by symmetry).
 */
import type { SurfaceMesh } from "../mesh/model.js";
import { NO_FACE } from "../mesh/model.js";
import { meshEdges, faceNormals, featureEdges } from "../mesh/edges.js";

/** Crease angle above which two faces meet at an edge; degrees (the feature angle refinement uses). */
export const SHARP_ANGLE = 30;

/** A symmetry plane: axis index (0 x, 1 y, 2 z) and offset; metres. */
export interface CutPlane { axis: number; offset: number }

/**
 * Per panel of `mesh`: 1 where one of its corners lies on a sharp edge (see the header).
 * `closed` per conductor; `cuts` the symmetry planes the mesh was cut along.
 */
export function sharpPanels(mesh: SurfaceMesh, closed: boolean[], cuts: CutPlane[] = []): Uint8Array {
  return panelsOnEdges(mesh, sharpVertices(mesh, closed, cuts));
}

/** Per panel: 1 where one of its corners is flagged in `onEdge`. */
export function panelsOnEdges(mesh: SurfaceMesh, onEdge: Uint8Array): Uint8Array {
  const tr = mesh.triangles, nt = tr.length / 3;
  const out = new Uint8Array(nt);
  for (let t = 0; t < nt; t++) out[t] = onEdge[tr[3 * t]] | onEdge[tr[3 * t + 1]] | onEdge[tr[3 * t + 2]];
  return out;
}

/** Per vertex of `mesh`: 1 where it lies on a sharp edge (the rule of `sharpPanels`). */
export function sharpVertices(mesh: SurfaceMesh, closed: boolean[], cuts: CutPlane[] = []): Uint8Array {
  const cosSharp = Math.cos((SHARP_ANGLE * Math.PI) / 180);
  const edges = meshEdges(mesh);
  const crease = featureEdges(mesh, edges, faceNormals(mesh), cosSharp);
  const pairs = mesh.faces && mesh.reference ? sharpFacePairs(mesh, cosSharp) : undefined;
  const onEdge = new Uint8Array(mesh.positions.length / 3);
  const pos = mesh.positions;
  let size = 0;
  for (let i = 0; i < pos.length; i++) size = Math.max(size, Math.abs(pos[i]));
  const inCut = (v: number) => cuts.some((c) => Math.abs(pos[3 * v + c.axis] - c.offset) <= 1e-9 * size);
  for (let e = 0; e < edges.count; e++) {
    const h0 = edges.half0[e], h1 = edges.half1[e];
    const t0 = (h0 - (h0 % 3)) / 3;
    let sharp: boolean;
    if (edges.faces[e] !== 2) sharp = edges.faces[e] > 2 || (!closed[mesh.conductor[t0]] && !(inCut(edges.v0[e]) && inCut(edges.v1[e])));
    else {
      const t1 = (h1 - (h1 % 3)) / 3;
      const f0 = mesh.faces?.[t0] ?? NO_FACE, f1 = mesh.faces?.[t1] ?? NO_FACE;
      if (pairs && f0 !== NO_FACE && f1 !== NO_FACE) sharp = f0 !== f1 && pairs.has(pairKey(f0, f1));
      else sharp = crease[e] === 1;
    }
    if (sharp) { onEdge[edges.v0[e]] = 1; onEdge[edges.v1[e]] = 1; }
  }
  return onEdge;
}

function pairKey(a: number, b: number): number {
  return a < b ? a * 0x100000 + b : b * 0x100000 + a;
}

/**
 * Pairs of reference faces that meet at an angle: a reference vertex appears once per face it
 * lies on, with that face's exact normal, so the vertices at one position on the curve where
 * two faces meet compare their normals there.
 */
function sharpFacePairs(mesh: SurfaceMesh, cosSharp: number): Set<number> {
  const r = mesh.reference!;
  const nv = r.positions.length / 3;
  const faceOf = new Uint32Array(nv).fill(NO_FACE);
  for (let t = 0; t < r.face.length; t++) for (let j = 0; j < 3; j++) faceOf[r.triangles[3 * t + j]] = r.face[t];
  let size = 0;
  for (let i = 0; i < r.positions.length; i++) size = Math.max(size, Math.abs(r.positions[i]));
  // Positions equal to rounding: a grid of 1e-9 of the model's extent.
  const q = (size > 0 ? size : 1) * 1e-9;
  const groups = new Map<string, number[]>();
  for (let v = 0; v < nv; v++) {
    const key = `${Math.round(r.positions[3 * v] / q)},${Math.round(r.positions[3 * v + 1] / q)},${Math.round(r.positions[3 * v + 2] / q)}`;
    const g = groups.get(key);
    if (g) g.push(v); else groups.set(key, [v]);
  }
  const pairs = new Set<number>();
  const n = r.normals;
  for (const g of groups.values()) {
    for (let a = 0; a < g.length; a++) for (let b = a + 1; b < g.length; b++) {
      const va = g[a], vb = g[b], fa = faceOf[va], fb = faceOf[vb];
      if (fa === fb || fa === NO_FACE || fb === NO_FACE) continue;
      const cos = n[3 * va] * n[3 * vb] + n[3 * va + 1] * n[3 * vb + 1] + n[3 * va + 2] * n[3 * vb + 2];
      if (cos < cosSharp) pairs.add(pairKey(fa, fb));
    }
  }
  return pairs;
}

/** A conductor's recovered peak: the largest vertex-averaged field, where, and the panel size there. */
export interface RecoveredPeak {
  /** V/m. */
  value: number;
  vertex: number;
  /** √(mean area) of the conductor's panels around that vertex; metres. */
  size: number;
}

/**
 * The peak of a smooth surface's field, recovered from the panel fields: at each vertex off any
 * sharp edge (`onEdge`, sharpVertices), the area-weighted mean of the fields of the panels around
 * it, and per conductor the largest of these. The piecewise-constant charge scatters from panel
 * to panel by O(h), and the largest panel picks the worst of that scatter: on a sphere of 1 mm 1.5 mm
 * over a grounded plane the largest panel field stalls 1e-3 above Kelvin's value from 5,120 panels
 * on, while the vertex average at the lowest point converges as h² (−3.2e-2, −8.7e-3, −2.2e-3,
 * −5.4e-4 over 320 … 20,480 panels; tests/extract/peak-field.test.ts). Averaging recovers the
 * smooth field as the ZZ-type estimators do (error-indicator.ts). One pass for every conductor
 * asked for (`want`): conductors share no vertices (touching ones are refused), so each vertex's
 * panels are its conductor's. Null for a conductor not asked for or without such a vertex.
 */
export function recoveredPeaks(field: ArrayLike<number>, mesh: SurfaceMesh, areas: ArrayLike<number>, onEdge: Uint8Array, want: readonly boolean[]): Array<RecoveredPeak | null> {
  const tr = mesh.triangles, nt = mesh.conductor.length, nv = mesh.positions.length / 3;
  const sum = new Float64Array(nv), area = new Float64Array(nv), count = new Uint32Array(nv);
  const owner = new Int32Array(nv).fill(-1);
  for (let t = 0; t < nt; t++) {
    const c = mesh.conductor[t];
    if (!want[c]) continue;
    const A = areas[t];
    for (let j = 0; j < 3; j++) { const v = tr[3 * t + j]; sum[v] += field[t] * A; area[v] += A; count[v]++; owner[v] = c; }
  }
  const best: Array<RecoveredPeak | null> = want.map(() => null);
  for (let v = 0; v < nv; v++) {
    const c = owner[v];
    if (c < 0 || area[v] === 0 || onEdge[v]) continue;
    const value = sum[v] / area[v];
    const b = best[c];
    if (!b || value > b.value) best[c] = { value, vertex: v, size: Math.sqrt(area[v] / count[v]) };
  }
  return best;
}

/** Roache's safety factor for a two-grid estimate with an assumed order (the recovered peak's h²). */
export const RECOVERED_SAFETY = 3;

export interface PeakFieldAssessment {
  /** The peak panel touches a sharp edge. */
  singular: boolean;
  /** Relative error of a converged peak (see assessPeak); null when singular or without refinement. */
  error: number | null;
  /** p in E ∝ h^(−p) from the last two levels (h halves per level) for a singular peak; null otherwise. */
  growth: number | null;
}

/**
 * The spread of the field around a panel: (largest − smallest) field over the panels of the same
 * conductor that share a corner with it, relative to its own. On a smooth surface the exact field
 * varies by h·|∇E| across these panels, so their spread is the size of the discretisation's
 * panel-to-panel error plus the variation a panel average hides: an estimate of how far the peak
 * panel's value may sit from the true peak, available on the finest level itself.
 */
export function peakSpread(field: ArrayLike<number>, mesh: SurfaceMesh, panel: number): number {
  const tr = mesh.triangles, c = mesh.conductor[panel];
  const a = tr[3 * panel], b = tr[3 * panel + 1], d = tr[3 * panel + 2];
  let lo = field[panel], hi = field[panel];
  for (let t = 0; t < mesh.conductor.length; t++) {
    if (mesh.conductor[t] !== c) continue;
    const u = tr[3 * t], v = tr[3 * t + 1], w = tr[3 * t + 2];
    if (u === a || u === b || u === d || v === a || v === b || v === d || w === a || w === b || w === d) {
      if (field[t] < lo) lo = field[t];
      if (field[t] > hi) hi = field[t];
    }
  }
  return field[panel] > 0 ? (hi - lo) / field[panel] : 0;
}

/**
 * Assess one conductor's peak from its values on the levels, coarsest first (the last is the
 * reported one; each level halves the panel size), and the finest level's `spread` (peakSpread).
 *
 * Converged: max(|E_L − E_{L−1}| / E_L, spread). The first term is the Richardson correction for
 * first order, the slowest a converging panel field has; it alone fell short of the true error on
 * spheres (measured in tests/extract/peak-field.test.ts: the maximum over panels picks the panel
 * whose discretisation error is largest, and that error does not decay smoothly level to level),
 * while the spread covered it on every sphere measured.
 * Singular: the growth exponent p = log2(E_L / E_{L−1}) over the last two levels, those nearest
 * the asymptotic range (a singularity decides only the finest panels' values); with `sizes` (the
 * peak panel's √area per level) against the ratio of those sizes, as adaptive levels need. When the
 * peak panel shrank by less than a factor 1.3 between the two levels the growth is not measured (null).
 */
export function assessPeak(values: number[], singular: boolean, spread: number, sizes?: number[], recovered = false): PeakFieldAssessment {
  const L = values.length - 1;
  if (L < 1 || !values.every((v) => Number.isFinite(v) && v > 0)) return { singular, error: null, growth: null };
  const fine = values[L], coarse = values[L - 1];
  // How much the panels at the peak shrank between the levels: their own sizes where given
  // (adaptive levels refine some panels only), else 2 (uniform levels halve h). Below 1.3 the two
  // levels say little of the peak's growth or error (null).
  const ratio = sizes && sizes[L] > 0 && sizes[L - 1] > 0 ? sizes[L - 1] / sizes[L] : 2;
  if (recovered && !singular) {
    // Recovered peaks converge as h² (recoveredPeaks): the finest value's error is the Richardson
    // correction |E_L − E_{L−1}|/(r² − 1) for the size ratio r at the peak, times Roache's safety
    // factor for two grids and an assumed order, 3 (J. Fluids Eng. 116, 1994; measured on the sphere
    // over a plane against Kelvin's images: the correction alone is 0.8–0.9 of the true error).
    return { singular, error: ratio >= 1.3 ? (RECOVERED_SAFETY * Math.abs(fine - coarse) / fine) / (ratio * ratio - 1) : null, growth: null };
  }
  // p = log(E_L/E_{L−1}) / log(h_{L−1}/h_L); for uniform levels log2(E_L/E_{L−1}).
  if (singular) return { singular, error: null, growth: ratio >= 1.3 ? Math.log(fine / coarse) / Math.log(ratio) : null };
  return { singular, error: Math.max(Math.abs(fine - coarse) / fine, spread), growth: null };
}
