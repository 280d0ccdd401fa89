/**
 * The meshes of a scene: every conductor and dielectric entry read or generated, placed, its
 * parts joined into one net, in metres.
 */
import { InputError } from "../errors.js";
import { metresPer, type LengthUnit } from "./units.js";
import { loadMeshFile, type LoadedMesh } from "./load.js";
import { concatMeshes, restrictReference, type SurfaceMesh } from "../mesh/model.js";
import { generateShape } from "../mesh/primitives/index.js";
import { placeMesh } from "./placement.js";
import { weldVertices, dropDegenerate, DEFAULT_WELD_TOLERANCE } from "../mesh/weld.js";
import type { Scene } from "./scene.js";
import type { SceneConductor, SceneDielectric } from "./scene-entries.js";

export interface SceneMesh extends LoadedMesh {
  /** Dielectric bodies, meshes in metres. */
  dielectrics: Array<{ name: string; mesh: SurfaceMesh; permittivity: number; breakdownField?: number }>;
  /** Potential of each conductor as the scene gives it; volts (undefined where it is silent). */
  potentials: Array<number | undefined>;
  /** Floating flag of each conductor. */
  floating: boolean[];
  /** Per conductor triangle: 1 when it comes from a mesh file (remeshing may change it), 0 for generated shapes. */
  fromFile: Uint8Array;
}

/**
 * Load every conductor of a scene: one conductor per entry, its parts (and their files' groups)
 * joined. `panelSize` (metres) sets the panels of CAD files on curved faces.
 */
export function loadSceneMesh(scene: Scene, opts: { weldTolerance?: number; panelSize?: number } = {}): SceneMesh {
  const bodies = scene.conductors.map((c) => loadBody(c, scene.file, scene.unit, opts.weldTolerance, opts.panelSize));
  const dielectrics = scene.dielectrics.map((d) => loadBody(d, scene.file, scene.unit, opts.weldTolerance, opts.panelSize));
  return {
    mesh: concatMeshes(bodies.map((b) => b.mesh)),
    warnings: [...bodies, ...dielectrics].flatMap((b) => b.warnings),
    files: [...new Set(bodies.flatMap((b) => b.files))],
    unit: scene.unit,
    dropped: bodies.reduce((s, b) => s + b.dropped, 0),
    welded: bodies.reduce((s, b) => s + b.welded, 0),
    potentials: scene.conductors.map((c) => c.potential),
    floating: scene.conductors.map((c) => c.floating),
    dielectrics: dielectrics.map((b, i) => ({ name: scene.dielectrics[i].name, mesh: b.mesh, permittivity: scene.dielectrics[i].permittivity, breakdownField: scene.dielectrics[i].breakdownField })),
    // An entry made only of mesh files may be remeshed; one with a generated part is kept whole.
    fromFile: Uint8Array.from(scene.conductors.flatMap((c, i) => new Array<number>(bodies[i].mesh.triangles.length / 3).fill(c.parts.every((part) => !part.shape) ? 1 : 0))),
  };
}

/**
 * One entry as a one-conductor mesh in metres: each part read or generated and placed, the
 * parts joined, welded and cleared of the faces they share, then the entry's placement.
 */
function loadBody(entry: SceneConductor | SceneDielectric, file: string, unit: LengthUnit, weldTolerance?: number, panelSize?: number): LoadedMesh {
  const perUnit = metresPer(unit);
  const pieces = entry.parts.map((part): LoadedMesh => {
    let lm: LoadedMesh;
    if (part.shape) {
      const kind = part.shape.kind;
      const mesh = generateShape(kind, part.shape.params, { metresPerUnit: perUnit, describe: (q) => `${part.path}.shape.${kind}.${q}`, file });
      lm = { mesh, warnings: [], files: [], unit, dropped: 0, welded: 0 };
    } else {
      lm = loadMeshFile(part.mesh as string, { unit, groups: part.groups, merge: true, name: entry.name, weldTolerance, panelSize });
    }
    return part.place ? { ...lm, mesh: placeMesh(lm.mesh, part.place, perUnit) } : lm;
  });
  let joined = pieces[0];
  if (pieces.length > 1) joined = joinParts(pieces, entry, file, weldTolerance);
  const placed = entry.place ? placeMesh(joined.mesh, entry.place, perUnit) : joined.mesh;
  return { ...joined, mesh: { ...placed, conductor: new Uint32Array(placed.triangles.length / 3), names: [entry.name] } };
}

