/**
 * Gmsh MSH: ASCII 4.1, 4.0 and 2.x; binary 4.1 and 2.x. Layouts as given in the Gmsh
 * reference manual, chapter "Gmsh file formats", section "MSH file format" (4.1) and the
 * appendix on legacy formats (4.0, 2.2); written from the manual's description as remembered,
 * checked against hand-built files in tests/io/msh*.test.ts.
 *
 * Binary files: the `$MeshFormat` line reads `version 1 data-size`, followed by the int 1 in
 * the writer's byte order (how the byte order is told). In 4.1 data-size is sizeof(size_t),
 * 4 or 8, the width of counts and tags; ints are 4 bytes and coordinates 8-byte doubles. In 2.x
 * data-size is sizeof(double) (only 8 exists) and every integer is a 4-byte int. `$PhysicalNames`
 * stays text in binary files.
 *
 * Surface elements: triangles of any order (types 2, 9, 20, 21–25) give their 3 corner nodes,
 * which Gmsh lists first; the higher-order nodes are dropped with one warning (curved edges
 * become straight). Quadrangles (types 3, 10, 16) are split along their shorter diagonal,
 * with one warning. Points, lines and volume elements are skipped and only counted.
 *
 * Conductors come from physical surfaces (`$PhysicalNames` with dimension 2; unnamed physical
 * groups become `physical_N`). Without any physical group each surface entity would be one
 * face of a body, and calling the faces of a box six conductors would be wrong physics; so
 * surface entities that share nodes are joined into one body, named after its lowest entity
 * tag (`surface_7`), with a warning.
 */
import { InputError, atByte, atLine } from "../errors.js";
import { GrowF64, GrowU32, decodeText, decodeName, type RawMesh } from "./raw.js";

/** Nodes per element type (Gmsh manual, "MSH file format", element types 1–31, 92, 93). */
const NODES_PER_TYPE: Readonly<Record<number, number>> = {
  1: 2, 2: 3, 3: 4, 4: 4, 5: 8, 6: 6, 7: 5, 8: 3, 9: 6, 10: 9, 11: 10, 12: 27, 13: 18, 14: 14, 15: 1,
  16: 8, 17: 20, 18: 15, 19: 13, 20: 9, 21: 10, 22: 12, 23: 15, 24: 15, 25: 21, 26: 4, 27: 5, 28: 6,
  29: 20, 30: 35, 31: 56, 92: 64, 93: 125,
};
const TRIANGLE_TYPES = new Set([2, 9, 20, 21, 22, 23, 24, 25]);
const QUAD_TYPES = new Set([3, 10, 16]);
const POINT_TYPES = new Set([15]);
const LINE_TYPES = new Set([1, 8, 26, 27, 28]);

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
  let v: Version;
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

type Version = "4.1" | "4.0" | "2";

/**
 * What both readers gather: nodes by tag, surface elements by node tags (resolved once all
 * nodes are known), and counts of what was skipped. `place` is a line or a byte offset.
 */
class MeshBuilder {
  readonly nodeTags = new GrowF64(1024);
  readonly nodePlace = new GrowU32(1024);
  readonly pos = new GrowF64(3 * 1024);
  /** Node tags, 3 per triangle then 4 per quadrangle (doubles: tags may exceed 2^32). */
  readonly triTags = new GrowF64(3 * 1024);
  readonly triPlace = new GrowU32(1024);
  readonly triPhys = new GrowU32(1024);
  readonly triEntity = new GrowU32(1024);
  readonly quadTags = new GrowF64(4 * 16);
  readonly quadPlace = new GrowU32(16);
  readonly quadPhys = new GrowU32(16);
  readonly quadEntity = new GrowU32(16);
  higherOrder = 0;
  skippedPoints = 0;
  skippedLines = 0;
  skippedVolumes = 0;
  readonly unknownTypes = new Map<number, number>();
  readonly physicalNames = new Map<number, string>(); // physical surface tag -> name
  readonly entityPhysical = new Map<number, number>(); // surface entity tag -> first physical tag
  readonly warnings: string[] = [];
  constructor(readonly file: string, readonly place: (at: number) => string) {}

  fail(fault: string, at: number): never { throw new InputError(fault, this.file, this.place(at)); }

