/**
 * What an extraction reads: a scene file, or mesh files whose bodies are the conductors.
 * One entry point for the CLI and the library API (`loadScene`).
 */
import type { ProbeSpec } from "./probe-spec.js";
import { extname } from "node:path";
import { InputError } from "../errors.js";
import { loadMeshFiles } from "./load.js";
import { loadSceneFile, type Scene } from "./scene.js";
import { loadSceneMesh } from "./scene-mesh.js";
import { DEFAULT_UNIT, metresPer, type LengthUnit } from "./units.js";
import { mirrorNets, type AxisPlane, type Axis, type SymmetryPlane } from "../bem/images.js";
import type { SurfaceMesh } from "../mesh/model.js";
import { remeshFlatPatches, remeshSentence, type RemeshSummary } from "../mesh/remesh.js";
import type { Warning } from "../errors.js";

export interface LoadedScene {
  mesh: SurfaceMesh;
  /**
   * Working potential of each conductor, volts (first 1 V, rest 0 V when nothing sets them); one
   * per net of the unfolded model (bem/images.ts mirrorNets) when `--potential` names a mirror.
   */
  potentials: Float64Array;
  unit: LengthUnit;
  /** True when no scene or option chose the unit. */
  unitAssumed: boolean;
  permittivity: number;
  breakdownField?: number;
  /** Probe requests from the scene (coordinates in `unit`). */
  probes: ProbeSpec[];
  /** Dielectric bodies from the scene; meshes in metres. */
  dielectrics: Array<{ name: string; mesh: SurfaceMesh; permittivity: number; breakdownField?: number }>;
  /** Grounded plane (offset in metres), from the scene or `groundPlane`. */
  groundPlane?: AxisPlane;
  /** Mirror symmetry planes with their images (offsets in metres). */
  symmetry: SymmetryPlane[];
  /** Per conductor: floating (zero net charge, potential solved for). */
  floating: boolean[];
  /** The scene's named parameters with the values used (empty for mesh files). */
  parameters: Record<string, number>;
  /** The scene's title, if it gives one. */
  title?: string;
  files: string[];
  scene?: string;
  warnings: Warning[];
  dropped: number;
  /**
   * Remeshing of the mesh files' CAD-style flat faces (src/mesh/remesh.ts): what it changed
   * (`applied`), or with `keepMesh` and `previewRemesh` what it would change; absent when it
   * had nothing to do or was not asked.
   */
  remesh?: RemeshSummary & { applied: boolean };
}

export interface InputOptions {
  /** Overrides the scene's unit; the unit of bare mesh files. */
  unit?: LengthUnit;
  split?: boolean;
  merge?: boolean;
  weldTolerance?: number;
  /** NAME=VOLTS overrides, by conductor name. */
  potentials?: Record<string, number>;
  /** Ground plane as `AXIS=POSITION` in the input unit (`z=0`); replaces the scene's. */
  groundPlane?: string;
  /** Symmetry planes as `AXIS=POSITION` (`x=0`); replace the scene's. */
  symmetry?: string[];
  /** Names of conductors to leave floating (added to the scene's). */
  floating?: string[];
  /** Values replacing a scene's named parameters (a sweep point); each must be a parameter of the scene. */
  parameters?: Readonly<Record<string, number>>;
  /** Relative permittivity of the background medium; replaces the scene's. */
  permittivity?: number;
  /** Breakdown strength of the background medium for the field check, V/m; replaces the scene's. */
  breakdownField?: number;
  /**
   * Target panel size in the input unit, replacing the scene's: the largest panel on remeshed
   * flat faces of mesh files, and the panel size on curved faces of CAD files (STEP, IGES, BREP);
   * default from each face's and each model's size.
   */
  panelSize?: number;
  /** Keep the mesh files exactly as given (no remeshing of CAD-style flat faces). */
  keepMesh?: boolean;
  /** With `keepMesh`: still work out what remeshing would change (for `sigmesh check`). */
  previewRemesh?: boolean;
}

