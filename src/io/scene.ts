/**
 * Scene files: JSON describing the conductors of a job, their meshes and potentials,
 * the medium and the breakdown strength used by the field check.
 *
 *   { "unit": "mm", "permittivity": 1.0,
 *     "groundPlane": { "z": 0 }, "symmetry": [ { "x": 0 }, { "y": 0, "images": "odd" } ],
 *     "conductors": [ { "name": "pad", "mesh": "pad.stl", "potential": 1.0 },
 *                     { "name": "shield", "mesh": "shield.stl", "floating": true } ] }
 *
 * A conductor is a mesh file (`"mesh"`) or a generated shape (`"shape": { "box": { "size": [10, 10, 0.035],
 * "divisions": 12 } }`, the parameters of `sigmesh mesh`, lengths in the scene's unit), and any
 * entry may be placed (`"place"`: scale, then rotate, then translate; see ./placement.ts).
 * An entry may instead list `"parts"`, each a mesh file or a shape with its own placement,
 * joined into one net (a key pad and its trace, a pin and its solder tail); the entry's
 * `place` then moves the whole net after each part's own. Joined parts are welded as one mesh
 * file's bodies are, and faces two parts share exactly (abutting solids) are interior to the
 * net and removed.
 * `"parameters": { "gap": 2 }` names numbers that expressions (`"=gap/2 + 1"`, ./parameters.ts)
 * use wherever the scene takes a number; a sweep replaces their values.
 *
 * `groundPlane` is a grounded conducting plane normal to one axis, `symmetry` lists mirror
 * symmetry planes of a model meshed by half (positions in the scene's unit) with their images:
 * "even" (default), "odd" (the mirror half at the opposite potential) or "both" (the mirror
 * half is its own conductors, `name~x`; `"mirrored": "same" | "opposite"` sets their working
 * potentials). A dielectric body may carry its own `breakdownField` (V/m); a floating
 * conductor carries zero net charge at a potential the solver finds, so it takes no potential.
 *
 * The schema is kept in `schema/scene.schema.json`; this module is its validator and
 * names the key path of every fault (`conductors[1].potential: expected a number`).
 * Mesh paths are relative to the scene file.
 */
import { parseSceneProbes, type ProbeSpec } from "./probe-spec.js";
import { readFileSync, statSync } from "node:fs";
import { dirname, resolve, basename, extname } from "node:path";
import { InputError } from "../errors.js";
import { parseUnit, metresPer, DEFAULT_UNIT, type LengthUnit } from "./units.js";
import type { AxisPlane, Axis, SymmetryPlane } from "../bem/images.js";
import { loadMeshFile, type LoadedMesh } from "./load.js";
import { concatMeshes, type SurfaceMesh } from "../mesh/model.js";
import { SHAPES, shapeParameters, generateShape, type ShapeName, type ShapeParams } from "../mesh/primitives/index.js";
import { resolveParameters, substituteExpressions } from "./parameters.js";
import { parsePlacement, placeMesh, type Placement } from "./placement.js";
import { weldVertices, dropDegenerate, DEFAULT_WELD_TOLERANCE } from "../mesh/weld.js";

/** One piece of a conductor or dielectric entry: a mesh file or a generated shape, with its placement. */
export interface ScenePart {
  /** Absolute path of the mesh file; undefined for a generated shape. */
  mesh?: string;
  /** Generated shape and its parameters (lengths in the scene's unit); undefined for a mesh file. */
  shape?: { kind: ShapeName; params: ShapeParams };
  /** Groups (named solids, OBJ groups, physical surfaces) of the file taken; all when absent. */
  groups?: string[];
  /** The part's own placement (translation in the scene's unit), applied before the entry's. */
  place?: Placement;
  /** Key path of the part (`conductors[2].parts[1]`, or the entry's path for a one-piece entry), for messages. */
  path: string;
}

export interface SceneConductor {
  /** Conductor name as given, or the mesh file stem / group name / shape name of its (first) part. */
  name: string;
  /** One-piece entries: absolute path of the mesh file; undefined for a shape or a `parts` entry. */
  mesh?: string;
  /** One-piece entries: the generated shape (lengths in the scene's unit); undefined otherwise. */
  shape?: { kind: ShapeName; params: ShapeParams };
  /** Placement of the whole entry (translation in the scene's unit), after each part's own; undefined when the entry has none. */
  place?: Placement;
  /** Key path of the entry in the scene (`conductors[2]`), for messages. */
  path: string;
  /** One-piece entries: groups of the file that make this conductor; all when absent. */
  groups?: string[];
  /** Every piece of the entry (one for a `mesh` or `shape` entry), joined into one net. */
  parts: ScenePart[];
  /** Working potential; volts. Undefined when the scene does not set it. */
  potential?: number;
  /** Zero net charge at a solved potential. */
  floating: boolean;
}

