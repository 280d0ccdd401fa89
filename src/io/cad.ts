/**
 * STEP (AP203/AP214/AP242), IGES and BREP files: the parts of a CAD model as conductors.
 *
 * The kernel (./cad-kernel.ts) reads the file and triangulates every B-rep face twice: once
 * for the solve (chord and angle deflection chosen from the model's size or the user's panel
 * size, so curved faces are resolved; flat faces come out as the kernel's fans of long
 * triangles, which a remesher of flat patches may redo by `faces`), and once finely for the
 * reference surface (`ReferenceSurface`, src/mesh/model.ts), whose vertices lie on the faces
 * and whose normals are made exact on planes and quadrics (./cad-normals.ts).
 *
 * Parts: every mesh of the kernel's hierarchy is one solid or surface and one group. A node
 * holding one mesh names it (its product name, as written); a node holding several (a
 * sub-assembly flattened by the kernel) names each by the mesh's own name when those differ,
 * else by the node's name (made unique later, `_2`, `_3`, ...). Positions are in millimetres
 * for STEP and IGES (the kernel converts from the file's declared unit, ./cad-units.ts) and in
 * the file's own numbers for BREP, which declares none.
 */
import { InputError } from "../errors.js";
import type { ReferenceSurface } from "../mesh/model.js";
import type { RawMesh } from "./raw.js";
import { runKernel, type CadFormat, type KernelMesh, type KernelMeshParams, type KernelNode, type KernelResult } from "./cad-kernel.js";
import { stepLengthUnits, igesLengthUnit, type DeclaredUnit } from "./cad-units.js";
import { exactFaceNormals, type FaceSurface } from "./cad-normals.js";

export type { CadFormat } from "./cad-kernel.js";

/** Solve mesh by default: chord deflection as a fraction of the model's mean bounding-box side, and the angle. */
export const CAD_DEFLECTION = 0.004;
/** Radians: at most this turn of the normal along one panel edge on a curved face (about 20°). */
export const CAD_ANGLE = 0.35;
/** Reference surface: chord deflection (fraction of the bounding box) and angle (about 2.9°). */
export const REFERENCE_DEFLECTION = 1e-3;
export const REFERENCE_ANGLE = 0.05;

export interface CadRawMesh extends RawMesh {
  /** CAD face of each triangle (numbered over the whole file, as in `reference`). */
  faces: Uint32Array;
  /** The fine triangulation of every face, in the same units as `positions`. */
  reference: ReferenceSurface;
  /** Units the file declares (STEP: one per representation context found; IGES: one; BREP: none). */
  declared: DeclaredUnit[];
  /** Metres per unit of `positions`: 1e-3 for STEP and IGES, undefined for BREP (the user's unit). */
  metresPerUnit?: number;
  /** Faces whose reference normals are averaged, not exact (neither planes nor quadrics: tori, B-splines). */
  approximateFaces: number;
  /** Each face's fitted surface (same units as `positions`), undefined where none fits. */
  surfaces: Array<FaceSurface | undefined>;
  /** Path of each group in the model's hierarchy (`as1/l-bracket-assembly/nut`), for messages. */
  groupPaths: string[];
}

export interface CadReadOptions {
  /** Target panel size in the units of the output (millimetres for STEP and IGES, the file's for BREP). */
  panelSize?: number;
  /** Reference triangulation: chord deflection (fraction of the bounding box) and angle, radians. */
  reference?: { deflection: number; angle: number };
}

const LABEL: Record<CadFormat, string> = { step: "STEP", iges: "IGES", brep: "BREP" };

/** The last few reads, by content and options: a scene naming parts of one file in several entries reads it once. */
const recent = new Map<string, CadRawMesh>();
const RECENT = 4;

/**
 * Read a CAD file: its parts as groups with CAD faces and a reference surface. Faults are
 * InputErrors naming the file. The result may be shared with later reads of the same bytes:
 * callers treat it as read-only.
 */
export function readCad(bytes: Uint8Array, file: string, format: CadFormat, opts: CadReadOptions = {}): CadRawMesh {
  const key = `${format}|${bytes.length}|${contentHash(bytes)}|${opts.panelSize}|${opts.reference?.deflection}|${opts.reference?.angle}`;
  const hit = recent.get(key);
  if (hit) return hit;
  const read = readCadUncached(bytes, file, format, opts);
  recent.set(key, read);
  if (recent.size > RECENT) recent.delete(recent.keys().next().value as string);
  return read;
}

/** 32-bit FNV-1a over the bytes (a cache key beside the length; not a security measure). */
function contentHash(b: Uint8Array): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < b.length; i++) h = Math.imul(h ^ b[i], 0x01000193);
  return h >>> 0;
}

