/**
 * STL, binary and ASCII.
 *
 * Binary layout (the de-facto standard from 3D Systems' StereoLithography Interface
 * Specification, 1989): 80-byte header, uint32 triangle count n at byte 80, then n records
 * of 50 bytes: normal (3 × float32), three vertices (9 × float32), uint16 attribute; all
 * little-endian. A file is taken as binary when its size is exactly 84 + 50·n; the word
 * `solid` at the start proves nothing, since many binary exporters put it in the header.
 * Several such blocks end to end (Gmsh writes one per physical group) are several groups,
 * each named from its header, when the blocks fill the file exactly; see `binaryBlocks`.
 *
 * ASCII: `solid NAME` … `facet normal nx ny nz` / `outer loop` / `vertex x y z` ×3 /
 * `endloop` / `endfacet` … `endsolid NAME`. Several solids in one file are several groups
 * (one conductor each). Facet normals are skipped: geometry comes from the vertices only,
 * and orientation is the topology checker's business.
 */
import type { SurfaceMesh } from "../mesh/model.js";
import { InputError, atByte, atLine } from "../errors.js";
import { METRES_PER_UNIT } from "./units.js";
import { GrowF64, GrowU32, TextSink, decodeName, type RawMesh } from "./raw.js";
import { readDecimal, decimalEnd, tokenText } from "./decimal.js";
import { triangleNormal } from "../geometry/triangle.js";

const HEADER = 80;
const RECORD = 50;

/** Read an STL file (binary or ASCII, decided by the size rule and the content). */
export function readStl(bytes: Uint8Array, file: string): RawMesh {
  const size = bytes.length;
  if (size === 0) throw new InputError("empty file", file);
  if (size >= HEADER + 4) {
    const n = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength).getUint32(HEADER, true);
    if (HEADER + 4 + RECORD * n === size) return readStlBinary(bytes, file, n);
    // An ASCII file never gets here: its bytes 80..83 are text, a count of at least
    // 0x09090909 triangles (7.5 GB), which no file of the allowed sizes can hold.
    const blocks = binaryBlocks(bytes);
    if (blocks) return readStlBlocks(bytes, file, blocks);
  }
  if (looksLikeAsciiStl(bytes)) return readStlAscii(bytes, file);
  if (isBlank(bytes)) throw new InputError("empty file (only white space)", file);
  if (size < HEADER + 4) {
    throw new InputError(`not an STL file: ${size} bytes is too short for binary STL (84 at least) and the text does not start with "solid"`, file);
  }
  const n = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength).getUint32(HEADER, true);
  const need = HEADER + 4 + RECORD * n;
  if (need > size) {
    const whole = Math.floor((size - HEADER - 4) / RECORD);
    throw new InputError(`binary STL header claims ${n} triangles (${need} bytes) but the file holds ${size} bytes, room for ${whole}: file truncated or not an STL`, file, atByte(HEADER));
  }
  if (n === 0) {
    throw new InputError(`binary STL header counts 0 triangles but the file holds ${size} bytes (room for ${Math.floor((size - HEADER - 4) / RECORD)}): not a well-formed binary STL, and not ASCII STL either`, file, atByte(HEADER));
  }
  // Some exporters pad the file or append their own data after the counted triangles.
  const r = readStlBinary(bytes, file, n);
  r.warnings.push(`byte ${need}: ${size - need} bytes after the ${n} triangles the header counts (${need} bytes of ${size}) ignored`);
  return r;
}

/** ASCII when the first word is `solid` and the opening bytes are text (binary float data is not). */
function looksLikeAsciiStl(bytes: Uint8Array): boolean {
  let p = 0;
  if (bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) p = 3;
  while (p < bytes.length && isSpace(bytes[p])) p++;
  if (!matchesWord(bytes, p, bytes.length, SOLID)) return false;
  const lim = Math.min(bytes.length, 1024);
  for (let i = 0; i < lim; i++) {
    const b = bytes[i];
    if (b === 0 || (b < 32 && !isSpace(b)) || b === 127) return false;
  }
  return true;
}

