/**
 * Which reader a file needs: the extension decides; for other names the content is sniffed
 * (Gmsh's `$MeshFormat`, the binary STL size rule, `solid`, OBJ statements; STEP's
 * `ISO-10303-21;`, IGES's section letters in column 73, OpenCASCADE BREP's header).
 */
import { extname } from "node:path";
import { InputError } from "../errors.js";

export type MeshFormat = "stl" | "obj" | "msh" | "step" | "iges" | "brep";

const BY_EXTENSION: Record<string, MeshFormat> = {
  ".stl": "stl", ".obj": "obj", ".msh": "msh",
  ".step": "step", ".stp": "step", ".p21": "step", ".iges": "iges", ".igs": "iges", ".brep": "brep", ".brp": "brep",
};

/** Formats read through the CAD kernel (src/io/cad.ts). */
export function isCadFormat(f: MeshFormat): f is "step" | "iges" | "brep" {
  return f === "step" || f === "iges" || f === "brep";
}

export function detectFormat(file: string, bytes: Uint8Array): MeshFormat {
  const ext = extname(file).toLowerCase();
  const known = BY_EXTENSION[ext];
  if (known) return known;
  const sniffed = sniffFormat(bytes);
  if (sniffed) return sniffed;
  throw new InputError(`unknown mesh format (${ext ? `extension "${ext}"` : "no extension"}, and the content is not STL, OBJ, Gmsh MSH, STEP, IGES or BREP); use .stl, .obj, .msh, .step, .iges or .brep`, file);
}

/** The format the content itself shows, or undefined. */
export function sniffFormat(bytes: Uint8Array): MeshFormat | undefined {
  if (bytes.length >= 84) {
    const n = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength).getUint32(80, true);
    if (84 + 50 * n === bytes.length) return "stl";
  }
  const head = new TextDecoder("utf-8").decode(bytes.subarray(0, 4096)).replace(/^\uFEFF/, "");
  // Binary MSH opens with the same text line as ASCII MSH.
  if (head.trimStart().startsWith("$MeshFormat")) return "msh";
  if (head.trimStart().startsWith("ISO-10303-21;")) return "step";
  if (/^\s*DBRep_DrawableShape\b/.test(head) || /^\s*CASCADE Topology V/.test(head)) return "brep";
  if (isIges(head)) return "iges";
  for (let i = 0; i < Math.min(head.length, 4096); i++) {
    const ch = head.charCodeAt(i);
    if (ch === 0 || ch === 0xfffd) return undefined;
  }
  const start = head.trimStart();
  if (/^solid(\s|$)/i.test(start) && /\bfacet\b|\bendsolid\b/i.test(head)) return "stl";
  // OBJ: every statement line starts with a known keyword, and at least one is a vertex.
  const lines = head.split("\n").slice(0, -1).map((l) => l.trim()).filter((l) => l !== "" && !l.startsWith("#"));
  if (lines.length > 0 && lines.some((l) => /^v\s/.test(l)) && lines.every((l) => /^(v|vt|vn|vp|f|o|g|s|l|p|usemtl|mtllib)(\s|$)/.test(l))) return "obj";
  return undefined;
}

/** IGES: fixed 80-column records, the first a Start (S) or Global (G) line, section letter in column 73. */
function isIges(head: string): boolean {
  const lines = head.split(/\r?\n/).slice(0, 4).filter((l) => l.length > 0);
  if (lines.length < 2) return false;
  const letter = (l: string) => (l.length >= 73 && l.length <= 81 ? l[72] : "");
  return (letter(lines[0]) === "S" || letter(lines[0]) === "G") && lines.slice(1).every((l) => /^[SGDP]$/.test(letter(l)));
}
