/**
 * Mirror symmetry planes: the meshed part of a model 2^m times as large.
 *
 * Even and odd planes enter through the image kernel (bem/images.ts): each conductor stands for
 * itself with its mirror images, tied to the same potential (even) or at the opposite one (odd).
 * Planes with images "both" are solved once per even/odd pattern and unfolded here: the full
 * Maxwell matrix by the character sum (`unfoldMatrix`), the mesh and the unit solutions into
 * explicit mirror copies whose conductors are nets of their own (`name~x`), and the dielectric
 * model likewise (`unfoldedDielectric`). Also here: the nets and per-pattern kernels of a set of
 * planes (`symmetryLayout`), the cut faces of a half model (`withoutTriangles`), bodies open only
 * along symmetry planes (`closeBySymmetry`), and dielectric bodies meshed on the conductors' side
 * (`unfolding`).
 */
import type { SurfaceMesh } from "../mesh/model.js";
import type { buildEdgeTable } from "../mesh/topology.js";
import { panelSet } from "../bem/panels.js";
import { InputError } from "../errors.js";
import {
  AXES, mirrorNets, hasImages, kernelPlanes, imageSet, symmetryCopies, trianglesInSymmetryPlanes,
  edgeInSymmetryPlane, evenCopies, axisIndex, reflectSurface, mirrorSuffix,
  type AxisPlane, type KernelSpec, type SymmetryPlane,
} from "../bem/images.js";
import { freeCharges } from "./dielectric-charges.js";
import type { DielectricModel } from "./dielectric-model.js";
import type { FinestSolution } from "./result.js";

/**
 * The planes of a model and what they make of it. Copy h of the meshed part is reflected in the
 * planes with images "both" of the set bits of h (bit b ↔ both[b]); solve pattern s makes the
 * both-planes of its set bits odd.
 */
export interface SymmetryLayout {
  /** The planes with their images filled in and checked. */
  planes: SymmetryPlane[];
  /** The planes with images "both". */
  both: SymmetryPlane[];
  /** Nets per meshed conductor (and solve patterns): 2^both.length. */
  nets: number;
  /** Names of the nets, copy-major: conductor j of copy h is net h·k + j. */
  names: string[];
  /** Reflection mask (bit per axis) of copy h. */
  copyMask: (h: number) => number;
  /** Working potential sign of copy h relative to the meshed part. */
  copySign: (h: number) => number;
  /** Image kernel of solve pattern s; undefined without images. */
  kernelFor: (pattern: number) => KernelSpec | undefined;
  /** Kernel of the side checks: every both-plane odd (its odd solve needs the conductors off it). */
  checkKernel: KernelSpec | undefined;
  /** The images of the reported (unfolded) model: the ground plane and the even and odd planes. */
  kernel: KernelSpec | undefined;
  /** Copies tied to each reported conductor (its even mirrors), and the odd copies of the whole. */
  tied: number;
  oddCopies: number;
}

/** The layout of these planes over conductors named `names`; InputError for a bad plane or a net name taken. */
export function symmetryLayout(names: string[], symmetry: SymmetryPlane[], groundPlane: AxisPlane | undefined): SymmetryLayout {
  const planes = checkedSymmetry(symmetry);
  const both = planes.filter((p) => p.images === "both");
  const nets = 1 << both.length;
  const unfoldedNets = mirrorNets(names, planes);
  const copyMask = (h: number) => unfoldedNets.masks[h];
  const kernelFor = (pattern: number): KernelSpec | undefined => {
    const spec: KernelSpec = {
      groundPlane,
      symmetry: planes.map((p) => ({ axis: p.axis, offset: p.offset, images: p.images === "both" ? ((pattern >> both.indexOf(p)) & 1 ? "odd" : "even") : p.images })),
    };
    return hasImages(spec) ? spec : undefined;
  };
  const checkKernel = kernelFor(nets - 1);
  const fixedSpec: KernelSpec = { groundPlane, symmetry: planes.filter((p) => p.images !== "both").map((p) => ({ axis: p.axis, offset: p.offset, images: p.images })) };
  const kernel = hasImages(fixedSpec) ? fixedSpec : undefined;
  const tied = evenCopies(kernel), oddCopies = symmetryCopies(kernel) / tied;
  const netNames = unfoldedNets.names;
  if (nets > 1) {
    const seen = new Set<string>();
    for (const n of netNames) {
      if (seen.has(n)) throw new InputError(`conductor name ${n} is also the name of a mirrored conductor (symmetry images "both" name mirrors ${mirrorSuffix(copyMask(1))} etc.); rename it`);
      seen.add(n);
    }
  }
  const copySign = (h: number) => unfoldedNets.sign[h];
  return { planes, both, nets, names: netNames, copyMask, copySign, kernelFor, checkKernel, kernel, tied, oddCopies };
}