function readCadUncached(bytes: Uint8Array, file: string, format: CadFormat, opts: CadReadOptions): CadRawMesh {
  const fine = kernelRead(bytes, file, format, {
    linearUnit: "millimeter", linearDeflectionType: "bounding_box_ratio",
    linearDeflection: opts.reference?.deflection ?? REFERENCE_DEFLECTION, angularDeflection: opts.reference?.angle ?? REFERENCE_ANGLE,
  });
  const solveParams: KernelMeshParams = opts.panelSize !== undefined && opts.panelSize > 0
    // A chord of length h on a radius R has sagitta h²/(8R): with R half the model's diagonal
    // (the flattest curve that matters), curved faces get panels of at most about h, tighter
    // curves finer by the angle bound. Flat faces keep the kernel's fans (remeshed elsewhere).
    ? { linearUnit: "millimeter", linearDeflectionType: "absolute_value", linearDeflection: opts.panelSize ** 2 / (4 * diagonalOf(fine.meshes as KernelMesh[])), angularDeflection: CAD_ANGLE }
    : { linearUnit: "millimeter", linearDeflectionType: "bounding_box_ratio", linearDeflection: CAD_DEFLECTION, angularDeflection: CAD_ANGLE };
  const solve = kernelRead(bytes, file, format, solveParams);
  const meshes = solve.meshes as KernelMesh[];
  const parts = partsOf(solve.root as KernelNode, meshes, file);
  const fineMeshes = fine.meshes as KernelMesh[];
  if (fineMeshes.length !== meshes.length || fineMeshes.some((m, i) => m.brep_faces.length !== meshes[i].brep_faces.length)) {
    throw new Error(`${file}: the kernel gave different faces for the solve and reference triangulations`);
  }

  // The solve mesh: one group per part (kernel mesh), faces numbered across the file.
  const faceBase = new Uint32Array(meshes.length + 1);
  meshes.forEach((m, i) => { faceBase[i + 1] = faceBase[i] + m.brep_faces.length; });
  let nv = 0, nt = 0;
  for (const p of parts) { nv += meshes[p.mesh].attributes.position.array.length / 3; nt += meshes[p.mesh].index.array.length / 3; }
  const positions = new Float64Array(3 * nv), triangles = new Uint32Array(3 * nt), group = new Uint32Array(nt), faces = new Uint32Array(nt);
  let vo = 0, to = 0;
  parts.forEach((p, g) => {
    const m = meshes[p.mesh];
    const pos = m.attributes.position.array, idx = m.index.array;
    const mt = idx.length / 3;
    if (mt === 0) throw new InputError(`part "${p.path}" has no solid or surface (no triangles)`, file);
    for (let i = 0; i < pos.length; i++) positions[3 * vo + i] = pos[i];
    for (let i = 0; i < idx.length; i++) triangles[3 * to + i] = idx[i] + vo;
    group.fill(g, to, to + mt);
    fillFaces(faces, to, mt, m, faceBase[p.mesh], file, p.path);
    vo += pos.length / 3;
    to += mt;
  });

  const text = format === "brep" ? "" : new TextDecoder("latin1").decode(bytes);
  const reference = referenceOf(fineMeshes, faceBase, file);
  const { approximate: approximateFaces, surfaces } = exactFaceNormals(reference.positions, reference.normals, reference.triangles, reference.face, reference.faceCount);
  const declared = format === "step" ? stepLengthUnits(text) : format === "iges" ? [igesLengthUnit(text)].filter((u): u is DeclaredUnit => u !== undefined) : [];
  return {
    positions, triangles, group, faces,
    groupNames: parts.map((p) => p.name),
    // Product names are the user's own: a one-part file keeps its part's name.
    groupNamed: parts.map((p) => p.name !== ""),
    groupPaths: parts.map((p) => p.path),
    warnings: approximateFaces > 0
      ? [`${approximateFaces} of ${reference.faceCount} CAD faces are neither planes nor quadrics (tori, B-splines): refinement follows their fine tessellation with averaged normals, not the exact surface`]
      : [],
    reference, approximateFaces, surfaces,
    declared,
    metresPerUnit: format === "brep" ? undefined : 1e-3,
  };
}

function kernelRead(bytes: Uint8Array, file: string, format: CadFormat, params: KernelMeshParams): KernelResult {
  const { result, messages } = runKernel(format, bytes, params);
  if (!result.success || !result.root || !result.meshes) {
    // occt's parser says "Line 278: Incorrect syntax: unexpected end of file, ..."
    const said = messages.map((s) => /Line\s+(\d+)\s*:\s*(.*?)\s*\**\s*$/.exec(s)).find((m) => m !== null);
    const place = said ? `line ${said[1]}` : undefined;
    const why = said ? said[2].replace(/^Incorrect syntax:\s*/i, "") : "the CAD kernel found no shape in it";
    throw new InputError(`not a readable ${LABEL[format]} file (${why}; a truncated or damaged file?)`, file, place);
  }
  if (result.meshes.length === 0) {
    throw new InputError(`no part with a solid or surface in the ${LABEL[format]} file (an empty assembly, or parts kept in other files)`, file);
  }
  return result;
}

