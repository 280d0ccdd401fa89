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

/** Decode file bytes as UTF-8 text (invalid sequences become U+FFFD; a byte-order mark is dropped). */
export function decodeText(input: string | Uint8Array): string {
  const s = typeof input === "string" ? input : new TextDecoder("utf-8").decode(input);
  return s.charCodeAt(0) === 0xfeff ? s.slice(1) : s;
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
