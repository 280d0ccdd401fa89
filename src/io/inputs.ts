/**
 * What an extraction reads: a scene file, or mesh files whose bodies are the conductors.
 * One entry point for the CLI and the library API (`loadScene`).
 */
import { extname } from "node:path";
import { InputError } from "./errors.js";
import { loadMeshFiles } from "./load.js";
import { loadSceneFile, loadSceneMesh, type Scene } from "./scene.js";
import { DEFAULT_UNIT, type LengthUnit } from "./units.js";
import type { SurfaceMesh } from "../mesh/model.js";
import type { Warning } from "./errors.js";

export interface LoadedScene {
  mesh: SurfaceMesh;
  /** Working potential of each conductor, volts (first 1 V, rest 0 V when nothing sets them). */
  potentials: Float64Array;
  unit: LengthUnit;
  /** True when no scene or option chose the unit. */
  unitAssumed: boolean;
  permittivity: number;
  breakdownField?: number;
  files: string[];
  scene?: string;
  warnings: Warning[];
  dropped: number;
}

export interface InputOptions {
  /** Overrides the scene's unit; the unit of bare mesh files. */
  unit?: LengthUnit;
  split?: boolean;
  merge?: boolean;
  weldTolerance?: number;
  /** NAME=VOLTS overrides, by conductor name. */
  potentials?: Record<string, number>;
}

/** Load a scene (one .json file) or mesh files. */
export function loadScene(inputs: string | string[], opts: InputOptions = {}): LoadedScene {
  const list = typeof inputs === "string" ? [inputs] : inputs;
  if (list.length === 0) throw new InputError("no input given: name a scene file (.json) or mesh files");
  const scenes = list.filter((f) => extname(f).toLowerCase() === ".json");
  let out: LoadedScene;
  if (scenes.length > 0) {
    if (list.length > 1) throw new InputError("give either one scene file or mesh files, not both", scenes[0]);
    let scene: Scene = loadSceneFile(list[0]);
    if (opts.unit) scene = { ...scene, unit: opts.unit };
    if (opts.split || opts.merge) throw new InputError("--split and --merge apply to mesh files; in a scene, each entry is one conductor", list[0]);
    const sm = loadSceneMesh(scene, { weldTolerance: opts.weldTolerance });
    out = {
      mesh: sm.mesh, potentials: resolvePotentials(sm.mesh.names, sm.potentials, opts.potentials), unit: scene.unit, unitAssumed: false, permittivity: scene.permittivity,
      breakdownField: scene.breakdownField, files: sm.files, scene: list[0], warnings: sm.warnings, dropped: sm.dropped,
    };
  } else {
    const unit = opts.unit ?? DEFAULT_UNIT;
    const lm = loadMeshFiles(list, { unit, split: opts.split, merge: opts.merge, weldTolerance: opts.weldTolerance });
    const given = lm.mesh.names.map(() => undefined);
    out = { mesh: lm.mesh, potentials: resolvePotentials(lm.mesh.names, given, opts.potentials), unit, unitAssumed: opts.unit === undefined, permittivity: 1, files: lm.files, warnings: lm.warnings, dropped: lm.dropped };
  }
  return out;
}

/**
 * Potentials from the scene's values and NAME=VOLTS overrides. When nothing sets any,
 * the first conductor is at 1 V and the rest at 0 V; otherwise what is unset is at 0 V.
 */
function resolvePotentials(names: string[], scene: Array<number | undefined>, overrides?: Record<string, number>): Float64Array {
  const v = scene.slice();
  for (const [name, volts] of Object.entries(overrides ?? {})) {
    const i = names.indexOf(name);
    if (i < 0) throw new InputError(`--potential names "${name}", which is not a conductor; the conductors are: ${names.join(", ")}`);
    v[i] = volts;
  }
  const out = new Float64Array(names.length);
  if (v.every((x) => x === undefined)) out[0] = 1;
  else v.forEach((x, i) => { out[i] = x ?? 0; });
  return out;
}