/** Symmetry planes with their images filled in and checked; InputError naming the plane. */
function checkedSymmetry(list: SymmetryPlane[]): SymmetryPlane[] {
  return list.map((p) => {
    const images = p.images ?? "even";
    const at = `symmetry plane ${p.axis} = ${p.offset} m`;
    if (images !== "even" && images !== "odd" && images !== "both") throw new InputError(`${at}: images must be even, odd or both, got ${String(images)}`);
    if (p.mirrored !== undefined) {
      if (images !== "both") throw new InputError(`${at}: "mirrored" (the mirror conductors' working potentials) needs images "both"`);
      if (p.mirrored !== "same" && p.mirrored !== "opposite") throw new InputError(`${at}: mirrored must be same or opposite, got ${String(p.mirrored)}`);
    }
    const out: SymmetryPlane = { axis: p.axis, offset: p.offset, images };
    if (images === "both") out.mirrored = p.mirrored ?? "same";
    return out;
  });
}

/**
 * The full model's Maxwell matrix from the per-pattern matrices of the meshed part (k×k each,
 * pattern s odd in the both-planes of its set bits): with χ_s(m) = (−1)^popcount(s & m),
 *   C[(g,i),(h,j)] = 2^−b Σ_s χ_s(g ⊕ h) C_s[i,j]
 * (the character decomposition of the reflection group Z₂^b; for one plane
 * C = [[(Ce + Co)/2, (Ce − Co)/2], [(Ce − Co)/2, (Ce + Co)/2]]). Nets are ordered copy-major.
 */
export function unfoldMatrix(perPattern: Float64Array[], k: number, nets: number): Float64Array {
  const K = k * nets, out = new Float64Array(K * K);
  for (let g = 0; g < nets; g++) for (let h = 0; h < nets; h++) {
    const m = g ^ h;
    for (let s = 0; s < nets; s++) {
      const w = (popcount(s & m) & 1 ? -1 : 1) / nets, C = perPattern[s];
      for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) out[(g * k + i) * K + h * k + j] += w * C[i * k + j];
    }
  }
  return out;
}

/**
 * The finest solution of a model with both-planes unfolded: the mesh into its copies, each
 * copy's conductors nets of their own, and the unit solutions of every net on every panel from
 * the per-pattern solutions. A dielectric model is unfolded the same way (conductor panels of
 * every copy first, then interface panels of every copy) and its free charges taken anew.
 */
export function unfoldedFinest(finest: FinestSolution, patterns: Float64Array[], layout: SymmetryLayout, k: number): FinestSolution {
  const { nets, copyMask, kernel } = layout, K = k * nets;
  const n = finest.unit.panels.n;
  const { offsets } = kernelPlanes(layout.checkKernel!);
  const mesh = unfoldedMesh(finest.mesh, nets, copyMask, offsets, layout.names);
  if (finest.dielectric) {
    const u = unfoldedDielectric(finest.dielectric.model, patterns, k, nets, copyMask, offsets);
    const panels = panelSet(u.model.positions, u.model.triangles);
    const x = freeCharges(u.model, panels, u.x, K, kernel ? imageSet(panels, kernel) : undefined);
    return { mesh, unit: { x, panels: panelSet(mesh.positions, mesh.triangles), info: finest.unit.info }, dielectric: { model: u.model, panels, totalX: u.x } };
  }
  const x = unfoldSolutions(patterns, n, k, nets);
  return { mesh, unit: { x, panels: panelSet(mesh.positions, mesh.triangles), info: finest.unit.info } };
}

