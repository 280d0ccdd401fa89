/**
 * Gmsh MSH: ASCII 4.1, 4.0 and 2.x; binary 4.1 and 2.x. Layouts as given in the Gmsh
 * reference manual, chapter "Gmsh file formats", section "MSH file format" (4.1) and the
 * appendix on legacy formats (4.0, 2.2); written from the manual's description as remembered,
 * checked against hand-built files in tests/io/msh*.test.ts.
 *
 * This file reads the header and tells the variant apart; the readers are ./msh-ascii.ts and
 * ./msh-binary.ts (binary layout there), element types and the mesh they build
 * ./msh-elements.ts, conductors from physical groups or entities ./msh-conductors.ts.
 */
import { InputError, atLine } from "../errors.js";
import type { RawMesh } from "./raw.js";
import type { MshVersion } from "./msh-elements.js";
import { readMshAscii } from "./msh-ascii.js";
import { readMshBinary } from "./msh-binary.js";

/** A Gmsh MSH file (its bytes, or its text) as a raw mesh in file units. */
export function readMsh(input: string | Uint8Array, file: string): RawMesh {
  const bytes = typeof input === "string" ? new TextEncoder().encode(input) : input;
  let p = 0;
  if (bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) p = 3;
  // Header lines are text in every variant: find "$MeshFormat" and the format line.
  let line = 0;
  const readLine = (): string | undefined => {
    while (p < bytes.length) {
      let q = p;
      while (q < bytes.length && bytes[q] !== 10) q++;
      const s = new TextDecoder("latin1").decode(bytes.subarray(p, q)).trim();
      p = Math.min(bytes.length, q + 1);
      line++;
      if (s !== "") return s;
    }
    return undefined;
  };
  const first = readLine();
  if (first === undefined) throw new InputError("empty file", file);
  // Gmsh 1.0 files have no $MeshFormat and open with their node list.
  if (first === "$NOD" || first === "$NOE") throw new InputError(`MSH version 1 ("${first}") not supported; re-export as MSH 4.1 or 2.2 (Gmsh: File > Export)`, file, atLine(line));
  if (first !== "$MeshFormat") throw new InputError(`not a Gmsh MSH file: expected "$MeshFormat", found "${first.slice(0, 40)}"`, file, atLine(line));
  const fmt = readLine();
  if (fmt === undefined || fmt.startsWith("$")) throw new InputError("$MeshFormat holds no version line", file, atLine(line));
  const [version, fileType = "0", dataSize = "8"] = fmt.split(/\s+/);
  let v: MshVersion;
  if (version === "4.1") v = "4.1";
  else if (/^4(\.0+)?$/.test(version)) v = "4.0";
  else if (/^2(\.\d+)?$/.test(version)) v = "2";
  else throw new InputError(`MSH version ${version.slice(0, 20)} not supported (sigmesh reads 4.1, 4.0 and 2.x)`, file, atLine(line));
  if (fileType === "0") return readMshAscii(bytes, file);
  if (fileType !== "1") throw new InputError(`file type "${fileType.slice(0, 20)}" in $MeshFormat is neither 0 (ASCII) nor 1 (binary)`, file, atLine(line));
  if (v === "4.0") throw new InputError("binary MSH 4.0 not supported; re-export as MSH 4.1 or ASCII (Gmsh: Mesh.MshFileVersion = 4.1)", file, atLine(line));
  const ds = Number(dataSize);
  if (v === "4.1" && ds !== 4 && ds !== 8) throw new InputError(`binary MSH 4.1 data size ${dataSize.slice(0, 20)} not supported (size_t of 4 or 8 bytes)`, file, atLine(line));
  if (v === "2" && ds !== 8) throw new InputError(`binary MSH 2 data size ${dataSize.slice(0, 20)} not supported (8-byte doubles only)`, file, atLine(line));
  return readMshBinary(bytes, p, file, v, ds);
}
