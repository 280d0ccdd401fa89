/**
 * Which reader a file needs: the extension decides; for other names the content is sniffed
 * (Gmsh's `$MeshFormat`, the binary STL size rule, `solid`, OBJ statements).
 */
import { extname } from "node:path";
import { InputError } from "../errors.js";

export type MeshFormat = "stl" | "obj" | "msh";

const BY_EXTENSION: Record<string, MeshFormat> = { ".stl": "stl", ".obj": "obj", ".msh": "msh" };

export function detectFormat(file: string, bytes: Uint8Array): MeshFormat {
  const ext = extname(file).toLowerCase();
  const known = BY_EXTENSION[ext];
  if (known) return known;
  const sniffed = sniffFormat(bytes);
  if (sniffed) return sniffed;
  throw new InputError(`unknown mesh format (${ext ? `extension "${ext}"` : "no extension"}, and the content is not STL, OBJ or Gmsh MSH); use .stl, .obj or .msh`, file);
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
