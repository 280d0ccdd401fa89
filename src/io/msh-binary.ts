/**
 * Binary Gmsh MSH 4.1 and 2.x. The `$MeshFormat` line reads `version 1 data-size`, followed by
 * the int 1 in the writer's byte order (how the byte order is told). In 4.1 data-size is
 * sizeof(size_t), 4 or 8, the width of counts and tags; ints are 4 bytes and coordinates 8-byte
 * doubles. In 2.x data-size is sizeof(double) (only 8 exists) and every integer is a 4-byte int.
 * `$PhysicalNames` stays text in binary files.
 */
import { atByte } from "../errors.js";
import { decodeName, type RawMesh } from "./raw.js";
import { MeshBuilder, NODES_PER_TYPE, QUAD_TYPES, type MshVersion } from "./msh-elements.js";

/**
 * Binary 4.1 and 2.x from byte `start` (just after the format line). Every fault names the
 * byte offset where the bad value begins.
 */
export function readMshBinary(bytes: Uint8Array, start: number, file: string, v: MshVersion, dataSize: number): RawMesh {
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