/** A dielectric body: a closed surface with its relative permittivity inside. */
export interface SceneDielectric extends Omit<SceneConductor, "potential" | "floating"> {
  permittivity: number;
  /** Breakdown strength of the body's material for the field check; V/m. Undefined: the background's. */
  breakdownField?: number;
}

export interface Scene {
  file: string;
  unit: LengthUnit;
  /** Relative permittivity of the uniform background medium. */
  permittivity: number;
  /** Breakdown strength of the medium used by the field check; V/m. */
  breakdownField?: number;
  /** Grounded plane; offset in metres. */
  groundPlane?: AxisPlane;
  /** Mirror symmetry planes with their images; offsets in metres. */
  symmetry: SymmetryPlane[];
  conductors: SceneConductor[];
  dielectrics: SceneDielectric[];
  /** Probe requests, coordinates in the scene's unit. */
  probes: ProbeSpec[];
  /** Values of the named parameters used for this reading (the scene's, or a sweep point's). */
  parameters: Record<string, number>;
}

export interface SceneParseOptions {
  /** Values replacing the scene's parameters (a sweep point); each must name a parameter of the scene. */
  parameters?: Readonly<Record<string, number>>;
}

const TOP_KEYS = new Set(["$schema", "parameters", "unit", "permittivity", "breakdownField", "groundPlane", "symmetry", "conductors", "dielectrics", "probes", "title", "description"]);
const CONDUCTOR_KEYS = new Set(["name", "mesh", "shape", "parts", "place", "group", "groups", "potential", "floating", "description"]);
const DIELECTRIC_KEYS = new Set(["name", "mesh", "shape", "parts", "place", "group", "groups", "permittivity", "breakdownField", "description"]);
const PART_KEYS = new Set(["mesh", "shape", "place", "group", "groups", "description"]);

/**
 * An axis-aligned plane written `{ "z": 0 }` (one of x, y, z, its position in `unit`), or the
 * fault as a phrase. Exported for the command line's plane options (`z=0`).
 */
export function planeFromObject(v: unknown, unit: LengthUnit): AxisPlane | string {
  if (!isObject(v)) return "expected an object naming one axis and its position, such as { \"z\": 0 }";
  const keys = Object.keys(v);
  if (keys.length !== 1 || !["x", "y", "z"].includes(keys[0])) {
    return `expected exactly one of the keys x, y, z (the plane's normal axis), got ${keys.length === 0 ? "none" : keys.join(", ")}`;
  }
  const at = v[keys[0]];
  if (typeof at !== "number" || !Number.isFinite(at)) return `${keys[0]}: expected a number (position in ${unit})`;
  return { axis: keys[0] as Axis, offset: at * metresPer(unit) };
}

/** Turn a JSON.parse failure into a line and column. */
function jsonPlace(text: string, err: unknown): string | undefined {
  const m = /position (\d+)/.exec(String((err as Error)?.message ?? ""));
  if (!m) return undefined;
  const pos = Number(m[1]);
  let line = 1, col = 1;
  for (let i = 0; i < pos && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) { line++; col = 1; } else col++;
  }
  return `line ${line}, column ${col}`;
}

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === "object" && v !== null && !Array.isArray(v);
}

function parseJson(text: string, file: string): unknown {
  try {
    return JSON.parse(text) as unknown;
  } catch (err) {
    const detail = String((err as Error).message).replace(/ in JSON at position \d+.*$/, "").replace(/^Unexpected/, "unexpected");
    throw new InputError(`not valid JSON (${detail})`, file, jsonPlace(text, err));
  }
}

/**
 * The scene as a user would write it by hand with these parameter values: every expression
 * replaced by its number and `parameters` holding the values used. `overrides` replace the
 * scene's parameter values (a sweep point). The result is a parsed JSON value (mesh paths as
 * written, relative to the scene file).
 */