/** `AXIS=POSITION` (`z=0`, `x=-2.5`) in `unit`, as a plane in metres; `what` names the option in errors. */
export function parsePlane(text: string, unit: LengthUnit, what: string): AxisPlane {
  const m = /^\s*([xyzXYZ])\s*=\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*$/.exec(text);
  if (!m) throw new InputError(`${what} "${text}": expected AXIS=POSITION such as z=0 (axis x, y or z, position in ${unit})`);
  return { axis: m[1].toLowerCase() as Axis, offset: Number(m[2]) * metresPer(unit) };
}

/**
 * `AXIS=POSITION[:IMAGES[:MIRRORED]]` (`x=0`, `y=0:odd`, `x=0:both:opposite`) as a symmetry plane
 * in metres: images even (default), odd or both; for both, the mirrored conductors' working
 * potentials same (default) or opposite.
 */
export function parseSymmetryPlane(text: string, unit: LengthUnit): SymmetryPlane {
  const [where, images, mirrored, ...extra] = text.split(":").map((s) => s.trim());
  const plane: SymmetryPlane = { ...parsePlane(where, unit, "symmetry plane"), images: "even" };
  const bad = (what: string) => new InputError(`symmetry plane "${text}": ${what} (write AXIS=POSITION[:even|odd|both[:same|opposite]], e.g. x=0:odd)`);
  if (extra.length > 0) throw bad("too many parts");
  if (images !== undefined) {
    if (images !== "even" && images !== "odd" && images !== "both") throw bad(`images must be even, odd or both, got "${images}"`);
    plane.images = images;
  }
  if (mirrored !== undefined) {
    if (plane.images !== "both") throw bad("same/opposite potentials of the mirrored conductors apply to both only");
    if (mirrored !== "same" && mirrored !== "opposite") throw bad(`the mirrored conductors' potentials must be same or opposite, got "${mirrored}"`);
    plane.mirrored = mirrored;
  }
  return plane;
}

