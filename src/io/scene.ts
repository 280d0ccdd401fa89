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
 * `panelSize` (scene unit) is the largest panel wanted where a mesh file's flat faces are
 * remeshed (src/mesh/remesh.ts); `"keepMesh": true` solves on the mesh files as given.
 *
 * The schema is kept in `schema/scene.schema.json`; this module (the top-level keys) with
 * ./scene-entries.ts (conductor and dielectric entries, their parts), ./scene-shape.ts (shape
 * entries) and ./scene-planes.ts (ground and symmetry planes) is its validator and names the
 * key path of every fault (`conductors[1].potential: expected a number`). Mesh paths are
 * relative to the scene file; ./scene-mesh.ts loads the meshes of a parsed scene.
 */
import { parseSceneProbes, type ProbeSpec } from "./probe-spec.js";
import { readInputText } from "./input-file.js";
import { dirname, resolve } from "node:path";
import { InputError } from "../errors.js";
import { parseUnit, metresPer, DEFAULT_UNIT, type LengthUnit } from "./units.js";
import type { AxisPlane, SymmetryPlane } from "../bem/images.js";
import { resolveParameters, substituteExpressions } from "./parameters.js";
import { isObject, parseJson } from "./json-value.js";
import { planeFromObject, parseSymmetry } from "./scene-planes.js";
import { parseConductor, parseDielectric, type SceneConductor, type SceneDielectric } from "./scene-entries.js";

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
  /** The scene's `title`, shown in the reports. */
  title?: string;
  /** Largest panel wanted on remeshed flat faces of mesh files; metres. */
  panelSize?: number;
  /** Solve on the mesh files exactly as given (no remeshing of CAD-style flat faces). */
  keepMesh?: boolean;
}

export interface SceneParseOptions {
  /** Values replacing the scene's parameters (a sweep point); each must name a parameter of the scene. */
  parameters?: Readonly<Record<string, number>>;
}

const TOP_KEYS = new Set(["$schema", "parameters", "unit", "permittivity", "breakdownField", "groundPlane", "symmetry", "conductors", "dielectrics", "probes", "panelSize", "keepMesh", "title", "description"]);

/**
 * The scene as a user would write it by hand with these parameter values: every expression
 * replaced by its number and `parameters` holding the values used. `overrides` replace the
 * scene's parameter values (a sweep point). The result is a parsed JSON value (mesh paths as
 * written, relative to the scene file).
 */
export function substituteScene(text: string, file: string, overrides: Readonly<Record<string, number>> = {}): Record<string, unknown> {
  const raw = parseJson(text, file, { refusePrototypeKeys: true });
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
  let panelSize: number | undefined;
  if (top.panelSize !== undefined) {
    if (typeof top.panelSize !== "number" || !Number.isFinite(top.panelSize) || top.panelSize <= 0) fail("panelSize", `expected a positive length in ${unit}`);
    panelSize = (top.panelSize as number) * metresPer(unit);
  }
  if (top.keepMesh !== undefined && typeof top.keepMesh !== "boolean") fail("keepMesh", "expected true or false");
  let groundPlane: AxisPlane | undefined;
  if (top.groundPlane !== undefined) {
    const g = planeFromObject(top.groundPlane, unit);
    if (typeof g === "string") fail("groundPlane", g);
    groundPlane = g as AxisPlane;
  }
  const symmetry = parseSymmetry(top.symmetry, unit, groundPlane, fail);
  if (!Array.isArray(top.conductors)) fail("conductors", top.conductors === undefined ? "missing (a list of conductors is required)" : "expected a list");
  const list = top.conductors as unknown[];
  if (list.length === 0) fail("conductors", "the list is empty");

  const base = dirname(resolve(file));
  const conductors: SceneConductor[] = list.map((entry, i) => parseConductor(entry, i, base, fail));
  const dielectrics: SceneDielectric[] = [];
  if (top.dielectrics !== undefined) {
    if (!Array.isArray(top.dielectrics)) fail("dielectrics", "expected a list of dielectric bodies");
    (top.dielectrics as unknown[]).forEach((entry, i) => dielectrics.push(parseDielectric(entry, i, base, fail)));
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
  if (top.title !== undefined && typeof top.title !== "string") fail("title", "expected a string");
  const title = typeof top.title === "string" && top.title.trim() !== "" ? top.title : undefined;
  const scene: Scene = { file, unit, permittivity, breakdownField, groundPlane, symmetry, conductors, dielectrics, probes, parameters, ...(title !== undefined ? { title } : {}) };
  if (panelSize !== undefined) scene.panelSize = panelSize;
  if (top.keepMesh === true) scene.keepMesh = true;
  return scene;
}

/** Read and validate a scene file. */
export function loadSceneFile(path: string, opts: SceneParseOptions = {}): Scene {
  const text = readInputText(path, "scene");
  if (text.replace(/^\uFEFF/, "").trim().length === 0) throw new InputError("empty file", path);
  return parseScene(text, path, opts);
}
