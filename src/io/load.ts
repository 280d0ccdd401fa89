/**
 * The loading pipeline: bytes → reader (file units) → groups chosen and named → weld →
 * metres → degenerate triangles dropped → conductors (optionally split into connected
 * components or merged into one).
 *
 * Naming: a file holding one body gives one conductor named after the file stem (or
 * `name`), unless the reader marks its one name as chosen by the user (`RawMesh.groupNamed`:
 * a Gmsh `$PhysicalNames` name; STL `solid` and OBJ `o`/`g` names are not kept, as exporters
 * fill them with generic text); `name` still wins over it. Named solids, objects, groups or physical surfaces give conductors by those
 * names, unnamed ones `stem_1`, `stem_2`, ... With `split`, a group falling apart into k > 1
 * connected pieces gives `group_1` … `group_k` (`stem_1` … for a one-body file).
 */
import { basename, extname } from "node:path";
import { type SurfaceMesh, concatMeshes, uniqueNames } from "../mesh/model.js";
import { weldVertices, dropDegenerate, DEFAULT_WELD_TOLERANCE } from "../mesh/weld.js";
import { connectedComponents } from "../mesh/components.js";
import { conductorTopology } from "../mesh/topology.js";
import { physicalSizeFault } from "../mesh/physical-size.js";
import { InputError, type Warning } from "../errors.js";
import { metresPer, METRES_PER_UNIT, UNIT_CHOICES, type LengthUnit } from "./units.js";
import { detectFormat, isCadFormat } from "./format.js";
import { readCad, type CadRawMesh } from "./cad.js";
import { describeUnits } from "./cad-units.js";
import { scaleReference, restrictReference } from "../mesh/model.js";
import { readStl } from "./stl.js";
import { readObj } from "./obj.js";
import { readMsh } from "./msh.js";
import type { RawMesh } from "./raw.js";
import { readInputBytes } from "./input-file.js";

export interface LoadOptions {
  /** Unit of the file's coordinates. */
  unit: LengthUnit;
  /** Each connected component becomes a conductor. */
  split?: boolean;
  /** All of the file's groups become one conductor named after the stem (or `name`). */
  merge?: boolean;
  /** Keep only these groups (by conductor name as loading would give it). */
  groups?: string[];
  /** Weld tolerance relative to the bounding-box diagonal; default 1e-6. */
  weldTolerance?: number;
  /** Name for a single-body file's conductor; also replaces the stem in generated names. */
  name?: string;
  /** CAD files: target panel size on curved faces, metres (default: from the model's size). */
  panelSize?: number;
}

export interface LoadedMesh {
  /** Metres. */
  mesh: SurfaceMesh;
  warnings: Warning[];
  files: string[];
  unit: LengthUnit;
  /** Degenerate triangles dropped. */
  dropped: number;
  /** Vertices removed by welding. */
  welded: number;
  /**
   * When every file read is a STEP or IGES file declaring one of our units, and all the same
   * one: that unit (the geometry is already in metres; this only offers it for reports).
   */
  declaredUnit?: LengthUnit;
}

/** Read and prepare one mesh file. Every failure is an InputError naming the file. */
export function loadMeshFile(path: string, opts: LoadOptions): LoadedMesh {
  return parseMeshBytes(readMeshBytes(path), path, opts);
}

/** Several files as one mesh; conductor names are made unique across files (`_2`, `_3`, ...). */
export function loadMeshFiles(paths: string[], opts: LoadOptions): LoadedMesh {
  if (paths.length === 0) throw new InputError("no mesh file given");
  const parts = paths.map((p) => loadMeshFile(p, opts));
  const taken = new Set<string>();
  const meshes = parts.map((r) => ({ ...r.mesh, names: uniqueNames(r.mesh.names, taken) }));
  return {
    mesh: concatMeshes(meshes),
    warnings: parts.flatMap((r) => r.warnings),
    files: parts.flatMap((r) => r.files),
    unit: opts.unit,
    dropped: parts.reduce((s, r) => s + r.dropped, 0),
    welded: parts.reduce((s, r) => s + r.welded, 0),
    declaredUnit: parts.every((r) => r.declaredUnit !== undefined && r.declaredUnit === parts[0].declaredUnit) ? parts[0].declaredUnit : undefined,
  };
}

function readMeshBytes(path: string): Uint8Array {
  return readInputBytes(path, "mesh");
}