function readStlBinary(bytes: Uint8Array, file: string, n: number): RawMesh {
  const positions = new Float64Array(9 * n);
  const triangles = new Uint32Array(3 * n);
  readRecords(bytes, file, HEADER + 4, n, positions, triangles, 0, "");
  const warnings: string[] = [];
  if (n === 0) warnings.push("binary STL holds no triangles");
  return { positions, triangles, group: new Uint32Array(n), groupNames: [""], warnings };
}

/**
 * n records from byte `start` into triangle slots `first` … `first + n - 1` (one unshared
 * vertex triple each; welding comes later). `label` prefixes fault messages ("block 2, ").
 */
function readRecords(bytes: Uint8Array, file: string, start: number, n: number, positions: Float64Array, triangles: Uint32Array, first: number, label: string): void {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  for (let t = 0; t < n; t++) {
    const rec = start + RECORD * t + 12;
    const o = 9 * (first + t);
    for (let k = 0; k < 9; k++) {
      const v = view.getFloat32(rec + 4 * k, true);
      if (v - v !== 0) {
        throw new InputError(`${label}triangle ${t + 1}: vertex ${Math.floor(k / 3) + 1} coordinate ${"xyz"[k % 3]} is ${v} (not a finite number)`, file, atByte(rec + 4 * k));
      }
      positions[o + k] = v;
    }
    const a = 3 * (first + t);
    triangles[a] = a;
    triangles[a + 1] = a + 1;
    triangles[a + 2] = a + 2;
  }
}

/** The blocks of a multi-block binary STL: where each starts, and how many triangles it counts. */
interface Blocks { start: Float64Array; count: Uint32Array }

/**
 * The blocks of a binary STL written as several solids end to end (80-byte header, uint32
 * count, count records, then the next block), or null unless the whole file is two or more
 * such blocks, each count at least 1 and fitting the bytes left, the last ending exactly at
 * the end of the file. Anything else keeps the single-block reading (trailing bytes ignored
 * with a warning). A first pass only reads counts, so nothing is allocated until the chain
 * is known to fill the file; the second fills typed arrays (no object per block).
 */
function binaryBlocks(bytes: Uint8Array): Blocks | null {
  const size = bytes.length;
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let p = 0, k = 0;
  while (p < size) {
    if (size - p < HEADER + 4) return null;
    const n = view.getUint32(p + HEADER, true);
    if (n === 0 || n > (size - p - HEADER - 4) / RECORD) return null;
    p += HEADER + 4 + RECORD * n;
    k++;
  }
  if (k < 2) return null;
  const start = new Float64Array(k), count = new Uint32Array(k);
  p = 0;
  for (let i = 0; i < k; i++) {
    start[i] = p;
    count[i] = view.getUint32(p + HEADER, true);
    p += HEADER + 4 + RECORD * count[i];
  }
  return { start, count };
}

function readStlBlocks(bytes: Uint8Array, file: string, blocks: Blocks): RawMesh {
  const { start, count } = blocks;
  let total = 0;
  for (let i = 0; i < count.length; i++) total += count[i];
  const positions = new Float64Array(9 * total);
  const triangles = new Uint32Array(3 * total);
  const group = new Uint32Array(total);
  const groupNames: string[] = [];
  let first = 0;
  for (let i = 0; i < count.length; i++) {
    readRecords(bytes, file, start[i] + HEADER + 4, count[i], positions, triangles, first, `block ${i + 1} (byte ${start[i]}), `);
    group.fill(i, first, first + count[i]);
    groupNames.push(headerName(bytes.subarray(start[i], start[i] + HEADER)));
    first += count[i];
  }
  return { positions, triangles, group, groupNames, warnings: [] };
}

/**
 * A block's name from its 80-byte header: the text before the first NUL, a leading `solid`
 * keyword dropped, trimmed. A header with other control characters in that text is binary
 * data, not a name, and gives "" (the loader then generates one).
 */
