/**
 * Gmsh MSH element types and the mesh both readers (./msh-ascii.ts, ./msh-binary.ts) build:
 * nodes by tag, surface elements by node tags, resolved to triangles once all nodes are known.
 *
 * Surface elements: triangles of any order (types 2, 9, 20, 21–25) give their 3 corner nodes,
 * which Gmsh lists first; the higher-order nodes are dropped with one warning (curved edges
 * become straight). Quadrangles (types 3, 10, 16) are split along their shorter diagonal,
 * with one warning. Points, lines and volume elements are skipped and only counted.
 */
import { InputError } from "../errors.js";
import { GrowF64, GrowU32, type RawMesh } from "./raw.js";
import { conductorGroups } from "./msh-conductors.js";

/** Nodes per element type (Gmsh manual, "MSH file format", element types 1–31, 92, 93). */
export const NODES_PER_TYPE: Readonly<Record<number, number>> = {
  1: 2, 2: 3, 3: 4, 4: 4, 5: 8, 6: 6, 7: 5, 8: 3, 9: 6, 10: 9, 11: 10, 12: 27, 13: 18, 14: 14, 15: 1,
  16: 8, 17: 20, 18: 15, 19: 13, 20: 9, 21: 10, 22: 12, 23: 15, 24: 15, 25: 21, 26: 4, 27: 5, 28: 6,
  29: 20, 30: 35, 31: 56, 92: 64, 93: 125,
};
const TRIANGLE_TYPES = new Set([2, 9, 20, 21, 22, 23, 24, 25]);
export const QUAD_TYPES = new Set([3, 10, 16]);
const POINT_TYPES = new Set([15]);
const LINE_TYPES = new Set([1, 8, 26, 27, 28]);

/** The MSH versions read: 4.1, 4.0 and 2.x. */
export type MshVersion = "4.1" | "4.0" | "2";

/**
 * What both readers gather: nodes by tag, surface elements by node tags (resolved once all
 * nodes are known), and counts of what was skipped. `place` is a line or a byte offset.
 */
export class MeshBuilder {
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
    const { group, groupNames, groupNamed } = conductorGroups(triangles, phys, entity, nt, this.physicalNames, positions.length / 3, warnings);
    return { positions, triangles, group, groupNames, groupNamed, warnings };
  }
}

function dist2(p: Float64Array, a: number, b: number): number {
  const dx = p[3 * a] - p[3 * b], dy = p[3 * a + 1] - p[3 * b + 1], dz = p[3 * a + 2] - p[3 * b + 2];
  return dx * dx + dy * dy + dz * dz;
}