/** The same pipeline on bytes already in memory; `file` names them in messages and gives the stem. */
export function parseMeshBytes(bytes: Uint8Array, file: string, opts: LoadOptions): LoadedMesh {
  if (opts.split && opts.merge) throw new InputError("split and merge cannot both be set for one file", file);
  if (!(metresPer(opts.unit) > 0)) throw new InputError(`unknown length unit "${String(opts.unit)}" (use ${UNIT_CHOICES})`, file);
  if (opts.groups !== undefined && opts.groups.length === 0) throw new InputError("the list of groups to keep is empty", file);
  if (bytes.length === 0) throw new InputError("empty file", file);
  const format = detectFormat(file, bytes);
  let raw: RawMesh;
  let cad: CadRawMesh | undefined;
  let scale = metresPer(opts.unit);
  if (isCadFormat(format)) {
    if (opts.panelSize !== undefined && !(opts.panelSize > 0 && Number.isFinite(opts.panelSize))) throw new InputError(`panel size ${opts.panelSize} must be a positive length`, file);
    // STEP and IGES come out of the kernel in millimetres whatever they declare; BREP in its own numbers.
    const outMetres = format === "brep" ? scale : 1e-3;
    raw = cad = readCad(bytes, file, format, { panelSize: opts.panelSize !== undefined ? opts.panelSize / outMetres : undefined });
    scale = outMetres;
  } else {
    raw = format === "stl" ? readStl(bytes, file) : format === "obj" ? readObj(bytes, file) : readMsh(bytes, file);
  }
  const warnings: Warning[] = raw.warnings.map((message) => ({ file, message }));
  if (cad) warnings.push({ file, message: cadUnitNote(format, cad, opts.unit) });
  const stem = basename(file, extname(file)) || "conductor";
  const base = opts.name !== undefined && opts.name.trim() !== "" ? opts.name.trim() : stem;

  // Groups that hold triangles, in order of first appearance, with the names loading gives them.
  const ng = raw.groupNames.length;
  const nt = raw.triangles.length / 3;
  const perGroup = new Uint32Array(ng);
  for (let t = 0; t < nt; t++) perGroup[raw.group[t]]++;
  const present: number[] = [];
  for (let g = 0; g < ng; g++) if (perGroup[g] > 0) present.push(g);
  if (present.length === 0) {
    throw new InputError(`no triangles in the file${raw.warnings.length ? ` (${raw.warnings[raw.warnings.length - 1]})` : ""}`, file);
  }
  let unnamed = 0;
  const single = present.length === 1 ? present[0] : -1;
  const keep = single >= 0 && (opts.name === undefined || opts.name.trim() === "") && raw.groupNamed?.[single] === true;
  const shown = single >= 0
    ? [keep ? raw.groupNames[single].trim() : base]
    : uniqueNames(present.map((g) => raw.groupNames[g].trim() !== "" ? raw.groupNames[g].trim() : `${base}_${++unnamed}`));

  // Conductor of each raw group (-1: not kept), before splitting.
  const conductorOf = new Int32Array(ng).fill(-1);
  let names: string[];
  if (opts.groups !== undefined) {
    const wanted = new Set(opts.groups);
    // A one-body file named by the file still answers to its stem, as before the name was kept.
    if (keep && wanted.delete(base)) wanted.add(shown[0]);
    for (const w of wanted) {
      if (!shown.includes(w)) throw new InputError(`no group "${w}" in the file; it has: ${shown.map((s) => `"${s}"`).join(", ")}`, file);
    }
    names = [];
    present.forEach((g, k) => { if (wanted.has(shown[k])) { conductorOf[g] = names.length; names.push(shown[k]); } });
  } else {
    names = shown.slice();
    present.forEach((g, k) => { conductorOf[g] = k; });
  }
  if (opts.merge) {
    for (let g = 0; g < ng; g++) if (conductorOf[g] >= 0) conductorOf[g] = 0;
    names = [base];
  }

  // Keep the chosen triangles.
  let kept = 0;
  for (let t = 0; t < nt; t++) if (conductorOf[raw.group[t]] >= 0) kept++;
  const tri = kept === nt ? raw.triangles : new Uint32Array(3 * kept);
  const cond = new Uint32Array(kept);
  const keptFaces = cad ? new Uint32Array(kept) : undefined;
  for (let t = 0, k = 0; t < nt; t++) {
    const c = conductorOf[raw.group[t]];
    if (c < 0) continue;
    if (tri !== raw.triangles) { tri[3 * k] = raw.triangles[3 * t]; tri[3 * k + 1] = raw.triangles[3 * t + 1]; tri[3 * k + 2] = raw.triangles[3 * t + 2]; }
    if (keptFaces && cad) keptFaces[k] = cad.faces[t];
    cond[k++] = c;
  }
  // Before welding: its tolerance is relative to the model's size, which must be a physical one.
  const vertexPlace = (v: number) => format === "stl" ? `facet ${Math.floor(v / 3) + 1}` : format === "obj" ? `vertex ${v + 1}` : cad ? `vertex ${v + 1} of the kernel's triangulation` : `node ${v + 1} (in file order)`;
  const sizeFault = physicalSizeFault(raw.positions, tri, scale, vertexPlace, opts.unit);
  if (sizeFault) throw new InputError(sizeFault, file);
  const tol = opts.weldTolerance ?? DEFAULT_WELD_TOLERANCE;
  if (!(tol >= 0) || !Number.isFinite(tol)) throw new InputError(`weld tolerance ${tol} must be a finite number >= 0`, file);
  // The tolerance is relative, so welding in file units is the same weld; scaling afterwards
  // touches the welded vertices only (a sixth of an STL soup).
  const welded = weldVertices(raw.positions, tri, tol);
  const wp = welded.positions;
  for (let i = 0; i < wp.length; i++) wp[i] *= scale;
  // Degenerate triangles go with their conductor and CAD face: drop by triangle number.
  const clean = dropDegenerate(welded.positions, welded.triangles, keptFaces ? Uint32Array.from(cond, (_, t) => t) : cond);
  let cleanFaces: Uint32Array | undefined;
  const vertices = welded.positions;
  if (keptFaces && cad) {
    cleanFaces = Uint32Array.from(clean.group, (t) => keptFaces[t]);
    for (let k = 0; k < clean.group.length; k++) clean.group[k] = cond[clean.group[k]];
  }
  // The kernel's own slivers (a sphere's poles, a cone's apex) are no fault of the file's.
  if (clean.dropped > 0 && !cad) {
    warnings.push({ file, message: `${clean.dropped} degenerate triangle(s) dropped (repeated vertex or zero area after welding)` });
  }
  const left = new Uint32Array(names.length);
  for (let t = 0; t < clean.group.length; t++) left[clean.group[t]]++;
  for (let c = 0; c < names.length; c++) {
    if (left[c] === 0) throw new InputError(`conductor "${names[c]}" has no valid triangle left: all of its triangles are degenerate (zero area)`, file);
  }

  let conductor = clean.group;
  if (opts.split) {
    const comp = connectedComponents(clean.triangles, vertices.length / 3);
    // Number the pieces of each conductor in order of appearance.
    // Groups sharing vertices stay apart: a piece is a (component, conductor) pair.
    const pieceOf = new Map<number, number>();
    const pieces: Array<{ c: number; k: number }> = [];
    const countIn = new Uint32Array(names.length);
    conductor = new Uint32Array(clean.group.length);
    for (let t = 0; t < conductor.length; t++) {
      const c = clean.group[t];
      const key = comp.component[t] * names.length + c;
      let piece = pieceOf.get(key);
      if (piece === undefined) { piece = pieces.length; pieceOf.set(key, piece); pieces.push({ c, k: ++countIn[c] }); }
      conductor[t] = piece;
    }
    names = uniqueNames(pieces.map(({ c, k }) => (countIn[c] > 1 ? `${names[c]}_${k}` : names[c])));
  }
  const compact = dropUnreferenced(vertices, clean.triangles);
  let mesh: SurfaceMesh = { positions: compact, triangles: clean.triangles, conductor, names };
  if (cad && cleanFaces) {
    const r = restrictReference(scaleReference(cad.reference, scale), cleanFaces);
    mesh = { ...mesh, faces: r.faces, reference: r.reference };
    // A CAD solid arrives closed; an open one is a surface model or lost faces on export.
    conductorTopology(mesh).forEach((topo, c) => {
      if (!topo.closed) {
        warnings.push({ file, message: `part "${names[c]}" is not a closed body (${topo.boundaryEdges} open and ${topo.nonManifoldEdges} non-manifold edges): solved as a sheet; as a dielectric body it is refused` });
      }
    });
  }
  const declaredUnit = cad && cad.declared.length === 1 ? knownUnit(cad.declared[0].metres) : undefined;
  return { mesh, warnings, files: [file], unit: opts.unit, dropped: clean.dropped, welded: welded.merged, ...(declaredUnit ? { declaredUnit } : {}) };
}