interface Part { mesh: number; name: string; path: string }

/** Bounding-box diagonal of all the kernel's vertices. */
function diagonalOf(meshes: KernelMesh[]): number {
  let lx = Infinity, ly = Infinity, lz = Infinity, hx = -Infinity, hy = -Infinity, hz = -Infinity;
  for (const m of meshes) {
    const p = m.attributes.position.array;
    for (let i = 0; i < p.length; i += 3) {
      lx = Math.min(lx, p[i]); hx = Math.max(hx, p[i]); ly = Math.min(ly, p[i + 1]); hy = Math.max(hy, p[i + 1]); lz = Math.min(lz, p[i + 2]); hz = Math.max(hz, p[i + 2]);
    }
  }
  return Math.hypot(hx - lx, hy - ly, hz - lz);
}

/** Every kernel mesh as a part, in tree order, with its name; a leaf node without geometry is a fault. */
function partsOf(root: KernelNode, meshes: KernelMesh[], file: string): Part[] {
  const out: Part[] = [];
  const walk = (node: KernelNode, path: string): void => {
    const here = node.name.trim();
    const at = here === "" ? path : path === "" ? here : `${path}/${here}`;
    if (node.meshes.length === 0 && node.children.length === 0 && node !== root) {
      throw new InputError(`part "${at || "(unnamed)"}" has no solid or surface`, file);
    }
    const own = node.meshes.map((i) => meshes[i].name.trim());
    const distinct = own.length > 1 && own.every((n) => n !== "") && new Set(own).size > 1;
    for (const i of node.meshes) {
      const meshName = meshes[i].name.trim();
      const name = node.meshes.length === 1 ? here || meshName : distinct ? meshName : here || meshName;
      out.push({ mesh: i, name, path: name !== here && here !== "" ? `${at}/${name}` : at || name || `solid ${i + 1}` });
    }
    for (const c of node.children) walk(c, at);
  };
  walk(root, "");
  return out;
}

/** `faces[to .. to+mt)` from the mesh's face ranges; every triangle must lie in one. */
function fillFaces(faces: Uint32Array, to: number, mt: number, m: KernelMesh, base: number, file: string, path: string): void {
  const seen = new Uint8Array(mt);
  m.brep_faces.forEach((f, k) => {
    for (let t = f.first; t <= f.last && t < mt; t++) { faces[to + t] = base + k; seen[t] = 1; }
  });
  if (seen.some((s) => s === 0)) throw new InputError(`part "${path}": the kernel left triangles outside every face`, file);
}

/** The fine triangulation as a reference surface: the kernel's per-face vertices with their unit normals. */
function referenceOf(meshes: KernelMesh[], faceBase: Uint32Array, file: string): ReferenceSurface {
  let nv = 0, nt = 0;
  for (const m of meshes) { nv += m.attributes.position.array.length / 3; nt += m.index.array.length / 3; }
  const positions = new Float64Array(3 * nv), normals = new Float64Array(3 * nv), triangles = new Uint32Array(3 * nt), face = new Uint32Array(nt);
  let vo = 0, to = 0;
  meshes.forEach((m, i) => {
    const pos = m.attributes.position.array, idx = m.index.array, nrm = m.attributes.normal?.array;
    if (!nrm || nrm.length !== pos.length) throw new Error(`${file}: the kernel gave no normals for the reference surface`);
    for (let k = 0; k < pos.length; k += 3) {
      positions[3 * vo + k] = pos[k]; positions[3 * vo + k + 1] = pos[k + 1]; positions[3 * vo + k + 2] = pos[k + 2];
      const len = Math.hypot(nrm[k], nrm[k + 1], nrm[k + 2]) || 1;
      normals[3 * vo + k] = nrm[k] / len; normals[3 * vo + k + 1] = nrm[k + 1] / len; normals[3 * vo + k + 2] = nrm[k + 2] / len;
    }
    for (let k = 0; k < idx.length; k++) triangles[3 * to + k] = idx[k] + vo;
    fillFaces(face, to, idx.length / 3, m, faceBase[i], file, m.name || `solid ${i + 1}`);
    vo += pos.length / 3;
    to += idx.length / 3;
  });
  return { positions, normals, triangles, face, faceCount: faceBase[meshes.length] };
}