  addNode(tag: number, x: number, y: number, z: number, at: number): void {
    this.nodeTags.push1(tag);
    this.nodePlace.push(at);
    this.pos.push3(x, y, z);
  }

  /**
   * Index of each node tag: a typed array over the tag range when tags are dense (Gmsh numbers
   * nodes 1..n), else a Map. A tag defined twice is an error at its second definition.
   */
  private nodeLookup(): (tag: number) => number {
    const tags = this.nodeTags.data, n = this.nodeTags.length;
    let lo = Infinity, hi = -Infinity;
    for (let k = 0; k < n; k++) { const t = tags[k]; if (t < lo) lo = t; if (t > hi) hi = t; }
    if (n > 0 && hi - lo < 2 * n + 1024) {
      const index = new Int32Array(hi - lo + 1).fill(-1);
      for (let k = 0; k < n; k++) {
        const j = tags[k] - lo;
        if (index[j] >= 0) this.fail(`node tag ${tags[k]} defined twice`, this.nodePlace.data[k]);
        index[j] = k;
      }
      return (tag) => (tag >= lo && tag <= hi ? index[tag - lo] : -1);
    }
    const map = new Map<number, number>();
    for (let k = 0; k < n; k++) {
      if (map.has(tags[k])) this.fail(`node tag ${tags[k]} defined twice`, this.nodePlace.data[k]);
      map.set(tags[k], k);
    }
    return (tag) => map.get(tag) ?? -1;
  }

  /** Whether elements of this type are kept (surface elements); counts the others. */
  keeps(type: number, howMany = 1): boolean {
    if (TRIANGLE_TYPES.has(type) || QUAD_TYPES.has(type)) return true;
    if (POINT_TYPES.has(type)) this.skippedPoints += howMany;
    else if (LINE_TYPES.has(type)) this.skippedLines += howMany;
    else if (NODES_PER_TYPE[type] !== undefined) this.skippedVolumes += howMany;
    else this.unknownTypes.set(type, (this.unknownTypes.get(type) ?? 0) + howMany);
    return false;
  }

  /** A kept element with its corner node tags n0..n3 (n3 unused for triangles). */
  addFace(type: number, n0: number, n1: number, n2: number, n3: number, phys: number, entity: number, at: number): void {
    if (TRIANGLE_TYPES.has(type)) {
      this.triTags.push3(n0, n1, n2);
      this.triPlace.push(at); this.triPhys.push(phys); this.triEntity.push(entity);
      if (type !== 2) this.higherOrder++;
    } else {
      this.quadTags.push3(n0, n1, n2); this.quadTags.push1(n3);
      this.quadPlace.push(at); this.quadPhys.push(phys); this.quadEntity.push(entity);
    }
  }

  finish(): RawMesh {
    const { warnings } = this;
    const lookup = this.nodeLookup();
    const positions = this.pos.toArray();
    const nTri = this.triPlace.length, nQuad = this.quadPlace.length;
    const nt = nTri + 2 * nQuad;
    const triangles = new Uint32Array(3 * nt);
    const phys = new Uint32Array(nt), entity = new Uint32Array(nt);
    const node = (tag: number, at: number): number => {
      const v = lookup(tag);
      if (v < 0) this.fail(`element refers to node ${tag}, which $Nodes does not define`, at);
      return v;
    };
    for (let t = 0; t < nTri; t++) {
      const at = this.triPlace.data[t];
      for (let j = 0; j < 3; j++) triangles[3 * t + j] = node(this.triTags.data[3 * t + j], at);
      phys[t] = this.triPhys.data[t]; entity[t] = this.triEntity.data[t];
    }
    for (let q = 0; q < nQuad; q++) {
      const at = this.quadPlace.data[q];
      const a = node(this.quadTags.data[4 * q], at), b = node(this.quadTags.data[4 * q + 1], at);
      const c = node(this.quadTags.data[4 * q + 2], at), d = node(this.quadTags.data[4 * q + 3], at);
      // The shorter diagonal gives the better-shaped pair (larger minimum angle); both keep the quad's orientation.
      const t = nTri + 2 * q, o = 3 * t;
      if (dist2(positions, a, c) <= dist2(positions, b, d)) {
        triangles[o] = a; triangles[o + 1] = b; triangles[o + 2] = c; triangles[o + 3] = a; triangles[o + 4] = c; triangles[o + 5] = d;
      } else {
        triangles[o] = a; triangles[o + 1] = b; triangles[o + 2] = d; triangles[o + 3] = b; triangles[o + 4] = c; triangles[o + 5] = d;
      }
      phys[t] = phys[t + 1] = this.quadPhys.data[q];
      entity[t] = entity[t + 1] = this.quadEntity.data[q];
    }
    if (this.higherOrder > 0) warnings.push(`${this.higherOrder} higher-order triangle(s): corner nodes used, mid-side and interior nodes dropped (curved edges become straight)`);
    if (nQuad > 0) warnings.push(`${nQuad} quadrangle(s) split into 2 triangles each along the shorter diagonal`);
    for (const [type, n] of this.unknownTypes) warnings.push(`${n} element(s) of unknown type ${type} skipped`);
    if (nt === 0) {
      const other = [[this.skippedPoints, "point"], [this.skippedLines, "line"], [this.skippedVolumes, "volume"]]
        .filter(([n]) => (n as number) > 0).map(([n, what]) => `${n} ${what} element(s)`).join(", ");
      warnings.push(`no surface elements (triangles or quadrangles) in the file${other ? `; skipped: ${other}` : ""}`);
    }
    const { group, groupNames } = conductorGroups(triangles, phys, entity, nt, this.physicalNames, positions.length / 3, warnings);
    return { positions, triangles, group, groupNames, warnings };
  }
}

