/**
 * Tiny Gmsh MSH files written byte by byte, following the layouts of the Gmsh reference
 * manual ("MSH file format" for 4.1, legacy formats for 4.0 and 2.2). The model is the one
 * of the text fixtures: a unit right tetrahedron at the origin (surfaces 1 and 2, physical
 * 101 "anode") and another shifted to x = 3 (surface 3, physical 102 "cathode"), plus one
 * point and one line element, which readers must skip.
 */
const enc = (s: string) => new TextEncoder().encode(s);

/** Byte writer in a chosen byte order; `sz` writes a size_t of `sizeT` bytes. */
export class ByteWriter {
  private parts: number[] = [];
  constructor(readonly little = true, readonly sizeT: 4 | 8 = 8) {}
  text(s: string): this { for (const b of enc(s)) this.parts.push(b); return this; }
  private raw(n: number, set: (dv: DataView) => void): this {
    const dv = new DataView(new ArrayBuffer(n));
    set(dv);
    for (let i = 0; i < n; i++) this.parts.push(dv.getUint8(i));
    return this;
  }
  i32(x: number): this { return this.raw(4, (dv) => dv.setInt32(0, x, this.little)); }
  f64(x: number): this { return this.raw(8, (dv) => dv.setFloat64(0, x, this.little)); }
  sz(x: number): this {
    return this.sizeT === 4 ? this.raw(4, (dv) => dv.setUint32(0, x, this.little)) : this.raw(8, (dv) => dv.setBigUint64(0, BigInt(x), this.little));
  }
  bytes(): Uint8Array { return Uint8Array.from(this.parts); }
  get length(): number { return this.parts.length; }
}

const A = [[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1]];
/** Node coordinates by tag 1..8. */
export const NODES: number[][] = [...A, ...A.map(([x, y, z]) => [x + 3, y, z])];
/** Triangles (node tags) of surfaces 1, 2 (tet A) and 3 (tet B). */
const FACES = [[1, 3, 2], [1, 2, 4], [1, 4, 3], [2, 3, 4]];
export const SURFACES: Array<{ tag: number; phys: number; tris: number[][] }> = [
  { tag: 1, phys: 101, tris: FACES.slice(0, 2) },
  { tag: 2, phys: 101, tris: FACES.slice(2) },
  { tag: 3, phys: 102, tris: FACES.map((f) => f.map((n) => n + 4)) },
];
const NAMES = '$PhysicalNames\n2\n2 101 "anode"\n2 102 "cathode"\n$EndPhysicalNames\n';

/** Binary MSH 4.1 with $Entities, $Nodes in two blocks and $Elements in five. */
export function msh41Binary(little = true, sizeT: 4 | 8 = 8): Uint8Array {
  const w = new ByteWriter(little, sizeT);
  w.text(`$MeshFormat\n4.1 1 ${sizeT}\n`).i32(1).text("\n$EndMeshFormat\n").text(NAMES);
  w.text("$Entities\n").sz(1).sz(0).sz(3).sz(0);
  w.i32(1).f64(0).f64(0).f64(0).sz(0);
  for (const s of SURFACES) {
    w.i32(s.tag);
    for (const b of [0, 0, 0, 4, 1, 1]) w.f64(b);
    w.sz(1).i32(s.phys).sz(0);
  }
  w.text("\n$EndEntities\n$Nodes\n").sz(2).sz(8).sz(1).sz(8);
  for (const [entity, first] of [[1, 1], [3, 5]]) {
    w.i32(2).i32(entity).i32(0).sz(4);
    for (let k = 0; k < 4; k++) w.sz(first + k);
    for (let k = 0; k < 4; k++) for (const x of NODES[first - 1 + k]) w.f64(x);
  }
  w.text("\n$EndNodes\n$Elements\n").sz(5).sz(10).sz(1).sz(10);
  let tag = 1;
  for (const s of SURFACES) {
    w.i32(2).i32(s.tag).i32(2).sz(s.tris.length);
    for (const t of s.tris) { w.sz(tag++); for (const n of t) w.sz(n); }
  }
  w.i32(0).i32(1).i32(15).sz(1).sz(tag++).sz(1);
  w.i32(1).i32(1).i32(1).sz(1).sz(tag++).sz(1).sz(2);
  w.text("\n$EndElements\n");
  return w.bytes();
}

/** Binary MSH 2.2: nodes as (int tag, 3 doubles), elements in typed runs with 2 tags each. */
export function msh22Binary(little = true): Uint8Array {
  const w = new ByteWriter(little, 4);
  w.text("$MeshFormat\n2.2 1 8\n").i32(1).text("\n$EndMeshFormat\n").text(NAMES);
  w.text("$Nodes\n8\n");
  NODES.forEach((x, k) => { w.i32(k + 1); for (const c of x) w.f64(c); });
  w.text("\n$EndNodes\n$Elements\n10\n");
  // One run of the 8 triangles, then a point and a line.
  w.i32(2).i32(8).i32(2);
  let tag = 1;
  for (const s of SURFACES) for (const t of s.tris) { w.i32(tag++).i32(s.phys).i32(s.tag); for (const n of t) w.i32(n); }
  w.i32(15).i32(1).i32(2).i32(tag++).i32(0).i32(1).i32(1);
  w.i32(1).i32(1).i32(2).i32(tag++).i32(0).i32(1).i32(1).i32(2);
  w.text("\n$EndElements\n");
  return w.bytes();
}

/** ASCII MSH 4.0: entity blocks start "tag dim", nodes are "tag x y z" lines. */
export function msh40Ascii(): string {
  let s = "$MeshFormat\n4 0 8\n$EndMeshFormat\n" + NAMES;
  s += "$Entities\n1 0 3 0\n1 0 0 0 0 0 0 0\n";
  for (const f of SURFACES) s += `${f.tag} 0 0 0 4 1 1 1 ${f.phys} 0\n`;
  s += "$EndEntities\n$Nodes\n2 8\n";
  for (const [entity, first] of [[1, 1], [3, 5]]) {
    s += `${entity} 2 0 4\n`;
    for (let k = 0; k < 4; k++) s += `${first + k} ${NODES[first - 1 + k].join(" ")}\n`;
  }
  s += "$EndNodes\n$Elements\n5 10\n";
  let tag = 1;
  for (const f of SURFACES) {
    s += `${f.tag} 2 2 ${f.tris.length}\n`;
    for (const t of f.tris) s += `${tag++} ${t.join(" ")}\n`;
  }
  s += `1 0 15 1\n${tag++} 1\n1 1 1 1\n${tag++} 1 2\n$EndElements\n`;
  return s;
}