export function substituteScene(text: string, file: string, overrides: Readonly<Record<string, number>> = {}): Record<string, unknown> {
  const raw = parseJson(text, file);
  const fail = (path: string, fault: string): never => { throw new InputError(`${path}: ${fault}`, file); };
  if (!isObject(raw)) fail("(top level)", "expected a JSON object");
  const top = raw as Record<string, unknown>;
  for (const k of Object.keys(top)) if (!TOP_KEYS.has(k)) fail(k, `unknown key (expected one of ${[...TOP_KEYS].filter((x) => x !== "$schema").join(", ")})`);
  if (top.parameters !== undefined && !isObject(top.parameters)) fail("parameters", "expected an object of names and numbers, such as { \"gap\": 2 }");
  const parameters = resolveParameters((top.parameters ?? {}) as Record<string, unknown>, overrides, fail);
  const out = substituteExpressions(top, parameters, "", fail) as Record<string, unknown>;
  if (top.parameters !== undefined || Object.keys(overrides).length > 0) out.parameters = parameters;
  return out;
}

/** Parse and validate scene text; `file` names the scene in errors and anchors relative mesh paths. */
export function parseScene(text: string, file: string, opts: SceneParseOptions = {}): Scene {
  const fail = (path: string, fault: string): never => { throw new InputError(`${path}: ${fault}`, file); };
  const top = substituteScene(text, file, opts.parameters);
  const parameters = (top.parameters ?? {}) as Record<string, number>;

  let unit: LengthUnit = DEFAULT_UNIT;
  if (top.unit !== undefined) {
    if (typeof top.unit !== "string") fail("unit", "expected a string such as \"mm\"");
    try { unit = parseUnit(top.unit as string); } catch (e) { fail("unit", (e as InputError).fault); }
  }
  let permittivity = 1;
  if (top.permittivity !== undefined) {
    if (typeof top.permittivity !== "number" || !Number.isFinite(top.permittivity)) fail("permittivity", "expected a number");
    if ((top.permittivity as number) < 1) fail("permittivity", `relative permittivity must be at least 1, got ${top.permittivity}`);
    permittivity = top.permittivity as number;
  }
  let breakdownField: number | undefined;
  if (top.breakdownField !== undefined) {
    if (typeof top.breakdownField !== "number" || !Number.isFinite(top.breakdownField) || top.breakdownField <= 0) fail("breakdownField", "expected a positive number in V/m");
    breakdownField = top.breakdownField as number;
  }
  let groundPlane: AxisPlane | undefined;
  if (top.groundPlane !== undefined) {
    const g = planeFromObject(top.groundPlane, unit);
    if (typeof g === "string") fail("groundPlane", g);
    groundPlane = g as AxisPlane;
  }
  const symmetry: SymmetryPlane[] = [];
  if (top.symmetry !== undefined) {
    if (!Array.isArray(top.symmetry)) fail("symmetry", "expected a list of planes, such as [ { \"x\": 0 } ]");
    (top.symmetry as unknown[]).forEach((entry, i) => {
      let images: SymmetryPlane["images"], mirrored: SymmetryPlane["mirrored"];
      let bare = entry;
      if (isObject(entry) && ("images" in entry || "mirrored" in entry)) {
        const { images: im, mirrored: mi, ...rest } = entry;
        if (im !== undefined) {
          if (im !== "even" && im !== "odd" && im !== "both") fail(`symmetry[${i}].images`, `expected "even", "odd" or "both", got ${JSON.stringify(im)}`);
          images = im as SymmetryPlane["images"];
        }
        if (mi !== undefined) {
          if (images !== "both") fail(`symmetry[${i}].mirrored`, "the mirrored conductors' potentials apply to \"images\": \"both\" only");
          if (mi !== "same" && mi !== "opposite") fail(`symmetry[${i}].mirrored`, `expected "same" or "opposite", got ${JSON.stringify(mi)}`);
          mirrored = mi as SymmetryPlane["mirrored"];
        }
        bare = rest;
      }
      const g = planeFromObject(bare, unit);
      if (typeof g === "string") fail(`symmetry[${i}]`, g);
      const plane: SymmetryPlane = { ...(g as AxisPlane), images: images ?? "even" };
      if (mirrored) plane.mirrored = mirrored;
      const j = symmetry.findIndex((q) => q.axis === plane.axis);
      if (j >= 0) fail(`symmetry[${i}]`, `symmetry[${j}] is already normal to ${plane.axis} (at most one symmetry plane per axis)`);
      if (groundPlane && groundPlane.axis === plane.axis) fail(`symmetry[${i}]`, `parallel to the ground plane (normal to ${plane.axis}): the images would never end; use planes on other axes`);
      symmetry.push(plane);
    });
  }
  if (!Array.isArray(top.conductors)) fail("conductors", top.conductors === undefined ? "missing (a list of conductors is required)" : "expected a list");
  const list = top.conductors as unknown[];
  if (list.length === 0) fail("conductors", "the list is empty");

  const base = dirname(resolve(file));
  const conductors: SceneConductor[] = list.map((entry, i) => {
    const at = `conductors[${i}]`;
    const { e, name, mesh, shape, place, groups, parts } = parseBody(entry, at, CONDUCTOR_KEYS, base, fail);
    let potential: number | undefined;
    if (e.potential !== undefined) {
      if (typeof e.potential !== "number" || !Number.isFinite(e.potential)) fail(`${at}.potential`, "expected a number (volts)");
      potential = e.potential as number;
    }
    let floating = false;
    if (e.floating !== undefined) {
      if (typeof e.floating !== "boolean") fail(`${at}.floating`, "expected true or false");
      floating = e.floating as boolean;
      if (floating && potential !== undefined) fail(`${at}.potential`, "a floating conductor takes no potential (its potential is solved for); remove one of the two");
    }
    return { name, mesh, shape, place, path: at, groups, parts, potential, floating };
  });
  const dielectrics: SceneDielectric[] = [];
  if (top.dielectrics !== undefined) {
    if (!Array.isArray(top.dielectrics)) fail("dielectrics", "expected a list of dielectric bodies");
    (top.dielectrics as unknown[]).forEach((entry, i) => {
      const at = `dielectrics[${i}]`;
      const { e, name, mesh, shape, place, groups, parts } = parseBody(entry, at, DIELECTRIC_KEYS, base, fail);
      if (typeof e.permittivity !== "number" || !Number.isFinite(e.permittivity)) fail(`${at}.permittivity`, e.permittivity === undefined ? "missing (the body's relative permittivity)" : "expected a number");
      if ((e.permittivity as number) < 1) fail(`${at}.permittivity`, `relative permittivity must be at least 1, got ${e.permittivity}`);
      let breakdownField: number | undefined;
      if (e.breakdownField !== undefined) {
        if (typeof e.breakdownField !== "number" || !Number.isFinite(e.breakdownField) || e.breakdownField <= 0) fail(`${at}.breakdownField`, "expected a positive number in V/m");
        breakdownField = e.breakdownField as number;
      }
      dielectrics.push({ name, mesh, shape, place, path: at, groups, parts, permittivity: e.permittivity as number, ...(breakdownField !== undefined ? { breakdownField } : {}) });
    });
  }
  const seen = new Map<string, number>();
  conductors.forEach((c, i) => {
    const j = seen.get(c.name);
    if (j !== undefined) fail(`conductors[${i}].name`, `"${c.name}" is already the name of conductors[${j}]`);
    seen.set(c.name, i);
  });
  if (conductors.every((c) => c.floating)) fail("conductors", "every conductor is floating: at least one must be held at a potential");
  const probes = top.probes === undefined ? [] : parseSceneProbes(top.probes, { file });
  const dseen = new Map<string, number>();
  dielectrics.forEach((d, i) => {
    const j = dseen.get(d.name);
    if (j !== undefined) fail(`dielectrics[${i}].name`, `"${d.name}" is already the name of dielectrics[${j}]`);
    dseen.set(d.name, i);
  });
  return { file, unit, permittivity, breakdownField, groundPlane, symmetry, conductors, dielectrics, probes, parameters };
}


