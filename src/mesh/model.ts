/**
 * The mesh model: conductor surfaces as flat triangles, stored struct-of-arrays.
 *
 * Every coordinate is in metres once a mesh has passed through the loader
 * (readers return file units; `src/io/load.ts` scales them). No per-triangle
 * objects exist anywhere: a 1M-triangle mesh is 3 typed arrays. Per-triangle measures are
 * those of src/geometry, indexed here by triangle number.
 */
import { triangleArea as cornerArea, triangleAreaVector as cornerAreaVector } from "../geometry/triangle.js";

export interface SurfaceMesh {
  /** Vertex coordinates, 3 per vertex (x, y, z), metres. */
  positions: Float64Array;
  /** Vertex indices, 3 per triangle, counter-clockwise seen from outside for closed bodies. */
  triangles: Uint32Array;
  /** Conductor index of each triangle, into `names`. */
  conductor: Uint32Array;
  /** Conductor names, unique. */
  names: string[];
  /**
   * The true surface each triangle lies on, when the input knows it (a CAD face, a generated
   * shape's face): `faces[t]` is triangle t's face number in `reference`, or `NO_FACE` for a
   * triangle of a mesh joined from inputs with and without a reference (`concatMeshes`).
   * Operations that keep triangles keep these; refinement places its new points on the
   * reference surface.
   */
  faces?: Uint32Array;
  /** The true surface the triangles approximate (see `ReferenceSurface`); present with `faces`. */
  reference?: ReferenceSurface;
}

/**
 * A true surface given as data, so it moves with placements and joins with other meshes:
 * a fine triangulation of every face with the exact unit normal at each of its vertices (a CAD
 * kernel's evaluation, or a generated shape's formula). A point projected onto a reference
 * triangle and then lifted by the normals (Curved PN Triangles) lies on the true face to
 * O(h^4) in the reference's edge length h. Faces are numbered from 0 within one reference;
 * two reference triangles of different faces that share an edge run along the curve where
 * those faces meet (a CAD edge), which is where new points of mesh edges between them go.
 */
export interface ReferenceSurface {
  /** Vertex coordinates of the fine triangulation, metres, 3 per vertex. */
  positions: Float64Array;
  /** Exact outward unit normal at each vertex of its face, 3 per vertex (a vertex on an edge between faces appears once per face). */
  normals: Float64Array;
  /** Vertex indices, 3 per reference triangle. */
  triangles: Uint32Array;
  /** Face number of each reference triangle. */
  face: Uint32Array;
  /** Number of faces (one more than the largest face number). */
  faceCount: number;
}

export function vertexCount(mesh: SurfaceMesh): number {
  return mesh.positions.length / 3;
}

export function triangleCount(mesh: SurfaceMesh): number {
  return mesh.triangles.length / 3;
}

export function conductorCount(mesh: SurfaceMesh): number {
  return mesh.names.length;
}

/** Axis-aligned bounds as [minx, miny, minz, maxx, maxy, maxz]; metres. Empty meshes give NaNs. */
export function boundingBox(positions: Float64Array): Float64Array {
  const b = new Float64Array([Infinity, Infinity, Infinity, -Infinity, -Infinity, -Infinity]);
  for (let i = 0; i < positions.length; i += 3) {
    const x = positions[i], y = positions[i + 1], z = positions[i + 2];
    if (x < b[0]) b[0] = x;
    if (y < b[1]) b[1] = y;
    if (z < b[2]) b[2] = z;
    if (x > b[3]) b[3] = x;
    if (y > b[4]) b[4] = y;
    if (z > b[5]) b[5] = z;
  }
  if (positions.length === 0) b.fill(NaN);
  return b;
}

/** Length of the bounding-box diagonal; metres. */
export function boundingDiagonal(positions: Float64Array): number {
  const b = boundingBox(positions);
  return Math.hypot(b[3] - b[0], b[4] - b[1], b[5] - b[2]);
}