/** Our unit of exactly this many metres, if any. */
function knownUnit(metres: number): LengthUnit | undefined {
  return (Object.keys(METRES_PER_UNIT) as LengthUnit[]).find((u) => Math.abs(METRES_PER_UNIT[u] / metres - 1) < 1e-12);
}

/**
 * What the summary says about a CAD file's unit. The file's declared unit wins over `--unit`
 * and the scene's (the kernel converts STEP and IGES itself); BREP declares none and is read
 * in `unit`.
 */
function cadUnitNote(format: string, cad: CadRawMesh, unit: LengthUnit): string {
  if (format === "brep") return `BREP declares no length unit: read in ${unit} (the scene's or --unit)`;
  if (cad.declared.length === 0) return `${format.toUpperCase()} file declares no length unit we could read: read in millimetres, the kernel's assumption`;
  return `length unit ${describeUnits(cad.declared)} declared by the file and used (--unit and the scene's unit do not rescale a ${format.toUpperCase()} file)`;
}

/** Positions of the referenced vertices only; `triangles` is renumbered in place. */
function dropUnreferenced(positions: Float64Array, triangles: Uint32Array): Float64Array {
  const nv = positions.length / 3;
  const remap = new Int32Array(nv).fill(-1);
  let n = 0;
  for (let k = 0; k < triangles.length; k++) { const v = triangles[k]; if (remap[v] < 0) remap[v] = n++; }
  if (n === nv) {
    let identity = true;
    for (let v = 0; v < nv && identity; v++) identity = remap[v] === v;
    if (identity) return positions;
  }
  const out = new Float64Array(3 * n);
  for (let v = 0; v < nv; v++) {
    const r = remap[v];
    if (r >= 0) { out[3 * r] = positions[3 * v]; out[3 * r + 1] = positions[3 * v + 1]; out[3 * r + 2] = positions[3 * v + 2]; }
  }
  for (let k = 0; k < triangles.length; k++) triangles[k] = remap[triangles[k]];
  return out;
}