/** What conductor and dielectric entries share: name, a mesh file (with groups), a shape or a list of parts, a placement. */
function parseBody(entry: unknown, at: string, keys: Set<string>, base: string, fail: (path: string, fault: string) => never) {
  if (!isObject(entry)) fail(at, "expected an object");
  const e = entry as Record<string, unknown>;
  for (const k of Object.keys(e)) if (!keys.has(k)) fail(`${at}.${k}`, `unknown key (expected one of ${[...keys].join(", ")})`);
  const place = e.place === undefined ? undefined : parsePlacement(e.place, `${at}.place`, fail);
  let parts: ScenePart[];
  let single: Omit<ScenePart, "place" | "path"> = {};
  if (e.parts !== undefined) {
    const other = ["mesh", "shape", "group", "groups"].filter((k) => e[k] !== undefined);
    if (other.length > 0) fail(`${at}.${other[0]}`, "an entry with parts takes its mesh files and shapes inside the parts, not beside them");
    if (!Array.isArray(e.parts) || e.parts.length === 0) {
      fail(`${at}.parts`, Array.isArray(e.parts) ? "the list is empty (give at least one part)" : "expected a list of parts, each { \"mesh\": file } or { \"shape\": {...} } with an optional \"place\"");
    }
    parts = (e.parts as unknown[]).map((p, j) => {
      const pat = `${at}.parts[${j}]`;
      if (!isObject(p)) return fail(pat, "expected an object: { \"mesh\": file } or { \"shape\": {...} }, with an optional \"place\"");
      for (const k of Object.keys(p)) if (!PART_KEYS.has(k)) fail(`${pat}.${k}`, `unknown key (a part takes ${[...PART_KEYS].join(", ")}; name, potential and the like belong to the entry)`);
      const src = parseSource(p, pat, base, fail);
      return { ...src, place: p.place === undefined ? undefined : parsePlacement(p.place, `${pat}.place`, fail), path: pat };
    });
  } else {
    single = parseSource(e, at, base, fail);
    parts = [{ ...single, path: at }];
  }
  let name: string;
  if (e.name !== undefined) {
    if (typeof e.name !== "string" || e.name.trim().length === 0) fail(`${at}.name`, "expected a non-empty string");
    name = (e.name as string).trim();
  } else {
    const first = parts[0];
    const shape = first.shape;
    name = shape ? (typeof shape.params.name === "string" && shape.params.name.trim() ? shape.params.name.trim() : shape.kind)
      : first.groups && first.groups.length === 1 ? first.groups[0] : basename(first.mesh as string, extname(first.mesh as string));
  }
  return { e, name, mesh: single.mesh, shape: single.shape, place, groups: single.groups, parts };
}