/** Load a scene (one .json file) or mesh files. */
export function loadScene(inputs: string | string[], opts: InputOptions = {}): LoadedScene {
  const list = typeof inputs === "string" ? [inputs] : inputs;
  if (list.length === 0) throw new InputError("no input given: name a scene file (.json) or mesh files");
  const scenes = list.filter((f) => extname(f).toLowerCase() === ".json");
  let out: LoadedScene;
  let remeshing: { only?: Uint8Array; keep: boolean; panelSize?: number } = { keep: false };
  const baseOverrides = opts.potentials;
  if (scenes.length > 0) {
    if (list.length > 1) throw new InputError("give either one scene file or mesh files, not both", scenes[0]);
    let scene: Scene = loadSceneFile(list[0], { parameters: opts.parameters });
    if (opts.unit && opts.unit !== scene.unit) {
      // Plane positions were read in the scene's unit: rescale with it.
      const f = metresPer(opts.unit) / metresPer(scene.unit);
      const move = <P extends AxisPlane>(p: P): P => ({ ...p, offset: p.offset * f });
      scene = { ...scene, unit: opts.unit, groundPlane: scene.groundPlane && move(scene.groundPlane), symmetry: scene.symmetry.map(move), panelSize: scene.panelSize && scene.panelSize * f };
    }
    if (opts.split || opts.merge) throw new InputError("--split and --merge apply to mesh files; in a scene, each entry is one conductor", list[0]);
    const sm = loadSceneMesh(scene, { weldTolerance: opts.weldTolerance, panelSize: opts.panelSize !== undefined ? panelMetres(opts.panelSize, scene.unit) : scene.panelSize });
    const floating = floatingFlags(sm.mesh.names, sm.floating, opts.floating);
    remeshing = { only: sm.fromFile, keep: scene.keepMesh === true, panelSize: scene.panelSize };
    out = {
      mesh: sm.mesh, potentials: resolvePotentials(sm.mesh.names, sm.potentials, baseOverrides, floating), unit: scene.unit, unitAssumed: false, permittivity: scene.permittivity,
      breakdownField: scene.breakdownField, groundPlane: scene.groundPlane, symmetry: scene.symmetry, floating,
      files: sm.files, scene: list[0], warnings: sm.warnings, dropped: sm.dropped, probes: scene.probes, dielectrics: sm.dielectrics, parameters: scene.parameters,
      ...(scene.title !== undefined ? { title: scene.title } : {}),
    };
  } else {
    if (opts.parameters && Object.keys(opts.parameters).length > 0) throw new InputError("parameters belong to a scene file (.json); mesh files have none", list[0]);
    let unit = opts.unit ?? DEFAULT_UNIT;
    const lm = loadMeshFiles(list, { unit, split: opts.split, merge: opts.merge, weldTolerance: opts.weldTolerance, panelSize: panelMetres(opts.panelSize, unit) });
    // CAD files that all declare one unit report in it unless --unit says otherwise (their geometry is already in metres).
    const declared = opts.unit === undefined ? lm.declaredUnit : undefined;
    if (declared) unit = declared;
    const given = lm.mesh.names.map(() => undefined);
    const floating = floatingFlags(lm.mesh.names, lm.mesh.names.map(() => false), opts.floating);
    out = {
      mesh: lm.mesh, potentials: resolvePotentials(lm.mesh.names, given, baseOverrides, floating), unit, unitAssumed: opts.unit === undefined && declared === undefined, permittivity: 1,
      symmetry: [], floating, files: lm.files, warnings: lm.warnings, dropped: lm.dropped, probes: [], dielectrics: [], parameters: {},
    };
  }
  remeshInput(out, remeshing, opts);
  if (opts.permittivity !== undefined) {
    if (!(opts.permittivity >= 1) || !Number.isFinite(opts.permittivity)) throw new InputError(`relative permittivity must be a number of at least 1, got ${opts.permittivity}`);
    out.permittivity = opts.permittivity;
  }
  if (opts.breakdownField !== undefined) {
    if (!(opts.breakdownField > 0) || !Number.isFinite(opts.breakdownField)) throw new InputError(`breakdown field must be a positive number of V/m, got ${opts.breakdownField}`);
    out.breakdownField = opts.breakdownField;
  }
  if (opts.groundPlane !== undefined) out.groundPlane = parsePlane(opts.groundPlane, out.unit, "ground plane");
  if (opts.symmetry !== undefined) out.symmetry = opts.symmetry.map((t) => parseSymmetryPlane(t, out.unit));
  const axes = new Set<string>();
  for (const p of out.symmetry) {
    if (axes.has(p.axis)) throw new InputError(`two symmetry planes normal to ${p.axis}: at most one per axis`);
    if (out.groundPlane && out.groundPlane.axis === p.axis) throw new InputError(`symmetry plane ${p.axis}: parallel to the ground plane, the images would never end; use planes on other axes`);
    axes.add(p.axis);
  }
  // Names with a mirror suffix (`pad~x`) that no conductor has set the potentials of mirrored conductors (images both).
  const mirrorOverrides = Object.entries(opts.potentials ?? {}).filter(([n]) => n.includes("~") && !out.mesh.names.includes(n));
  if (mirrorOverrides.length > 0) out.potentials = mirrorPotentials(out, mirrorOverrides);
  return out;
}

/**
 * Remesh the CAD-style flat faces of the mesh files (never generated shapes), unless the
 * option or the scene keeps the mesh as given; the change is noted among the warnings.
 */