function dist2(p: Float64Array, a: number, b: number): number {
  const dx = p[3 * a] - p[3 * b], dy = p[3 * a + 1] - p[3 * b + 1], dz = p[3 * a + 2] - p[3 * b + 2];
  return dx * dx + dy * dy + dz * dz;
}

interface Cursor { lines: string[]; i: number }

function readMshAscii(bytes: Uint8Array, file: string): RawMesh {
  const src = decodeText(bytes);
  const c: Cursor = { lines: src.split("\n"), i: 0 };
  const b = new MeshBuilder(file, atLine);

  let tokLine = 0;
  const fail = (fault: string, line = c.i): never => b.fail(fault, line);
  /** Tokens of the next non-empty line inside `section`; an early `$End…` is an error. */
  const next = (section: string): string[] => {
    for (;;) {
      if (c.i >= c.lines.length) fail(`file ends inside ${section} (no $End${section.slice(1)})`);
      const s = c.lines[c.i++].trim();
      if (s === "") continue;
      if (s[0] === "$") fail(`${section} ends early at "${s.slice(0, 40)}": fewer entries than its counts announce`);
      tokLine = c.i;
      return s.split(/\s+/);
    }
  };
  const int = (tok: string | undefined, what: string): number => {
    if (tok === undefined) fail(`missing ${what}`);
    if (!/^[+-]?\d+$/.test(tok as string)) fail(`${what} "${(tok as string).slice(0, 40)}" is not an integer`);
    const v = Number(tok);
    if (!Number.isSafeInteger(v)) fail(`${what} ${tok} is out of range`);
    return v;
  };
  const count = (tok: string | undefined, what: string): number => {
    const v = int(tok, what);
    if (v < 0) fail(`${what} ${v} is negative`);
    // Every entry takes at least one line, so a count beyond the lines left is a lie.
    if (v > c.lines.length - c.i + 1) fail(`${what} ${v} is more than the file can hold (${c.lines.length - c.i + 1} lines left)`);
    return v;
  };
  const real = (tok: string | undefined, what: string): number => {
    if (tok === undefined) fail(`missing ${what}`);
    const t = tok as string;
    const v = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(t) ? Number(t) : NaN;
    if (!Number.isFinite(v)) fail(`${what} "${t.slice(0, 40)}" is not a finite number`);
    return v;
  };
  const skipSection = (name: string): void => {
    const endTag = "$End" + name.slice(1);
    const from = c.i;
    while (c.i < c.lines.length) { if (c.lines[c.i++].trim() === endTag) return; }
    fail(`file ends inside ${name} (no ${endTag})`, from);
  };
  const closeSection = (name: string): void => {
    const endTag = "$End" + name.slice(1);
    while (c.i < c.lines.length) {
      const s = c.lines[c.i++].trim();
      if (s === "") continue;
      if (s !== endTag) fail(`expected ${endTag}, found "${s.slice(0, 40)}": more entries than the counts announce`);
      return;
    }
    fail(`file ends inside ${name} (no ${endTag})`);
  };
  /** Element `e` of `type`: its corner tags from position `from` on. */
  const face = (e: string[], from: number, type: number, phys: number, entity: number, line: number): void => {
    const need = NODES_PER_TYPE[type];
    if (e.length - from < need) fail(`element of type ${type} needs ${need} node tags, found ${Math.max(0, e.length - from)}`, line);
    const quad = QUAD_TYPES.has(type);
    b.addFace(type, int(e[from], "node tag"), int(e[from + 1], "node tag"), int(e[from + 2], "node tag"), quad ? int(e[from + 3], "node tag") : 0, phys, entity, line);
  };

  // $MeshFormat (already checked by readMsh) comes first.
  while (c.i < c.lines.length && c.lines[c.i].trim() === "") c.i++;
  c.i++;
  const version = next("$MeshFormat")[0];
  const v: Version = version === "4.1" ? "4.1" : version.startsWith("4") ? "4.0" : "2";
  closeSection("$MeshFormat");
  let sawNodes = false, sawElements = false;

  while (c.i < c.lines.length) {
    const head = c.lines[c.i++].trim();
    if (head === "") continue;
    if (head[0] !== "$") fail(`expected a section such as "$Nodes", found "${head.slice(0, 40)}"`);
    if (head === "$PhysicalNames") {
      const n = count(next(head)[0], "number of physical names");
      for (let k = 0; k < n; k++) {
        const t = next(head);
        const line = tokLine, raw = c.lines[tokLine - 1];
        const dim = int(t[0], "physical dimension"), tag = int(t[1], "physical tag");
        const q1 = raw.indexOf('"'), q2 = raw.lastIndexOf('"');
        if (q1 < 0 || q2 <= q1) fail("physical name must be in double quotes", line);
        if (dim === 2) b.physicalNames.set(tag, raw.slice(q1 + 1, q2));
      }
      closeSection(head);
    } else if (head === "$Entities" && v !== "2") {
      const t = next(head);
      const np = count(t[0], "number of points"), nc = count(t[1], "number of curves");
      const ns = count(t[2], "number of surfaces"), nv = count(t[3], "number of volumes");
      for (let k = 0; k < np + nc; k++) next(head);
      for (let k = 0; k < ns; k++) {
        const e = next(head);
        const line = tokLine;
        const tag = int(e[0], "surface tag");
        const nphys = int(e[7], "number of physical tags");
        if (nphys < 0 || 8 + nphys > e.length) fail(`surface ${tag} announces ${nphys} physical tags but the line holds fewer`, line);
        if (nphys > 0) b.entityPhysical.set(tag, Math.abs(int(e[8], "physical tag")));
      }
      for (let k = 0; k < nv; k++) next(head);
      closeSection(head);
    } else if (head === "$Nodes") {
      sawNodes = true;
      if (v !== "2") {
        const t = next(head);
        const blocks = count(t[0], "number of node blocks");
        const total = count(t[1], "number of nodes");
        let seen = 0;
        for (let k = 0; k < blocks; k++) {
          const h = next(head);
          int(h[0], "entity tag"); int(h[1], "entity dimension"); int(h[2], "parametric flag");
          const m = count(h[3], "number of nodes in block");
          if (v === "4.1") {
            // 4.1: the block's tags, then its coordinates.
            const tags: number[] = [];
            for (let j = 0; j < m; j++) tags.push(int(next(head)[0], "node tag"));
            for (let j = 0; j < m; j++) {
              const x = next(head);
              b.addNode(tags[j], real(x[0], "x coordinate"), real(x[1], "y coordinate"), real(x[2], "z coordinate"), tokLine);
            }
          } else {
            // 4.0: one line per node, tag then coordinates.
            for (let j = 0; j < m; j++) {
              const x = next(head);
              b.addNode(int(x[0], "node tag"), real(x[1], "x coordinate"), real(x[2], "y coordinate"), real(x[3], "z coordinate"), tokLine);
            }
          }
          seen += m;
        }
        if (seen !== total) b.warnings.push(`line ${c.i}: $Nodes announces ${total} nodes, blocks hold ${seen}`);
      } else {
        const n = count(next(head)[0], "number of nodes");
        for (let k = 0; k < n; k++) {
          const x = next(head);
          b.addNode(int(x[0], "node tag"), real(x[1], "x coordinate"), real(x[2], "y coordinate"), real(x[3], "z coordinate"), tokLine);
        }
      }
      closeSection(head);
    } else if (head === "$Elements") {
      sawElements = true;
      if (v !== "2") {
        const t = next(head);
        const blocks = count(t[0], "number of element blocks");
        count(t[1], "number of elements");
        for (let k = 0; k < blocks; k++) {
          const h = next(head);
          // 4.1 blocks start "entityDim entityTag"; 4.0 blocks "entityTag entityDim".
          const dim = int(h[v === "4.1" ? 0 : 1], "entity dimension"), entity = int(h[v === "4.1" ? 1 : 0], "entity tag");
          const type = int(h[2], "element type"), m = count(h[3], "number of elements in block");
          const phys = dim === 2 ? b.entityPhysical.get(entity) ?? 0 : 0;
          const kept = b.keeps(type, m);
          for (let j = 0; j < m; j++) {
            const e = next(head);
            if (kept) face(e, 1, type, phys, entity, tokLine);
          }
        }
      } else {
        const n = count(next(head)[0], "number of elements");
        for (let k = 0; k < n; k++) {
          const e = next(head);
          const line = tokLine;
          const type = int(e[1], "element type");
          const ntags = int(e[2], "number of tags");
          if (ntags < 0 || 3 + ntags > e.length) fail(`element announces ${ntags} tags but the line holds fewer`, line);
          if (!b.keeps(type)) continue;
          const phys = ntags >= 1 ? Math.abs(int(e[3], "physical tag")) : 0;
          const entity = ntags >= 2 ? Math.abs(int(e[4], "elementary tag")) : 0;
          face(e, 3 + ntags, type, phys, entity, line);
        }
      }
      closeSection(head);
    } else if (head.startsWith("$End")) {
      fail(`"${head.slice(0, 40)}" without its section`);
    } else {
      skipSection(head);
    }
  }
  if (!sawNodes) fail("no $Nodes section", c.lines.length);
  if (!sawElements) fail("no $Elements section", c.lines.length);
  return b.finish();
}

