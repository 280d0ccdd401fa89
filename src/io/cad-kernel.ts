/**
 * The CAD kernel: OpenCASCADE's STEP, IGES and BREP readers and its mesher (BRepMesh),
 * compiled to WebAssembly by the occt-import-js package.
 *
 * Loaded on the first CAD file and kept for the process, so every other command starts as
 * fast as before (the package is 7.6 MB of WebAssembly). The module is instantiated
 * synchronously (Emscripten's `instantiateWasm` hook with `new WebAssembly.Module`; Node
 * allows synchronous compilation of any size off the browser's main thread), so reading a
 * CAD file is as synchronous as reading an STL and `loadScene` keeps its signature.
 */
import { createRequire } from "node:module";
import { readFileSync } from "node:fs";

/** Parameters of one triangulation (occt-import-js's `params`). */
export interface KernelMeshParams {
  /** Unit of the output coordinates for STEP and IGES (BREP output is in the file's units). */
  linearUnit: "millimeter";
  linearDeflectionType: "bounding_box_ratio" | "absolute_value";
  /** Chord deflection: a ratio of the average bounding-box size, or a length in `linearUnit`. */
  linearDeflection: number;
  /** Largest angle between the normals at the ends of a segment on a curved face; radians. */
  angularDeflection: number;
}

export interface KernelNode {
  name: string;
  meshes: number[];
  children: KernelNode[];
}

export interface KernelMesh {
  name: string;
  attributes: { position: { array: ArrayLike<number> }; normal?: { array: ArrayLike<number> } };
  index: { array: ArrayLike<number> };
  /** Triangle ranges of each B-rep face, inclusive. */
  brep_faces: Array<{ first: number; last: number }>;
}

export interface KernelResult {
  success: boolean;
  root?: KernelNode;
  meshes?: KernelMesh[];
}

export type CadFormat = "step" | "iges" | "brep";

interface OcctModule {
  ReadStepFile(content: Uint8Array, params: KernelMeshParams | null): KernelResult;
  ReadIgesFile(content: Uint8Array, params: KernelMeshParams | null): KernelResult;
  ReadBrepFile(content: Uint8Array, params: KernelMeshParams | null): KernelResult;
}

let kernel: OcctModule | undefined;
/** The kernel's own console lines of the last read (its parse errors name the line). */
let messages: string[] = [];

/** Whether the kernel has been loaded in this process (for tests of the lazy load). */
export function cadKernelLoaded(): boolean {
  return kernel !== undefined;
}

function loadKernel(): OcctModule {
  if (kernel) return kernel;
  const require = createRequire(import.meta.url);
  const script = require.resolve("occt-import-js");
  const factory = require(script) as (m: Record<string, unknown>) => Promise<unknown>;
  const wasm = readFileSync(script.replace(/\.js$/, ".wasm"));
  const module: Record<string, unknown> = {
    print: (s: string) => { messages.push(s); },
    printErr: (s: string) => { messages.push(s); },
    instantiateWasm(imports: WebAssembly.Imports, done: (i: WebAssembly.Instance, m: WebAssembly.Module) => void) {
      const compiled = new WebAssembly.Module(wasm);
      const instance = new WebAssembly.Instance(compiled, imports);
      done(instance, compiled);
      return instance.exports;
    },
  };
  // The promise resolves with `module` itself, already complete: instantiation above ran to
  // the end synchronously. A rejection would be an internal fault, seen below.
  factory(module).catch(() => undefined);
  if (typeof module.ReadStepFile !== "function") throw new Error("occt-import-js did not initialise synchronously");
  kernel = module as unknown as OcctModule;
  return kernel;
}

/** One read and triangulation; `messages` are the kernel's own lines (parse errors). */
export function runKernel(format: CadFormat, bytes: Uint8Array, params: KernelMeshParams): { result: KernelResult; messages: string[] } {
  const k = loadKernel();
  messages = [];
  const read = format === "step" ? k.ReadStepFile : format === "iges" ? k.ReadIgesFile : k.ReadBrepFile;
  let result: KernelResult;
  try {
    result = read.call(k, bytes, params);
  } catch (e) {
    // A WebAssembly trap (out of bounds, unreachable) inside the kernel on a malformed file.
    result = { success: false };
    kernel = undefined; // its memory may be left inconsistent: a fresh instance for the next file
    messages.push(e instanceof Error ? e.message : String(e));
  }
  return { result, messages };
}