/** Twice the area vector of triangle t (cross product of two edges), written into out[o..o+2]. */
export function triangleAreaVector(mesh: SurfaceMesh, t: number, out: Float64Array, o = 0): void {
  const tr = mesh.triangles;
  cornerAreaVector(out, o, mesh.positions, 3 * tr[3 * t], 3 * tr[3 * t + 1], 3 * tr[3 * t + 2]);
}

/** Area of triangle t; square metres. */
export function triangleArea(mesh: SurfaceMesh, t: number): number {
  const tr = mesh.triangles;
  return cornerArea(mesh.positions, 3 * tr[3 * t], 3 * tr[3 * t + 1], 3 * tr[3 * t + 2]);
}

/** Total area of each conductor; square metres. */
export function conductorAreas(mesh: SurfaceMesh): Float64Array {
  const out = new Float64Array(mesh.names.length);
  const n = triangleCount(mesh);
  for (let t = 0; t < n; t++) out[mesh.conductor[t]] += triangleArea(mesh, t);
  return out;
}

/**
 * Face number of a triangle that lies on no reference face: in a mesh joined from inputs with
 * and without a reference surface (a CAD part and an STL), `faces[t] === NO_FACE` marks the
 * triangles whose true surface is unknown; refinement treats them as mesh input.
 */
export const NO_FACE = 0xffffffff;

/**
 * Join meshes into one, appending conductors in order. Names are kept as given;
 * callers make them unique first (see `uniqueNames`). When any mesh has a reference surface,
 * the result has one too: the references end to end, face numbers offset, and the triangles
 * of meshes without one marked `NO_FACE`.
 */
export function concatMeshes(meshes: SurfaceMesh[]): SurfaceMesh {
  let nv = 0, nt = 0;
  for (const m of meshes) { nv += m.positions.length; nt += m.triangles.length; }
  const positions = new Float64Array(nv);
  const triangles = new Uint32Array(nt);
  const conductor = new Uint32Array(nt / 3);
  const names: string[] = [];
  let vo = 0, to = 0;
  for (const m of meshes) {
    positions.set(m.positions, vo);
    const base = vo / 3;
    for (let i = 0; i < m.triangles.length; i++) triangles[to + i] = m.triangles[i] + base;
    const co = names.length;
    for (let t = 0; t < m.triangles.length / 3; t++) conductor[to / 3 + t] = m.conductor[t] + co;
    names.push(...m.names);
    vo += m.positions.length;
    to += m.triangles.length;
  }
  const out: SurfaceMesh = { positions, triangles, conductor, names };
  if (!meshes.some((m) => m.reference && m.faces)) return out;
  const faces = new Uint32Array(nt / 3).fill(NO_FACE);
  let rv = 0, rt = 0, faceCount = 0;
  for (const m of meshes) if (m.reference && m.faces) { rv += m.reference.positions.length; rt += m.reference.triangles.length; }
  const ref: ReferenceSurface = {
    positions: new Float64Array(rv), normals: new Float64Array(rv), triangles: new Uint32Array(rt), face: new Uint32Array(rt / 3), faceCount: 0,
  };
  let t0 = 0;
  rv = 0; rt = 0;
  for (const m of meshes) {
    const n = m.triangles.length / 3;
    if (m.reference && m.faces) {
      const r = m.reference;
      for (let t = 0; t < n; t++) faces[t0 + t] = m.faces[t] === NO_FACE ? NO_FACE : m.faces[t] + faceCount;
      ref.positions.set(r.positions, rv);
      ref.normals.set(r.normals, rv);
      for (let i = 0; i < r.triangles.length; i++) ref.triangles[rt + i] = r.triangles[i] + rv / 3;
      for (let i = 0; i < r.face.length; i++) ref.face[rt / 3 + i] = r.face[i] + faceCount;
      rv += r.positions.length;
      rt += r.triangles.length;
      faceCount += r.faceCount;
    }
    t0 += n;
  }
  ref.faceCount = faceCount;
  return { ...out, faces, reference: ref };
}

/** The reference surface with positions multiplied by `s` (> 0; unit conversion), normals unchanged. */
export function scaleReference(r: ReferenceSurface, s: number): ReferenceSurface {
  return { ...r, positions: Float64Array.from(r.positions, (x) => x * s) };
}