/** Unit solutions of every net on every panel of the unfolded model, (n·nets)×(k·nets), from the per-pattern n×k solutions. */
function unfoldSolutions(xs: Float64Array[], n: number, k: number, nets: number): Float64Array {
  return characterSum(xs, n, k, nets, (h, p) => h * n + p);
}

/**
 * The unit solutions of every net, (N·nets)×(k·nets), from the per-pattern N×k ones by the
 * character sum of unfoldMatrix: net (g, j) on panel p of copy h (row rowOf(h, p)) takes
 * 2^−b Σ_s χ_s(h ⊕ g) x_s[p, j].
 */
function characterSum(xs: Float64Array[], N: number, k: number, nets: number, rowOf: (h: number, p: number) => number): Float64Array {
  const K = k * nets, out = new Float64Array(N * nets * K);
  for (let h = 0; h < nets; h++) for (let g = 0; g < nets; g++) {
    const m = h ^ g;
    for (let s = 0; s < nets; s++) {
      const w = (popcount(s & m) & 1 ? -1 : 1) / nets, x = xs[s];
      for (let p = 0; p < N; p++) {
        const row = rowOf(h, p) * K + g * k;
        for (let j = 0; j < k; j++) out[row + j] += w * x[p * k + j];
      }
    }
  }
  return out;
}

/** The meshed part and its mirror copies as one mesh, copy h's conductor j numbered h·k + j. */
function unfoldedMesh(mesh: SurfaceMesh, nets: number, copyMask: (h: number) => number, offsets: Float64Array, names: string[]): SurfaceMesh {
  const nv = mesh.positions.length / 3, nt = mesh.conductor.length, k = mesh.names.length;
  const positions = new Float64Array(3 * nv * nets), triangles = new Uint32Array(3 * nt * nets), conductor = new Uint32Array(nt * nets);
  for (let h = 0; h < nets; h++) {
    const r = reflectSurface(mesh.positions, mesh.triangles, copyMask(h), offsets);
    positions.set(r.positions, 3 * nv * h);
    for (let t = 0; t < 3 * nt; t++) triangles[3 * nt * h + t] = r.triangles[t] + nv * h;
    for (let t = 0; t < nt; t++) conductor[nt * h + t] = h * k + mesh.conductor[t];
  }
  return { positions, triangles, conductor, names: names.slice() };
}

function popcount(x: number): number {
  let c = 0;
  for (; x; x &= x - 1) c++;
  return c;
}

/** The mesh without the flagged triangles (vertices kept: unused ones are harmless). */
export function withoutTriangles(mesh: SurfaceMesh, drop: Uint8Array): SurfaceMesh {
  const nt = mesh.conductor.length;
  let keep = 0;
  for (let t = 0; t < nt; t++) if (!drop[t]) keep++;
  const triangles = new Uint32Array(3 * keep), conductor = new Uint32Array(keep);
  const faces = mesh.faces !== undefined ? new Uint32Array(keep) : undefined;
  for (let t = 0, a = 0; t < nt; t++) {
    if (drop[t]) continue;
    triangles[3 * a] = mesh.triangles[3 * t]; triangles[3 * a + 1] = mesh.triangles[3 * t + 1]; triangles[3 * a + 2] = mesh.triangles[3 * t + 2];
    if (faces) faces[a] = mesh.faces![t];
    conductor[a++] = mesh.conductor[t];
  }
  return faces ? { ...mesh, triangles, conductor, faces } : { ...mesh, triangles, conductor };
}