/** The source of a piece: `mesh` (with `group`/`groups`) or `shape`, exactly one. */
function parseSource(e: Record<string, unknown>, at: string, base: string, fail: (path: string, fault: string) => never): Omit<ScenePart, "place" | "path"> {
  if (e.mesh !== undefined && e.shape !== undefined) fail(at, "give either mesh (a file) or shape (a generated primitive), not both");
  let mesh: string | undefined;
  let shape: ScenePart["shape"];
  if (e.shape !== undefined) {
    shape = parseShape(e.shape, `${at}.shape`, fail);
    if (e.group !== undefined || e.groups !== undefined) fail(`${at}.${e.group !== undefined ? "group" : "groups"}`, "applies to a mesh file, not to a generated shape");
  } else {
    if (typeof e.mesh !== "string" || e.mesh.length === 0) fail(`${at}.mesh`, e.mesh === undefined ? "missing (path of the mesh file, or a \"shape\" or \"parts\" instead)" : "expected a file path");
    mesh = resolve(base, e.mesh as string);
  }
  let groups: string[] | undefined;
  if (e.group !== undefined && e.groups !== undefined) fail(at, "give either group or groups, not both");
  if (e.group !== undefined) {
    if (typeof e.group !== "string") fail(`${at}.group`, "expected a string");
    groups = [e.group as string];
  }
  if (e.groups !== undefined) {
    if (!Array.isArray(e.groups) || e.groups.length === 0 || !e.groups.every((g) => typeof g === "string")) fail(`${at}.groups`, "expected a non-empty list of strings");
    groups = e.groups as string[];
  }
  return { mesh, shape, groups };
}

/** `"shape": { "<kind>": { params } }` with the parameter names checked against the generator's. */
function parseShape(v: unknown, at: string, fail: (path: string, fault: string) => never): { kind: ShapeName; params: ShapeParams } {
  if (!isObject(v)) return fail(at, `expected an object naming one shape, such as { "box": { "size": [1, 1, 1] } } (shapes: ${SHAPES.join(", ")})`);
  const keys = Object.keys(v);
  if (keys.length !== 1) return fail(at, `expected exactly one shape (one of ${SHAPES.join(", ")}), got ${keys.length === 0 ? "none" : keys.join(", ")}`);
  const kind = keys[0];
  if (!(SHAPES as readonly string[]).includes(kind)) return fail(`${at}.${kind}`, `unknown shape (use ${SHAPES.join(", ")})`);
  const p = v[kind];
  if (!isObject(p)) return fail(`${at}.${kind}`, "expected an object of the shape's parameters");
  const known = shapeParameters(kind as ShapeName);
  for (const [name, value] of Object.entries(p)) {
    if (!known.some((q) => q.name === name)) fail(`${at}.${kind}.${name}`, `not a parameter of a ${kind} (it takes ${known.map((q) => q.name).join(", ")})`);
    const ok = (x: unknown): boolean => typeof x === "number" || typeof x === "string";
    if (!(ok(value) || (Array.isArray(value) && value.every(ok)))) fail(`${at}.${kind}.${name}`, "expected a number, a list of numbers, or text");
  }
  for (const q of known) if (q.required && p[q.name] === undefined) fail(`${at}.${kind}`, `a ${kind} needs "${q.name}"`);
  return { kind: kind as ShapeName, params: p as ShapeParams };
}