function headerName(header: Uint8Array): string {
  let end = header.indexOf(0);
  if (end < 0) end = header.length;
  const text = header.subarray(0, end);
  for (const b of text) if ((b < 32 && !isSpace(b)) || b === 127) return "";
  let s = decodeName(text).trim();
  if (/^solid(\s|$)/i.test(s)) s = s.slice(5).trim();
  return /[\x00-\x1f\x7f-\x9f]/.test(s) ? "" : s;
}

const kw = (s: string): Uint8Array => new TextEncoder().encode(s);
const SOLID = kw("solid"), ENDSOLID = kw("endsolid"), FACET = kw("facet"), NORMAL = kw("normal");
const OUTER = kw("outer"), LOOP = kw("loop"), VERTEX = kw("vertex"), ENDLOOP = kw("endloop"), ENDFACET = kw("endfacet");

function isBlank(bytes: Uint8Array): boolean {
  let p = bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf ? 3 : 0;
  while (p < bytes.length && isSpace(bytes[p])) p++;
  return p === bytes.length;
}

function isSpace(b: number): boolean { return b === 32 || (b >= 9 && b <= 13); }

/** Case-insensitive keyword at p followed by whitespace or the end. */
function matchesWord(bytes: Uint8Array, p: number, end: number, word: Uint8Array): boolean {
  const n = word.length;
  if (p + n > end) return false;
  for (let i = 0; i < n; i++) if ((bytes[p + i] | 0x20) !== word[i]) return false;
  return p + n === end || isSpace(bytes[p + n]);
}

/**
 * Byte scanner over the whole file: no per-line strings. `line` follows the newlines
 * passed so every message can name its line.
 */
function readStlAscii(bytes: Uint8Array, file: string): RawMesh {
  const end = bytes.length;
  // A facet takes about 250 bytes of text; start near the right size and double if short.
  const estimate = Math.ceil(end / 200);
  const pos = new GrowF64(9 * estimate);
  const tri = new GrowU32(3 * estimate);
  const group = new GrowU32(estimate);
  const groupNames: string[] = [];
  const warnings: string[] = [];
  let p = 0, line = 1;
  if (bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) p = 3;

  const skip = (): void => {
    while (p < end) {
      const b = bytes[p];
      if (b === 10) line++;
      else if (!isSpace(b)) return;
      p++;
    }
  };
  const restOfLine = (): string => {
    const s = p;
    while (p < end && bytes[p] !== 10 && bytes[p] !== 13) p++;
    return decodeName(bytes.subarray(s, p)).trim();
  };
  const fail = (what: string): never => {
    const found = p < end ? `found "${tokenText(bytes, p, end)}"` : "found the end of the file";
    throw new InputError(`${what}, ${found}`, file, atLine(line));
  };
  const expect = (word: Uint8Array, what: string): void => {
    skip();
    if (!matchesWord(bytes, p, end, word)) fail(`expected "${what}"`);
    p += word.length;
  };
  const coordinate = (axis: string, facetLine: number): number => {
    skip();
    if (p >= end || bytes[p] === 10) fail(`expected the ${axis} coordinate of a vertex`);
    const v = readDecimal(bytes, p, end);
    if (v - v !== 0) {
      throw new InputError(`vertex ${axis} coordinate "${tokenText(bytes, p, end)}" is not a finite number (facet starting at line ${facetLine})`, file, atLine(line));
    }
    p = decimalEnd;
    return v;
  };

  let solids = 0;
  let open = false;
  let g = -1;
  for (;;) {
    skip();
    if (p >= end) break;
    if (!open) {
      if (matchesWord(bytes, p, end, SOLID)) {
        p += SOLID.length;
        groupNames.push(restOfLine());
        g = groupNames.length - 1;
        open = true;
        solids++;
        continue;
      }
      if (solids === 0) fail('expected "solid"');
      warnings.push(`line ${line}: text after the last "endsolid" ignored`);
      break;
    }
    if (matchesWord(bytes, p, end, FACET)) {
      const facetLine = line;
      p += FACET.length;
      skip();
      if (matchesWord(bytes, p, end, NORMAL)) {
        // Normals are not used for geometry; skip three tokens whatever they hold.
        p += NORMAL.length;
        for (let k = 0; k < 3; k++) {
          skip();
          if (matchesWord(bytes, p, end, OUTER)) break;
          while (p < end && !isSpace(bytes[p])) p++;
        }
      }
      expect(OUTER, "outer loop");
      expect(LOOP, "outer loop");
      const first = pos.length / 3;
      let nv = 0;
      for (;;) {
        skip();
        if (!matchesWord(bytes, p, end, VERTEX)) break;
        p += VERTEX.length;
        const x = coordinate("x", facetLine), y = coordinate("y", facetLine), z = coordinate("z", facetLine);
        pos.push3(x, y, z);
        nv++;
      }
      if (nv < 3) fail(`facet starting at line ${facetLine} has ${nv} vertices; expected "vertex" (3 per facet)`);
      expect(ENDLOOP, "endloop");
      expect(ENDFACET, "endfacet");
      // A facet with more than 3 vertices is outside the format; fan it rather than lose it.
      if (nv > 3) warnings.push(`line ${facetLine}: facet with ${nv} vertices split into ${nv - 2} triangles`);
      for (let k = 1; k + 1 < nv; k++) {
        tri.push3(first, first + k, first + k + 1);
        group.push(g);
      }
      continue;
    }
    if (matchesWord(bytes, p, end, ENDSOLID)) {
      p += ENDSOLID.length;
      restOfLine();
      open = false;
      continue;
    }
    if (matchesWord(bytes, p, end, SOLID)) {
      warnings.push(`line ${line}: "solid" before "endsolid" of the previous solid; a new solid begins here`);
      open = false;
      continue;
    }
    fail('expected "facet" or "endsolid"');
  }
  if (open) warnings.push(`line ${line}: file ends without "endsolid"`);
  return { positions: pos.toArray(), triangles: tri.toArray(), group: group.toArray(), groupNames, warnings };
}

