/**
 * Conductor and dielectric entries of a scene. An entry is one piece (`"mesh"` with its
 * `group`/`groups`, or `"shape"`, ./scene-shape.ts) or lists `"parts"`, where `"mesh"` may
 * also be a STEP, IGES or BREP file whose parts are its groups (./cad.ts), each a mesh file or a
 * shape with its own placement, joined into one net (./scene-mesh.ts); any entry may be placed
 * (`"place"`, ./placement.ts). A conductor takes a potential or is floating; a dielectric body
 * takes its permittivity and may carry its own breakdown field.
 */
import { resolve, basename, extname } from "node:path";
import type { ShapeName, ShapeParams } from "../mesh/primitives/index.js";
import { parsePlacement, type Placement } from "./placement.js";
import { isObject } from "./json-value.js";
import { parseShape } from "./scene-shape.js";

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

const CONDUCTOR_KEYS = new Set(["name", "mesh", "shape", "parts", "place", "group", "groups", "potential", "floating", "description"]);
const DIELECTRIC_KEYS = new Set(["name", "mesh", "shape", "parts", "place", "group", "groups", "permittivity", "breakdownField", "description"]);
const PART_KEYS = new Set(["mesh", "shape", "place", "group", "groups", "description"]);

/** Entry `conductors[i]`; `base` is the folder mesh paths are relative to. */
export function parseConductor(entry: unknown, i: number, base: string, fail: (path: string, fault: string) => never): SceneConductor {
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
}

/** Entry `dielectrics[i]`; `base` is the folder mesh paths are relative to. */
export function parseDielectric(entry: unknown, i: number, base: string, fail: (path: string, fault: string) => never): SceneDielectric {
  const at = `dielectrics[${i}]`;
  const { e, name, mesh, shape, place, groups, parts } = parseBody(entry, at, DIELECTRIC_KEYS, base, fail);
  if (typeof e.permittivity !== "number" || !Number.isFinite(e.permittivity)) fail(`${at}.permittivity`, e.permittivity === undefined ? "missing (the body's relative permittivity)" : "expected a number");
  if ((e.permittivity as number) < 1) fail(`${at}.permittivity`, `relative permittivity must be at least 1, got ${e.permittivity}`);
  let breakdownField: number | undefined;
  if (e.breakdownField !== undefined) {
    if (typeof e.breakdownField !== "number" || !Number.isFinite(e.breakdownField) || e.breakdownField <= 0) fail(`${at}.breakdownField`, "expected a positive number in V/m");
    breakdownField = e.breakdownField as number;
  }
  return { name, mesh, shape, place, path: at, groups, parts, permittivity: e.permittivity as number, ...(breakdownField !== undefined ? { breakdownField } : {}) };
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
