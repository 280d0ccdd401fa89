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
   * shape's face): `faces[t]` is triangle t's face number in `reference`. Operations that keep
   * triangles keep these; refinement places its new points on the reference surface.
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
 * Join meshes into one, appending conductors in order. Names are kept as given;
 * callers make them unique first (see `uniqueNames`).
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
  return { positions, triangles, conductor, names };
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
  return { positions, triangles, conductor: new Uint32Array(nt), names: [mesh.names[c]] };
}
