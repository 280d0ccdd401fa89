/** Writing meshes: the format from the output path, the bytes, and an atomic file write. */
import { extname } from "node:path";
import type { SurfaceMesh } from "../mesh/model.js";
import { InputError } from "../errors.js";
import { metresPer, type LengthUnit } from "./units.js";
import { writeStlBinary, writeStlAsciiBytes } from "./stl.js";
import { writeObj } from "./obj.js";
import { writeFileAtomic } from "./atomic.js";

export type OutputFormat = "stl" | "stl-ascii" | "obj";

/** `.stl` (binary unless `ascii`) or `.obj`; anything else is an InputError. */
export function outputFormatFromPath(path: string, ascii = false): OutputFormat {
  const ext = extname(path).toLowerCase();
  if (ext === ".stl") return ascii ? "stl-ascii" : "stl";
  if (ext === ".obj") return "obj";
  throw new InputError(`cannot write mesh format "${ext || "(no extension)"}"; use .stl or .obj`, path);
}

/** The file bytes of `mesh` (metres) with coordinates in `unit`. */
export function encodeMesh(mesh: SurfaceMesh, format: OutputFormat, unit: LengthUnit): Uint8Array {
  const m = metresPer(unit);
  if (format === "stl") return writeStlBinary(mesh, m);
  if (format === "stl-ascii") return writeStlAsciiBytes(mesh, m);
  return new TextEncoder().encode(writeObj(mesh, m));
}

/** Write atomically: a failure leaves any earlier file at `path` untouched. */
export function writeMeshFile(path: string, mesh: SurfaceMesh, format: OutputFormat, unit: LengthUnit): void {
  writeFileAtomic(path, encodeMesh(mesh, format, unit));
}