/**
 * Components open only along symmetry planes are closed bodies in the full model: orient each
 * outward by its signed volume taken about a point on those planes (the missing cut faces lie
 * in planes through that point, so they add nothing to the volume), and report which
 * conductors are closed that way.
 */
export function closeBySymmetry(spec: KernelSpec, mesh: SurfaceMesh, table: ReturnType<typeof buildEdgeTable>,
  componentOf: Uint32Array, components: number): { mesh: SurfaceMesh; conductorClosed: boolean[]; flipped: number } {
  const p = mesh.positions, tr = mesh.triangles, nt = mesh.conductor.length;
  let extent = 0;
  for (let i = 0; i < p.length; i++) extent = Math.max(extent, Math.abs(p[i]));
  const tol = 1e-9 * Math.max(extent, 1e-30);
  const open = new Uint8Array(components), strayEdge = new Uint8Array(components);
  for (let e = 0; e < table.edgeCount; e++) {
    if (table.edgeUses[e] !== 1) continue;
    const comp = componentOf[(table.edgeHalf[2 * e] / 3) | 0];
    open[comp] = 1;
    if (!edgeInSymmetryPlane(spec, p, table.edgeVertices[2 * e], table.edgeVertices[2 * e + 1], tol)) strayEdge[comp] = 1;
  }
  const { offsets } = kernelPlanes(spec);
  const sym = new Uint8Array(3);
  for (const s of spec.symmetry ?? []) if ((s.images ?? "even") === "even") sym[axisIndex(s.axis)] = 1;
  // Reference point per component: its vertex mean, moved onto every symmetry plane.
  const ref = new Float64Array(4 * components);
  for (let t = 0; t < nt; t++) {
    const c = componentOf[t];
    for (let k3 = 0; k3 < 3; k3++) for (let a = 0; a < 3; a++) ref[4 * c + a] += p[3 * tr[3 * t + k3] + a];
    ref[4 * c + 3] += 3;
  }
  for (let c = 0; c < components; c++) for (let a = 0; a < 3; a++) ref[4 * c + a] = sym[a] ? offsets[a] : ref[4 * c + a] / Math.max(1, ref[4 * c + 3]);
  const volume = new Float64Array(components);
  for (let t = 0; t < nt; t++) {
    const c = componentOf[t];
    if (!open[c] || strayEdge[c]) continue;
    const ox = ref[4 * c], oy = ref[4 * c + 1], oz = ref[4 * c + 2];
    const a = 3 * tr[3 * t], b = 3 * tr[3 * t + 1], d = 3 * tr[3 * t + 2];
    const ax = p[a] - ox, ay = p[a + 1] - oy, az = p[a + 2] - oz;
    const bx = p[b] - ox, by = p[b + 1] - oy, bz = p[b + 2] - oz;
    const cx = p[d] - ox, cy = p[d + 1] - oy, cz = p[d + 2] - oz;
    volume[c] += ax * (by * cz - bz * cy) + ay * (bz * cx - bx * cz) + az * (bx * cy - by * cx);
  }
  let flipped = 0;
  const flip = new Uint8Array(components);
  for (let c = 0; c < components; c++) if (open[c] && !strayEdge[c] && volume[c] < 0) { flip[c] = 1; flipped++; }
  let triangles = tr;
  if (flipped > 0) {
    triangles = tr.slice();
    for (let t = 0; t < nt; t++) if (flip[componentOf[t]]) { const x = triangles[3 * t + 1]; triangles[3 * t + 1] = triangles[3 * t + 2]; triangles[3 * t + 2] = x; }
  }
  const k = mesh.names.length;
  const conductorClosed = new Array<boolean>(k).fill(true);
  for (let t = 0; t < nt; t++) if (strayEdge[componentOf[t]]) conductorClosed[mesh.conductor[t]] = false;
  return { mesh: flipped > 0 ? { ...mesh, triangles } : mesh, conductorClosed, flipped };
}