/** Parts of one net as one mesh: welded like the bodies of one file, faces shared by two parts removed. */
function joinParts(pieces: LoadedMesh[], entry: SceneConductor | SceneDielectric, file: string, weldTolerance?: number): LoadedMesh {
  const all = concatMeshes(pieces.map((p) => p.mesh));
  // `all.conductor` numbers the parts (each piece holds one conductor).
  const welded = weldVertices(all.positions, all.triangles, weldTolerance ?? DEFAULT_WELD_TOLERANCE);
  // By triangle number, so that each kept triangle keeps its part and its CAD face.
  const clean = dropDegenerate(welded.positions, welded.triangles, Uint32Array.from(all.conductor, (_, t) => t));
  const cleanFaces = all.faces ? Uint32Array.from(clean.group, (t) => (all.faces as Uint32Array)[t]) : undefined;
  for (let k = 0; k < clean.group.length; k++) clean.group[k] = all.conductor[clean.group[k]];
  const warnings = pieces.flatMap((p) => p.warnings);
  if (clean.dropped > 0) warnings.push({ file, message: `${entry.path}: ${clean.dropped} triangle(s) of the joined parts dropped (zero area after welding)` });
  // Two parts meeting face to face (abutting solids) each carry the shared face; inside the
  // net it is no surface at all, so both copies go.
  const tri = clean.triangles, part = clean.group;
  const nt = part.length;
  const seen = new Map<string, number>();
  const drop = new Uint8Array(nt);
  let shared = 0;
  for (let t = 0; t < nt; t++) {
    const a = tri[3 * t], b = tri[3 * t + 1], c = tri[3 * t + 2];
    const lo = Math.min(a, b, c), hi = Math.max(a, b, c), mid = a + b + c - lo - hi;
    const key = `${lo},${mid},${hi}`;
    const u = seen.get(key);
    if (u !== undefined && drop[u] === 0 && part[u] !== part[t]) { drop[u] = 1; drop[t] = 1; shared++; }
    else if (u === undefined) seen.set(key, t);
  }
  if (shared === nt / 2) throw new InputError(`${entry.path}.parts: the parts are the same surface; nothing is left when their shared faces are removed`, file);
  let triangles = tri.slice();
  let faces = cleanFaces;
  if (shared > 0) {
    triangles = new Uint32Array(3 * (nt - 2 * shared));
    const keptFaces = cleanFaces ? new Uint32Array(nt - 2 * shared) : undefined;
    for (let t = 0, k = 0; t < nt; t++) {
      if (drop[t]) continue;
      if (keptFaces && cleanFaces) keptFaces[k / 3] = cleanFaces[t];
      triangles[k++] = tri[3 * t]; triangles[k++] = tri[3 * t + 1]; triangles[k++] = tri[3 * t + 2];
    }
    faces = keptFaces;
    warnings.push({ file, message: `${entry.path}: ${shared} triangle(s) shared by two of its parts removed from both (inside the joined net)` });
  }
  // Vertices only the removed triangles used would still count in bounding boxes.
  const remap = new Int32Array(welded.positions.length / 3).fill(-1);
  let nv = 0;
  for (let i = 0; i < triangles.length; i++) { const v = triangles[i]; if (remap[v] < 0) remap[v] = nv++; triangles[i] = remap[v]; }
  const positions = new Float64Array(3 * nv);
  for (let v = 0; v < remap.length; v++) if (remap[v] >= 0) positions.set(welded.positions.subarray(3 * v, 3 * v + 3), 3 * remap[v]);
  let mesh: SurfaceMesh = { positions, triangles, conductor: new Uint32Array(triangles.length / 3), names: [entry.name] };
  if (faces && all.reference) mesh = { ...mesh, ...restrictReference(all.reference, faces) };
  return {
    mesh, warnings, files: pieces.flatMap((p) => p.files), unit: pieces[0].unit,
    dropped: pieces.reduce((s, p) => s + p.dropped, 0) + clean.dropped, welded: pieces.reduce((s, p) => s + p.welded, 0) + welded.merged,
  };
}