function remeshInput(out: LoadedScene, how: { only?: Uint8Array; keep: boolean; panelSize?: number }, opts: InputOptions): void {
  if (how.keep) return;
  const keep = opts.keepMesh === true;
  if (keep && !opts.previewRemesh) return;
  if (how.only && how.only.every((x) => x === 0)) return;
  let panelSize = how.panelSize;
  if (opts.panelSize !== undefined) {
    if (!(opts.panelSize > 0) || !Number.isFinite(opts.panelSize)) throw new InputError(`panel size must be a positive length, got ${opts.panelSize}`);
    panelSize = opts.panelSize * metresPer(out.unit);
  }
  const { mesh, summary } = remeshFlatPatches(out.mesh, { panelSize, only: how.only });
  if (summary.patches === 0) return;
  out.remesh = { ...summary, applied: !keep };
  if (keep) return;
  out.mesh = mesh;
  out.warnings.push({ file: out.scene ?? out.files.join(", "), message: remeshSentence(summary, out.scene !== undefined) });
}

/**
 * Working potentials of every net of an unfolded model (images both): the meshed conductors'
 * potentials, their mirrors' by the planes' `mirrored` rule, then the `--potential name~x=V`
 * overrides.
 */
function mirrorPotentials(out: LoadedScene, overrides: Array<[string, number]>): Float64Array {
  const names = out.mesh.names, k = names.length;
  const nets = mirrorNets(names, out.symmetry);
  if (nets.names.length === k) {
    throw new InputError(`--potential names "${overrides[0][0]}", a mirrored conductor, but no symmetry plane has images both (e.g. --symmetry x=0:both)`);
  }
  const v = Float64Array.from(nets.names, (_, i) => nets.sign[(i / k) | 0] * out.potentials[i % k]);
  for (const [name, volts] of overrides) {
    const i = nets.names.indexOf(name);
    if (i < k) throw new InputError(`--potential names "${name}", which is not a mirrored conductor; they are: ${nets.names.slice(k).join(", ")}`);
    if (out.floating[i % k]) throw new InputError(`--potential names "${name}", which is floating (its potential is solved for)`);
    v[i] = volts;
  }
  return v;
}

/** A panel size in `unit` as metres; undefined stays undefined. */
function panelMetres(size: number | undefined, unit: LengthUnit): number | undefined {
  if (size === undefined) return undefined;
  if (!(size > 0) || !Number.isFinite(size)) throw new InputError(`panel size must be a positive length in ${unit}, got ${size}`);
  return size * metresPer(unit);
}

/** Floating flags from the scene and the names given as floating. */
function floatingFlags(names: string[], scene: boolean[], extra?: string[]): boolean[] {
  const f = scene.slice();
  for (const name of extra ?? []) {
    const i = names.indexOf(name);
    if (i < 0) throw new InputError(`--floating names "${name}", which is not a conductor; the conductors are: ${names.join(", ")}`);
    f[i] = true;
  }
  if (f.length > 0 && f.every((x) => x)) throw new InputError("every conductor is floating: at least one must be held at a potential");
  return f;
}

/**
 * Potentials from the scene's values and NAME=VOLTS overrides. When nothing sets any,
 * the first driven (not floating) conductor is at 1 V and the rest at 0 V; otherwise what is
 * unset is at 0 V. Floating conductors get 0 here; extract solves for theirs.
 */
function resolvePotentials(names: string[], scene: Array<number | undefined>, overrides: Record<string, number> | undefined,
  floating: boolean[]): Float64Array {
  const v = scene.slice();
  for (const [name, volts] of Object.entries(overrides ?? {})) {
    const i = names.indexOf(name);
    if (i < 0 && name.includes("~")) continue; // a mirrored conductor's: set once the symmetry planes are known
    if (i < 0) throw new InputError(`--potential names "${name}", which is not a conductor; the conductors are: ${names.join(", ")}`);
    if (floating[i]) throw new InputError(`--potential names "${name}", which is floating (its potential is solved for)`);
    v[i] = volts;
  }
  for (let i = 0; i < v.length; i++) if (floating[i]) v[i] = undefined;
  const out = new Float64Array(names.length);
  if (v.every((x) => x === undefined)) out[Math.max(0, floating.indexOf(false))] = 1;
  else v.forEach((x, i) => { out[i] = x ?? 0; });
  return out;
}