function unitLabel(metresPerUnit: number): string {
  for (const [u, m] of Object.entries(METRES_PER_UNIT)) if (m === metresPerUnit) return u;
  return `${metresPerUnit} m`;
}

/**
 * Binary STL in float32, coordinates divided by `metresPerUnit`. The header names sigmesh
 * and the unit (STL itself has no unit field); it never starts with "solid", so no reader
 * can mistake the file for ASCII. Conductor names cannot be stored in binary STL.
 */
export function writeStlBinary(mesh: SurfaceMesh, metresPerUnit: number): Uint8Array {
  const n = mesh.triangles.length / 3;
  const out = new Uint8Array(HEADER + 4 + RECORD * n);
  const header = new TextEncoder().encode(`sigmesh binary STL; unit ${unitLabel(metresPerUnit)}; ${mesh.names.length} conductor(s)`.slice(0, HEADER));
  out.set(header.subarray(0, HEADER));
  const view = new DataView(out.buffer);
  view.setUint32(HEADER, n, true);
  const p = mesh.positions, tr = mesh.triangles, u = toFileUnits(metresPerUnit);
  for (let t = 0; t < n; t++) {
    const rec = HEADER + 4 + RECORD * t;
    const a = 3 * tr[3 * t], b = 3 * tr[3 * t + 1], c = 3 * tr[3 * t + 2];
    triangleNormal(NRM, 0, p, a, b, c);
    view.setFloat32(rec, NRM[0], true);
    view.setFloat32(rec + 4, NRM[1], true);
    view.setFloat32(rec + 8, NRM[2], true);
    for (let j = 0; j < 3; j++) {
      const v = 3 * tr[3 * t + j], o = rec + 12 + 12 * j;
      view.setFloat32(o, u(p[v]), true);
      view.setFloat32(o + 4, u(p[v + 1]), true);
      view.setFloat32(o + 8, u(p[v + 2]), true);
    }
  }
  return out;
}

const NRM = new Float64Array(3);