/** Read and validate a scene file. */
export function loadSceneFile(path: string, opts: SceneParseOptions = {}): Scene {
  let text: string;
  try {
    if (statSync(path).isDirectory()) throw new InputError("is a directory, not a scene file", path);
    text = readFileSync(path, "utf8");
  } catch (err) {
    if (err instanceof InputError) throw err;
    const code = (err as NodeJS.ErrnoException).code;
    throw new InputError(code === "ENOENT" ? "no such file" : `cannot read (${code ?? String(err)})`, path);
  }
  if (text.trim().length === 0) throw new InputError("empty file", path);
  return parseScene(text, path, opts);
}


export interface SceneMesh extends LoadedMesh {
  /** Dielectric bodies, meshes in metres. */
  dielectrics: Array<{ name: string; mesh: SurfaceMesh; permittivity: number; breakdownField?: number }>;
  /** Potential of each conductor as the scene gives it; volts (undefined where it is silent). */
  potentials: Array<number | undefined>;
  /** Floating flag of each conductor. */
  floating: boolean[];
}

/** Load every conductor of a scene: one conductor per entry, its parts (and their files' groups) joined. */
export function loadSceneMesh(scene: Scene, opts: { weldTolerance?: number } = {}): SceneMesh {
  const bodies = scene.conductors.map((c) => loadBody(c, scene.file, scene.unit, opts.weldTolerance));
  const dielectrics = scene.dielectrics.map((d) => loadBody(d, scene.file, scene.unit, opts.weldTolerance));
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
  };
}

/**
 * One entry as a one-conductor mesh in metres: each part read or generated and placed, the
 * parts joined, welded and cleared of the faces they share, then the entry's placement.
 */
function loadBody(entry: SceneConductor | SceneDielectric, file: string, unit: LengthUnit, weldTolerance?: number): LoadedMesh {
  const perUnit = metresPer(unit);
  const pieces = entry.parts.map((part): LoadedMesh => {
    let lm: LoadedMesh;
    if (part.shape) {
      const kind = part.shape.kind;
      const mesh = generateShape(kind, part.shape.params, { metresPerUnit: perUnit, describe: (q) => `${part.path}.shape.${kind}.${q}`, file });
      lm = { mesh, warnings: [], files: [], unit, dropped: 0, welded: 0 };
    } else {
      lm = loadMeshFile(part.mesh as string, { unit, groups: part.groups, merge: true, name: entry.name, weldTolerance });
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
  const clean = dropDegenerate(welded.positions, welded.triangles, all.conductor);
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
  if (shared > 0) {
    triangles = new Uint32Array(3 * (nt - 2 * shared));
    for (let t = 0, k = 0; t < nt; t++) if (!drop[t]) { triangles[k++] = tri[3 * t]; triangles[k++] = tri[3 * t + 1]; triangles[k++] = tri[3 * t + 2]; }
    warnings.push({ file, message: `${entry.path}: ${shared} triangle(s) shared by two of its parts removed from both (inside the joined net)` });
  }
  // Vertices only the removed triangles used would still count in bounding boxes.
  const remap = new Int32Array(welded.positions.length / 3).fill(-1);
  let nv = 0;
  for (let i = 0; i < triangles.length; i++) { const v = triangles[i]; if (remap[v] < 0) remap[v] = nv++; triangles[i] = remap[v]; }
  const positions = new Float64Array(3 * nv);
  for (let v = 0; v < remap.length; v++) if (remap[v] >= 0) positions.set(welded.positions.subarray(3 * v, 3 * v + 3), 3 * remap[v]);
  const mesh: SurfaceMesh = { positions, triangles, conductor: new Uint32Array(triangles.length / 3), names: [entry.name] };
  return {
    mesh, warnings, files: pieces.flatMap((p) => p.files), unit: pieces[0].unit,
    dropped: pieces.reduce((s, p) => s + p.dropped, 0) + clean.dropped, welded: pieces.reduce((s, p) => s + p.welded, 0) + welded.merged,
  };
}
