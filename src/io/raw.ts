/**
 * What a reader hands to the loader: the file's triangles in the file's own units,
 * before welding, degenerate removal, unit scaling or conductor naming.
 */
export interface RawMesh {
  /** Vertex coordinates, 3 per vertex, in the file's units (files carry none). */
  positions: Float64Array;
  /** Vertex indices, 3 per triangle. */
  triangles: Uint32Array;
  /** Group index of each triangle, into `groupNames`. */
  group: Uint32Array;
  /** Name of each group as the file gives it; "" when unnamed. */
  groupNames: string[];
  /**
   * Per group, whether its name is one the user chose and a one-body file keeps: true for a
   * Gmsh `$PhysicalNames` name, false for the reader's made-up `surface_7`/`physical_101`.
   * Absent: no name is kept for a one-body file (STL and OBJ, whose exporters often write
   * generic names such as "Mesh" or the tool's name there).
   */
  groupNamed?: boolean[];
  /** Things a user should know, each with its place, e.g. "line 12: ...". */
  warnings: string[];
}

/** Growable typed arrays for readers that cannot know their size in advance (amortised doubling). */
export class GrowF64 {
  data: Float64Array;
  length = 0;
  constructor(capacity: number) { this.data = new Float64Array(Math.max(16, capacity)); }
  reserve(extra: number): void {
    if (this.length + extra <= this.data.length) return;
    let cap = this.data.length * 2;
    while (cap < this.length + extra) cap *= 2;
    const d = new Float64Array(cap);
    d.set(this.data.subarray(0, this.length));
    this.data = d;
  }
  push1(x: number): void {
    if (this.length >= this.data.length) this.reserve(1);
    this.data[this.length++] = x;
  }
  push3(x: number, y: number, z: number): void {
    if (this.length + 3 > this.data.length) this.reserve(3);
    const d = this.data, n = this.length;
    d[n] = x; d[n + 1] = y; d[n + 2] = z;
    this.length = n + 3;
  }
  toArray(): Float64Array { return this.data.slice(0, this.length); }
}

export class GrowU32 {
  data: Uint32Array;
  length = 0;
  constructor(capacity: number) { this.data = new Uint32Array(Math.max(16, capacity)); }
  reserve(extra: number): void {
    if (this.length + extra <= this.data.length) return;
    let cap = this.data.length * 2;
    while (cap < this.length + extra) cap *= 2;
    const d = new Uint32Array(cap);
    d.set(this.data.subarray(0, this.length));
    this.data = d;
  }
  push(v: number): void {
    if (this.length >= this.data.length) this.reserve(1);
    this.data[this.length++] = v;
  }
  push3(a: number, b: number, c: number): void {
    if (this.length + 3 > this.data.length) this.reserve(3);
    const d = this.data, n = this.length;
    d[n] = a; d[n + 1] = b; d[n + 2] = c;
    this.length = n + 3;
  }
  toArray(): Uint32Array { return this.data.slice(0, this.length); }
}

/**
 * Decode file bytes as text: UTF-8 when they are valid UTF-8, else Windows-1252 (what older
 * CAD tools on Windows write names in; every byte decodes). A byte-order mark is dropped.
 */
export function decodeText(input: string | Uint8Array): string {
  const s = typeof input === "string" ? input : decodeName(input);
  return s.charCodeAt(0) === 0xfeff ? s.slice(1) : s;
}

const UTF8 = new TextDecoder("utf-8", { fatal: true }), LATIN1 = new TextDecoder("latin1");
/**
 * Windows-1252 bytes 0x80–0x9F (the WHATWG Encoding Standard's index-windows-1252; Node's
 * "windows-1252" decoder gives ISO-8859-1 there instead).
 */
const CP1252_80 = [
  0x20ac, 0x81, 0x201a, 0x192, 0x201e, 0x2026, 0x2020, 0x2021, 0x2c6, 0x2030, 0x160, 0x2039, 0x152, 0x8d, 0x17d, 0x8f,
  0x90, 0x2018, 0x2019, 0x201c, 0x201d, 0x2022, 0x2013, 0x2014, 0x2dc, 0x2122, 0x161, 0x203a, 0x153, 0x9d, 0x17e, 0x178,
];
/** UTF-8 if valid, else Windows-1252. */
export function decodeName(bytes: Uint8Array): string {
  try { return UTF8.decode(bytes); } catch {
    return LATIN1.decode(bytes).replace(/[\x80-\x9f]/g, (c) => String.fromCharCode(CP1252_80[c.charCodeAt(0) - 0x80]));
  }
}

/**
 * Text written straight into bytes (ASCII for numbers and keywords, UTF-8 for names), so
 * writing a million facets makes no million intermediate strings.
 */
export class TextSink {
  private buf: Uint8Array;
  private n = 0;
  constructor(capacity = 1 << 16) { this.buf = new Uint8Array(capacity); }
  private room(extra: number): void {
    if (this.n + extra <= this.buf.length) return;
    let cap = this.buf.length * 2;
    while (cap < this.n + extra) cap *= 2;
    const b = new Uint8Array(cap);
    b.set(this.buf.subarray(0, this.n));
    this.buf = b;
  }
  /** Characters below U+0080 only (keywords, numbers). */
  ascii(s: string): this {
    const len = s.length;
    this.room(len);
    const b = this.buf;
    let n = this.n;
    for (let i = 0; i < len; i++) b[n++] = s.charCodeAt(i);
    this.n = n;
    return this;
  }
  /** Any text, UTF-8 encoded. */
  text(s: string): this {
    const e = new TextEncoder().encode(s);
    this.room(e.length);
    this.buf.set(e, this.n);
    this.n += e.length;
    return this;
  }
  bytes(): Uint8Array { return this.buf.slice(0, this.n); }
  toString(): string { return new TextDecoder("utf-8").decode(this.buf.subarray(0, this.n)); }
}