/**
 * Dielectric bodies with symmetry planes. The bodies are meshed on the conductors' side (cut
 * faces in the planes, if any, are dropped: they are no interface); `body` welds a body and its
 * mirror copies into the closed surface of the full model, `surface` does the same for the
 * conductors, so the media of the full model are found by containment as without planes, and
 * `restrict` keeps of the full model the meshed part's panels: the conductors' own (the first
 * ones) and the interface panels on the conductors' side. Their mirror images come from the
 * image kernel as for the conductors (even or odd: the polarisation charge mirrors with the
 * free charge).
 */
export function unfolding(spec: KernelSpec, sides: Int8Array) {
  const { offsets } = kernelPlanes(spec);
  const axes = (spec.symmetry ?? []).map((p) => axisIndex(p.axis));
  const copies = 1 << axes.length;
  const maskOf = (c: number) => { let m = 0; for (let b = 0; b < axes.length; b++) if ((c >> b) & 1) m |= 1 << axes[b]; return m; };
  const tolOf = (p: Float64Array) => { let e = 0; for (let i = 0; i < p.length; i++) e = Math.max(e, Math.abs(p[i])); return 1e-9 * Math.max(e, 1e-30); };
  const weld = (mesh: SurfaceMesh, keepTriangle: (t: number) => boolean): SurfaceMesh => {
    const p = mesh.positions, nv = p.length / 3, tol = tolOf(p);
    const onBits = new Uint8Array(nv);
    for (let v = 0; v < nv; v++) for (let b = 0; b < axes.length; b++) if (Math.abs(p[3 * v + axes[b]] - offsets[axes[b]]) <= tol) onBits[v] |= 1 << b;
    const positions = new Float64Array(3 * nv * copies);
    const tri: number[] = [], cond: number[] = [];
    for (let c = 0; c < copies; c++) {
      positions.set(reflectSurface(p, new Uint32Array(0), maskOf(c), offsets).positions, 3 * nv * c);
      const odd = popcount(c) & 1;
      for (let t = 0; t < mesh.conductor.length; t++) {
        if (!keepTriangle(t)) continue;
        const idx = [0, 1, 2].map((m) => { const v = mesh.triangles[3 * t + m]; return v + nv * (c & ~onBits[v]); });
        if (odd) tri.push(idx[0], idx[2], idx[1]); else tri.push(idx[0], idx[1], idx[2]);
        cond.push(mesh.conductor[t]);
      }
    }
    return { positions, triangles: Uint32Array.from(tri), conductor: Uint32Array.from(cond), names: mesh.names.slice() };
  };
  return {
    body(mesh: SurfaceMesh, name: string): SurfaceMesh {
      const p = mesh.positions, tol = tolOf(p);
      for (const a of axes) {
        let across = false, along = false;
        for (let t = 0; t < mesh.triangles.length; t++) {
          const d = (p[3 * mesh.triangles[t] + a] - offsets[a]) * sides[a];
          if (d < -tol) across = true; else if (d > tol) along = true;
        }
        if (across) {
          throw new InputError(`dielectric ${name} reaches across the symmetry plane ${AXES[a]} = ${offsets[a]} m${along ? "" : " (it lies on the other side)"}: `
            + "with symmetry planes, mesh the part of each body on the conductors' side only");
        }
      }
      // Cut faces in a plane are dropped (an even or an odd plane alike: no interface there).
      const inPlane = trianglesInSymmetryPlanes({ symmetry: (spec.symmetry ?? []).map((s) => ({ ...s, images: "even" as const })) }, p, mesh.triangles).flags;
      return weld(mesh, (t) => !inPlane[t]);
    },
    surface(mesh: SurfaceMesh): SurfaceMesh {
      return weld(mesh, () => true);
    },
    restrict(m: DielectricModel, nc: number): DielectricModel {
      const keep: number[] = [];
      const tol = tolOf(m.positions);
      for (let a = 0; a < m.ni; a++) {
        const t = m.nc + a;
        let inside = true;
        for (const ax of axes) {
          let c = 0;
          for (let k3 = 0; k3 < 3; k3++) c += m.positions[3 * m.triangles[3 * t + k3] + ax];
          if ((c / 3 - offsets[ax]) * sides[ax] <= tol) inside = false;
        }
        if (inside) keep.push(a);
      }
      const ni = keep.length, triangles = new Uint32Array(3 * (nc + ni));
      triangles.set(m.triangles.subarray(0, 3 * nc));
      keep.forEach((a, i) => triangles.set(m.triangles.subarray(3 * (m.nc + a), 3 * (m.nc + a) + 3), 3 * (nc + i)));
      const pick = <T extends Float64Array | Uint32Array>(x: T): T => { const out = new (x.constructor as { new(n: number): T })(ni); keep.forEach((a, i) => { out[i] = x[a]; }); return out; };
      const interfaceBody = pick(m.interfaceBody);
      const bodies = m.bodies.map((b, i) => ({ ...b, panels: interfaceBody.filter((x) => x === i).length }));
      return {
        ...m, triangles, nc, ni, interfaceBody, epsMinus: pick(m.epsMinus), epsPlus: pick(m.epsPlus), lambda: pick(m.lambda),
        conductorPlus: m.conductorPlus.slice(0, nc), conductorMinus: m.conductorMinus.slice(0, nc),
        conductorMediumPlus: m.conductorMediumPlus.slice(0, nc), conductorMediumMinus: m.conductorMediumMinus.slice(0, nc),
        openPanel: m.openPanel.slice(0, nc), bodies,
      };
    },
  };
}