/**
 * Binary 4.1 and 2.x from byte `start` (just after the format line). Every fault names the
 * byte offset where the bad value begins.
 */
function readMshBinary(bytes: Uint8Array, start: number, file: string, v: Version, dataSize: number): RawMesh {
  const n = bytes.length;
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const b = new MeshBuilder(file, atByte);
  const fail = (fault: string, at: number): never => b.fail(fault, at);
  let p = start;
  let little = true;
  let section = "$MeshFormat";

  const need = (k: number, what: string): void => {
    if (p + k > n) fail(`file ends inside ${section} while reading ${what} (${k} bytes needed, ${n - p} left)`, p);
  };
  /** Move to byte `to`, which must lie inside the file. */
  const seek = (to: number, what: string): void => {
    if (to > n) fail(`file ends inside ${section} while reading ${what} (${to - p} bytes needed, ${n - p} left)`, p);
    p = to;
  };
  const i32 = (what: string): number => { need(4, what); const x = dv.getInt32(p, little); p += 4; return x; };
  /** An unsigned count or tag: size_t (4 or 8 bytes) in 4.1, int in 2.x. */
  const uint = (what: string): number => {
    const at = p;
    if (v === "2" || dataSize === 4) {
      need(4, what);
      const x = v === "2" ? dv.getInt32(p, little) : dv.getUint32(p, little);
      p += 4;
      if (x < 0) fail(`${what} ${x} is negative`, at);
      return x;
    }
    need(8, what);
    const lo = dv.getUint32(p + (little ? 0 : 4), little), hi = dv.getUint32(p + (little ? 4 : 0), little);
    p += 8;
    if (hi >= 0x200000) fail(`${what} ${hi * 4294967296 + lo} is out of range`, at);
    return hi * 4294967296 + lo;
  };
  const f64 = (what: string): number => {
    need(8, what);
    const x = dv.getFloat64(p, little);
    if (x - x !== 0) fail(`${what} is ${x} (not a finite number)`, p);
    p += 8;
    return x;
  };
  /** A count of entries each at least `minBytes` long: more than the bytes left can hold is a lie. */
  const count = (what: string, minBytes: number): number => {
    const at = p;
    const c = uint(what);
    if (c * minBytes > n - p) fail(`${what} ${c} is more than the file can hold (${n - p} bytes left)`, at);
    return c;
  };
  const latin1 = new TextDecoder("latin1");
  /** The next non-blank text line; names are UTF-8, section heads and counts ASCII. */
  const textLine = (names = false): string => {
    while (p < n && (bytes[p] === 10 || bytes[p] === 13 || bytes[p] === 32 || bytes[p] === 9)) p++;
    let q = p;
    while (q < n && bytes[q] !== 10) q++;
    const s = (names ? decodeName(bytes.subarray(p, q)) : latin1.decode(bytes.subarray(p, q))).trim();
    p = Math.min(n, q + 1);
    return s;
  };
  const closeSection = (): void => {
    const endTag = "$End" + section.slice(1);
    const at = p;
    const s = textLine();
    if (s !== endTag) {
      fail(p >= n && s === "" ? `file ends inside ${section} (no ${endTag})`
        : `expected ${endTag}, found "${printable(s)}": the section holds more than its counts announce, or its data size is wrong`, at);
    }
  };
  const buf = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const skipTo = (endTag: string): void => {
    const at = p;
    const k = buf.indexOf(endTag, p, "latin1");
    if (k < 0) fail(`file ends inside ${section} (no ${endTag})`, at);
    p = k;
    textLine();
  };

  // The int 1 tells the byte order; it starts right after the format line's newline.
  need(4, "the byte-order int after the format line");
  const one = p;
  if (dv.getInt32(p, true) === 1) little = true;
  else if (dv.getInt32(p, false) === 1) little = false;
  else fail(`binary MSH: expected the int 1 after the format line (it tells the byte order), found bytes ${[...bytes.subarray(p, p + 4)].map((x) => x.toString(16).padStart(2, "0")).join(" ")}`, one);
  p += 4;
  closeSection();

  let sawNodes = false, sawElements = false;
  while (p < n) {
    const at = p;
    const head = textLine();
    if (head === "") continue;
    if (head[0] !== "$") fail(`expected a section such as "$Nodes", found "${printable(head)}"`, at);
    if (head.startsWith("$End")) fail(`"${printable(head)}" without its section`, at);
    section = head;
    if (head === "$PhysicalNames") {
      // Text even in binary files.
      const countAt = p;
      const c = Number(textLine());
      if (!Number.isSafeInteger(c) || c < 0) fail("number of physical names is not a count", countAt);
      for (let k = 0; k < c; k++) {
        const lineAt = p;
        const s = textLine(true);
        const m = /^(\d+)\s+([+-]?\d+)\s+"(.*)"$/.exec(s);
        if (m === null) fail(s.startsWith("$") ? `$PhysicalNames ends early: fewer names than its count announces` : `physical name entry "${printable(s)}" is not: dimension tag "name"`, lineAt);
        const [, dim, tag, name] = m as RegExpExecArray;
        if (Number(dim) === 2) b.physicalNames.set(Number(tag), name);
      }
      closeSection();
    } else if (head === "$Entities" && v === "4.1") {
      const np = count("number of points", 4 + 24 + (dataSize)), nc = count("number of curves", 4 + 48 + 2 * dataSize);
      const ns = count("number of surfaces", 4 + 48 + 2 * dataSize), nv = count("number of volumes", 4 + 48 + 2 * dataSize);
      for (let k = 0; k < np; k++) {
        i32("point tag"); seek(p + 24, "point coordinates");
        const m = count("number of physical tags", 4);
        seek(p + 4 * m, "physical tags");
      }
      const entity = (kind: string, keep: boolean): void => {
        const tag = i32(`${kind} tag`);
        seek(p + 48, `${kind} bounding box`);
        const m = count("number of physical tags", 4);
        if (m > 0) { const ph = i32("physical tag"); if (keep) b.entityPhysical.set(tag, Math.abs(ph)); seek(p + 4 * (m - 1), "physical tags"); }
        const nb = count("number of bounding entities", 4);
        seek(p + 4 * nb, "bounding entity tags");
      };
      for (let k = 0; k < nc; k++) entity("curve", false);
      for (let k = 0; k < ns; k++) entity("surface", true);
      for (let k = 0; k < nv; k++) entity("volume", false);
      closeSection();
    } else if (head === "$Nodes") {
      sawNodes = true;
      if (v === "4.1") {
        const blocks = count("number of node blocks", 12 + dataSize);
        const total = uint("number of nodes");
        uint("minimum node tag"); uint("maximum node tag");
        let seen = 0;
        for (let k = 0; k < blocks; k++) {
          const dim = i32("entity dimension"); i32("entity tag");
          const parametric = i32("parametric flag");
          const m = count("number of nodes in block", dataSize + 24);
          const extra = parametric !== 0 ? Math.max(0, Math.min(3, dim)) : 0;
          const tagsAt = p;
          need(m * dataSize, "node tags");
          const coordsAt = p + m * dataSize;
          for (let j = 0; j < m; j++) {
            p = tagsAt + j * dataSize;
            const tag = uint("node tag");
            p = coordsAt + j * 8 * (3 + extra);
            const at = p;
            const x = f64("x coordinate"), y = f64("y coordinate"), z = f64("z coordinate");
            b.addNode(tag, x, y, z, at);
          }
          p = coordsAt;
          seek(coordsAt + m * 8 * (3 + extra), "node coordinates");
          seen += m;
        }
        if (seen !== total) b.warnings.push(`byte ${p}: $Nodes announces ${total} nodes, blocks hold ${seen}`);
      } else {
        const countAt = p;
        const c = Number(textLine());
        if (!Number.isSafeInteger(c) || c < 0) fail("number of nodes is not a count", countAt);
        if (c * 28 > n - p) fail(`number of nodes ${c} is more than the file can hold (${n - p} bytes left)`, countAt);
        for (let k = 0; k < c; k++) {
          const tagAt = p;
          const tag = i32("node tag");
          if (tag < 0) fail(`node tag ${tag} is negative`, tagAt);
          const at = p;
          const x = f64("x coordinate"), y = f64("y coordinate"), z = f64("z coordinate");
          b.addNode(tag, x, y, z, at);
        }
      }
      closeSection();
    } else if (head === "$Elements") {
      sawElements = true;
      if (v === "4.1") {
        const blocks = count("number of element blocks", 12 + dataSize);
        uint("number of elements"); uint("minimum element tag"); uint("maximum element tag");
        for (let k = 0; k < blocks; k++) {
          const dim = i32("entity dimension"), entity = i32("entity tag");
          const typeAt = p;
          const type = i32("element type");
          const nodes = NODES_PER_TYPE[type];
          if (nodes === undefined) fail(`element type ${type} unknown: its size is not known, so the rest cannot be read`, typeAt);
          const m = count("number of elements in block", dataSize * (1 + nodes));
          const phys = dim === 2 ? b.entityPhysical.get(entity) ?? 0 : 0;
          if (!b.keeps(type, m)) { seek(p + m * dataSize * (1 + nodes), "elements"); continue; }
          for (let j = 0; j < m; j++) {
            const at = p;
            uint("element tag");
            const e0 = p;
            const n0 = uint("node tag"), n1 = uint("node tag"), n2 = uint("node tag");
            const n3 = QUAD_TYPES.has(type) ? uint("node tag") : 0;
            b.addFace(type, n0, n1, n2, n3, phys, Math.abs(entity), at);
            p = e0 + nodes * dataSize;
          }
        }
      } else {
        const countAt = p;
        const total = Number(textLine());
        if (!Number.isSafeInteger(total) || total < 0) fail("number of elements is not a count", countAt);
        if (total * 12 > n - p) fail(`number of elements ${total} is more than the file can hold (${n - p} bytes left)`, countAt);
        let read = 0;
        while (read < total) {
          const typeAt = p;
          const type = i32("element type");
          const nodes = NODES_PER_TYPE[type];
          if (nodes === undefined) fail(`element type ${type} unknown: its size is not known, so the rest cannot be read`, typeAt);
          const followAt = p;
          const follow = i32("number of elements following");
          if (follow <= 0 || read + follow > total) fail(`element block announces ${follow} elements, ${total - read} are left of the ${total} announced`, followAt);
          const tagsAt = p;
          const ntags = i32("number of tags");
          if (ntags < 0 || ntags > 1000) fail(`number of tags ${ntags} is not plausible`, tagsAt);
          const size = 4 * (1 + ntags + nodes);
          if (follow * size > n - p) fail(`element block of ${follow} elements is more than the file can hold (${n - p} bytes left)`, followAt);
          const kept = b.keeps(type, follow);
          for (let j = 0; j < follow; j++) {
            const at = p;
            if (kept) {
              p += 4;
              const phys = ntags >= 1 ? Math.abs(i32("physical tag")) : 0;
              const entity = ntags >= 2 ? Math.abs(i32("elementary tag")) : 0;
              p = at + 4 * (1 + ntags);
              const n0 = uint("node tag"), n1 = uint("node tag"), n2 = uint("node tag");
              const n3 = QUAD_TYPES.has(type) ? uint("node tag") : 0;
              b.addFace(type, n0, n1, n2, n3, phys, entity, at);
            }
            p = at + size;
          }
          read += follow;
        }
      }
      closeSection();
    } else {
      skipTo("$End" + head.slice(1));
    }
  }
  if (!sawNodes) fail("no $Nodes section", n);
  if (!sawElements) fail("no $Elements section", n);
  return b.finish();
}