/**
 * Coordinates printed with 15 significant digits and no trailing zeros: every digit
 * printed is right, and values that came from CAD come back as short as they went in.
 */
export function formatCoordinate(x: number): string {
  if (x === 0) return "0";
  // toPrecision is exactly rounded by the language definition (ECMA-262, Number.prototype.toPrecision).
  const s = x.toPrecision(15);
  const e = s.indexOf("e");
  const mantEnd = e < 0 ? s.length : e;
  if (s.indexOf(".") < 0) return s;
  let k = mantEnd;
  while (s.charCodeAt(k - 1) === 48 /* 0 */) k--;
  if (s.charCodeAt(k - 1) === 46 /* . */) k--;
  return e < 0 ? s.slice(0, k) : s.slice(0, k) + s.slice(e);
}

/**
 * File units from metres. When a unit is an exact integer fraction of the metre (m, cm, mm,
 * um), multiplying by that integer is one correctly rounded operation on an exact factor;
 * dividing by the inexact 1e-3 would add a second rounding. Inches and mils divide.
 */
export function toFileUnits(metresPerUnit: number): (x: number) => number {
  const f = 1 / metresPerUnit;
  if (Number.isInteger(f) && f * metresPerUnit === 1) return (x) => x * f;
  return (x) => x / metresPerUnit;
}

/** ASCII STL, one `solid NAME` per conductor, coordinates divided by `metresPerUnit`. */
export function writeStlAscii(mesh: SurfaceMesh, metresPerUnit: number): string {
  return stlAsciiText(mesh, metresPerUnit).toString();
}

/** The same text as UTF-8 bytes (what `encodeMesh` writes). */
export function writeStlAsciiBytes(mesh: SurfaceMesh, metresPerUnit: number): Uint8Array {
  return stlAsciiText(mesh, metresPerUnit).bytes();
}

function stlAsciiText(mesh: SurfaceMesh, metresPerUnit: number): TextSink {
  const p = mesh.positions, tr = mesh.triangles, u = toFileUnits(metresPerUnit);
  const out = new TextSink(Math.max(1 << 16, 200 * (tr.length / 3)));
  const order = trianglesByConductor(mesh.conductor, mesh.names.length);
  for (let c = 0; c < mesh.names.length; c++) {
    const name = mesh.names[c].replace(/[\r\n]+/g, " ");
    out.ascii("solid ").text(name).ascii("\n");
    for (let k = order.start[c]; k < order.start[c + 1]; k++) {
      const t = order.triangle[k];
      triangleNormal(NRM, 0, p, 3 * tr[3 * t], 3 * tr[3 * t + 1], 3 * tr[3 * t + 2]);
      out.ascii("  facet normal ").ascii(formatCoordinate(NRM[0])).ascii(" ").ascii(formatCoordinate(NRM[1])).ascii(" ").ascii(formatCoordinate(NRM[2])).ascii("\n    outer loop\n");
      for (let j = 0; j < 3; j++) {
        const v = 3 * tr[3 * t + j];
        out.ascii("      vertex ").ascii(formatCoordinate(u(p[v]))).ascii(" ").ascii(formatCoordinate(u(p[v + 1]))).ascii(" ").ascii(formatCoordinate(u(p[v + 2]))).ascii("\n");
      }
      out.ascii("    endloop\n  endfacet\n");
    }
    out.ascii("endsolid ").text(name).ascii("\n");
  }
  return out;
}

/** Triangles sorted by conductor (counting sort, stable): conductor c owns triangle[start[c] .. start[c+1]). */
export function trianglesByConductor(conductor: Uint32Array, count: number): { start: Uint32Array; triangle: Uint32Array } {
  const start = new Uint32Array(count + 1);
  for (let t = 0; t < conductor.length; t++) start[conductor[t] + 1]++;
  for (let c = 0; c < count; c++) start[c + 1] += start[c];
  const fill = start.slice(0, count);
  const triangle = new Uint32Array(conductor.length);
  for (let t = 0; t < conductor.length; t++) triangle[fill[conductor[t]]++] = t;
  return { start, triangle };
}