/** The dielectric bodies' unfolding for the planes of a kernel (`unfolding`). */
export type BodyUnfolding = ReturnType<typeof unfolding>;

/**
 * The restricted dielectric model of the meshed part unfolded into the copies of the
 * both-planes (copy h reflected in copyMask(h)): conductor panels of copies 0, 1, ... first
 * (conductor j of copy h is net h·k + j, as unfoldedMesh), then interface panels copy by copy;
 * and the total charges of every net, (N·nets)×(k·nets), from the per-pattern N×k solutions by
 * the character sum (characterSum).
 */
function unfoldedDielectric(m: DielectricModel, xs: Float64Array[], k: number, nets: number, copyMask: (h: number) => number,
  offsets: Float64Array): { model: DielectricModel; x: Float64Array } {
  const nc = m.nc, ni = m.ni, N = nc + ni, nv = m.positions.length / 3;
  const positions = new Float64Array(3 * nv * nets), triangles = new Uint32Array(3 * N * nets);
  const rowOf = (h: number, p: number) => (p < nc ? h * nc + p : nets * nc + h * ni + (p - nc));
  for (let h = 0; h < nets; h++) {
    const r = reflectSurface(m.positions, m.triangles, copyMask(h), offsets);
    positions.set(r.positions, 3 * nv * h);
    for (let p = 0; p < N; p++) for (let c = 0; c < 3; c++) triangles[3 * rowOf(h, p) + c] = r.triangles[3 * p + c] + nv * h;
  }
  const x = characterSum(xs, N, k, nets, rowOf);
  const rep = <T extends Float64Array | Uint32Array | Int32Array | Uint8Array>(a: T): T => {
    const out = new (a.constructor as { new(n: number): T })(a.length * nets);
    for (let h = 0; h < nets; h++) out.set(a, a.length * h);
    return out;
  };
  return {
    model: {
      ...m, positions, triangles, nc: nc * nets, ni: ni * nets,
      interfaceBody: rep(m.interfaceBody), epsMinus: rep(m.epsMinus), epsPlus: rep(m.epsPlus), lambda: rep(m.lambda),
      conductorPlus: rep(m.conductorPlus), conductorMinus: rep(m.conductorMinus),
      conductorMediumPlus: rep(m.conductorMediumPlus), conductorMediumMinus: rep(m.conductorMediumMinus), openPanel: rep(m.openPanel),
      bodies: m.bodies.map((b) => ({ ...b, panels: b.panels * nets })),
    },
    x,
  };
}