/** Text from a binary file, safe to print in one line. */
function printable(s: string): string {
  return s.slice(0, 40).replace(/[^\x20-\x7e]/g, "?");
}

function conductorGroups(
  triangles: Uint32Array, phys: Uint32Array, entity: Uint32Array, nt: number,
  physicalNames: Map<number, string>, nodeCount: number, warnings: string[],
): { group: Uint32Array; groupNames: string[] } {
  const group = new Uint32Array(nt);
  const groupNames: string[] = [];
  const byKey = new Map<string, number>();
  const use = (key: string, name: string): number => {
    let g = byKey.get(key);
    if (g === undefined) { g = groupNames.length; groupNames.push(name); byKey.set(key, g); }
    return g;
  };
  let anyPhysical = false;
  for (let t = 0; t < nt; t++) if (phys[t] !== 0) { anyPhysical = true; break; }
  if (anyPhysical) {
    // Elements come in runs of one entity: remember the last key's group.
    let lastP = -1, lastE = -1, lastG = 0;
    for (let t = 0; t < nt; t++) {
      const p = phys[t], e = p !== 0 ? 0 : entity[t];
      if (p !== lastP || e !== lastE) {
        lastG = p !== 0 ? use(`p${p}`, physicalNames.get(p) ?? `physical_${p}`) : use(`e${e}`, `surface_${e}`);
        lastP = p; lastE = e;
      }
      group[t] = lastG;
    }
    return { group, groupNames };
  }
  // No physical groups: join entities through shared nodes (union-find over entity tags).
  const entities = new Map<number, number>();
  for (let t = 0; t < nt; t++) if (!entities.has(entity[t])) entities.set(entity[t], entities.size);
  const parent = new Int32Array(entities.size);
  for (let k = 0; k < parent.length; k++) parent[k] = k;
  const find = (a: number): number => { while (parent[a] !== a) { parent[a] = parent[parent[a]]; a = parent[a]; } return a; };
  const nodeOwner = new Int32Array(nodeCount).fill(-1);
  let runTag = -1, e = 0;
  for (let t = 0; t < nt; t++) {
    if (entity[t] !== runTag) { runTag = entity[t]; e = entities.get(runTag) as number; }
    for (let j = 0; j < 3; j++) {
      const v = triangles[3 * t + j];
      if (nodeOwner[v] < 0) nodeOwner[v] = e;
      else { const a = find(nodeOwner[v]), b = find(e); if (a !== b) parent[Math.max(a, b)] = Math.min(a, b); }
    }
  }
  const lowest = new Map<number, number>();
  for (const [tag, e] of entities) {
    const r = find(e);
    const l = lowest.get(r);
    if (l === undefined || tag < l) lowest.set(r, tag);
  }
  let lastE = -1, lastG = 0;
  for (let t = 0; t < nt; t++) {
    if (entity[t] !== lastE) {
      lastE = entity[t];
      const tag = lowest.get(find(entities.get(lastE) as number)) as number;
      lastG = use(`b${tag}`, `surface_${tag}`);
    }
    group[t] = lastG;
  }
  if (entities.size > groupNames.length) {
    warnings.push(`no physical groups: ${entities.size} surface entities joined into ${groupNames.length} conductor(s) by shared nodes; define physical surfaces in Gmsh to choose conductors and their names`);
  }
  return { group, groupNames };
}