/**
 * Only the reference faces that `faces` uses, renumbered in order of face number, and
 * `faces` renumbered to match (`NO_FACE` stays). Unused faces would cost memory only.
 */
export function restrictReference(r: ReferenceSurface, faces: Uint32Array): { faces: Uint32Array; reference: ReferenceSurface } {
  const newFace = new Int32Array(r.faceCount).fill(-1);
  for (let t = 0; t < faces.length; t++) if (faces[t] !== NO_FACE) newFace[faces[t]] = 0;
  let count = 0;
  for (let f = 0; f < r.faceCount; f++) if (newFace[f] === 0) newFace[f] = count++;
  if (count === r.faceCount) return { faces, reference: r };
  const nrt = r.face.length;
  const vmap = new Int32Array(r.positions.length / 3).fill(-1);
  let kt = 0, kv = 0;
  for (let t = 0; t < nrt; t++) if (newFace[r.face[t]] >= 0) kt++;
  const triangles = new Uint32Array(3 * kt), face = new Uint32Array(kt);
  for (let t = 0, k = 0; t < nrt; t++) {
    const f = newFace[r.face[t]];
    if (f < 0) continue;
    for (let j = 0; j < 3; j++) {
      const v = r.triangles[3 * t + j];
      if (vmap[v] < 0) vmap[v] = kv++;
      triangles[3 * k + j] = vmap[v];
    }
    face[k++] = f;
  }
  const positions = new Float64Array(3 * kv), normals = new Float64Array(3 * kv);
  for (let v = 0; v < vmap.length; v++) {
    const w = vmap[v];
    if (w < 0) continue;
    for (let j = 0; j < 3; j++) { positions[3 * w + j] = r.positions[3 * v + j]; normals[3 * w + j] = r.normals[3 * v + j]; }
  }
  const outFaces = Uint32Array.from(faces, (f) => (f === NO_FACE ? NO_FACE : newFace[f]));
  return { faces: outFaces, reference: { positions, normals, triangles, face, faceCount: count } };
}

/** Make names unique by suffixing `_2`, `_3`, ... to repeats, keeping the first as is. */
export function uniqueNames(names: string[], taken: Set<string> = new Set()): string[] {
  const out: string[] = [];
  for (const raw of names) {
    const base = raw.length > 0 ? raw : "conductor";
    let name = base;
    for (let k = 2; taken.has(name); k++) name = `${base}_${k}`;
    taken.add(name);
    out.push(name);
  }
  return out;
}

/** The triangles of one conductor as a mesh of its own (vertices compacted). */
export function conductorSubmesh(mesh: SurfaceMesh, c: number): SurfaceMesh {
  const n = triangleCount(mesh);
  const remap = new Int32Array(vertexCount(mesh)).fill(-1);
  let nt = 0;
  for (let t = 0; t < n; t++) if (mesh.conductor[t] === c) nt++;
  const triangles = new Uint32Array(3 * nt);
  let nv = 0, k = 0;
  for (let t = 0; t < n; t++) {
    if (mesh.conductor[t] !== c) continue;
    for (let j = 0; j < 3; j++) {
      const v = mesh.triangles[3 * t + j];
      if (remap[v] < 0) remap[v] = nv++;
      triangles[k++] = remap[v];
    }
  }
  const positions = new Float64Array(3 * nv);
  for (let v = 0; v < remap.length; v++) {
    const r = remap[v];
    if (r >= 0) { positions[3 * r] = mesh.positions[3 * v]; positions[3 * r + 1] = mesh.positions[3 * v + 1]; positions[3 * r + 2] = mesh.positions[3 * v + 2]; }
  }
  const sub: SurfaceMesh = { positions, triangles, conductor: new Uint32Array(nt), names: [mesh.names[c]] };
  if (!mesh.faces || !mesh.reference) return sub;
  const faces = new Uint32Array(nt);
  for (let t = 0, j = 0; t < n; t++) if (mesh.conductor[t] === c) faces[j++] = mesh.faces[t];
  return { ...sub, ...restrictReference(mesh.reference, faces) };
}
