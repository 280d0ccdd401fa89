/**
 * Wavefront OBJ (the format as described in Wavefront's "Advanced Visualizer" manual,
 * Appendix B1, "Object Files (.obj)"): only `v` and `f` carry geometry here.
 *
 * Conductors: `o` names objects, `g` names groups. When a file has any `o` statement the
 * objects are the conductors and the groups inside them are parts of the same body (CAD and
 * Blender exports use `g` for material or face sets within one object). A file without `o`
 * takes its conductors from `g`. Faces before any name form an unnamed group. A statement
 * naming several groups (`g a b`) is taken as one group named by the whole list ("a b");
 * `g default` is the unnamed group.
 *
 * Polygons: convex ones are fanned from their first vertex; non-convex planar ones are cut
 * by ear clipping (the two-ears theorem, G. H. Meisters, "Polygons have ears", Amer. Math.
 * Monthly 82 (1975) 648–651) in the plane of their Newell normal.
 */
import type { SurfaceMesh } from "../mesh/model.js";
import { InputError, atLine } from "../errors.js";
import { GrowF64, GrowU32, decodeText, type RawMesh } from "./raw.js";
import { formatCoordinate, toFileUnits, trianglesByConductor } from "./stl.js";
import { METRES_PER_UNIT } from "./units.js";

export function readObj(text: string | Uint8Array, file: string): RawMesh {
  const src = decodeText(text);
  if (src.trim().length === 0) throw new InputError("empty file", file);
  const pos = new GrowF64(1024);
  const polyIndex = new GrowU32(1024); // 0-based vertex indices of every polygon, concatenated
  const polyStart = new GrowU32(256); polyStart.push(0);
  const polyLine = new GrowU32(256);
  const polyObject = new GrowU32(256);
  const polyGroup = new GrowU32(256);
  const objectNames: string[] = [""], groupNames: string[] = [""];
  const objectIndex = new Map<string, number>([["", 0]]), groupIndex = new Map<string, number>([["", 0]]);
  let curObject = 0, curGroup = 0, sawObject = false;
  const warnings: string[] = [];
  const unknown = new Map<string, { line: number; count: number }>();
  let degenerateFaces = 0, firstDegenerate = 0;
  let pending = -1, pendingLine = 0; // highest forward (positive) reference and where it was made

  let lineNo = 0, i = 0;
  const n = src.length;
  while (i < n) {
    // Join continuation lines (a trailing backslash) into one statement.
    let stmt = "";
    const firstLine = lineNo + 1;
    for (;;) {
      let j = src.indexOf("\n", i);
      if (j < 0) j = n;
      lineNo++;
      let seg = src.slice(i, j);
      i = j + 1;
      if (seg.endsWith("\r")) seg = seg.slice(0, -1);
      if (seg.endsWith("\\") && i < n) { stmt += seg.slice(0, -1) + " "; continue; }
      stmt += seg;
      break;
    }
    const hash = stmt.indexOf("#");
    if (hash >= 0) stmt = stmt.slice(0, hash);
    const words = stmt.trim().split(/\s+/);
    const key = words[0];
    if (key === "") continue;
    const place = atLine(firstLine);
    if (key === "v") {
      if (words.length < 4) throw new InputError(`vertex needs 3 coordinates, found ${words.length - 1}`, file, place);
      const x = coord(words[1]), y = coord(words[2]), z = coord(words[3]);
      if (!Number.isFinite(x) || !Number.isFinite(y) || !Number.isFinite(z)) {
        throw new InputError(`vertex coordinates "${words.slice(1, 4).join(" ")}" are not all finite numbers`, file, place);
      }
      pos.push3(x, y, z);
    } else if (key === "f" || key === "fo") {
      const nv = words.length - 1;
      if (nv < 3) throw new InputError(`face needs at least 3 vertices, found ${nv}`, file, place);
      const count = pos.length / 3;
      for (let k = 1; k <= nv; k++) {
        const w = words[k];
        const slash = w.indexOf("/");
        const s = slash < 0 ? w : w.slice(0, slash);
        if (!/^[+-]?\d+$/.test(s)) throw new InputError(`face vertex "${w}" is not a vertex index`, file, place);
        const r = Number(s);
        let idx: number;
        if (r > 0) {
          idx = r - 1;
          if (idx >= count && idx > pending) { pending = idx; pendingLine = firstLine; }
        } else if (r < 0) {
          idx = count + r;
          if (idx < 0) throw new InputError(`relative vertex index ${r} reaches before the first vertex (${count} defined so far)`, file, place);
        } else throw new InputError("vertex index 0 (OBJ indices start at 1)", file, place);
        // A vertex repeated next to itself (or closing the loop) adds no corner: some exporters
        // write triangles as quads with one vertex twice.
        const from = polyStart.data[polyStart.length - 1];
        if (polyIndex.length > from && polyIndex.data[polyIndex.length - 1] === idx) continue;
        polyIndex.push(idx);
      }
      {
        const from = polyStart.data[polyStart.length - 1];
        while (polyIndex.length - from > 1 && polyIndex.data[polyIndex.length - 1] === polyIndex.data[from]) polyIndex.length--;
        if (polyIndex.length - from < 3) {
          // Fewer than 3 distinct corners: no area; counted as degenerate.
          polyIndex.length = from;
          degenerateFaces++;
          if (firstDegenerate === 0) firstDegenerate = firstLine;
          continue;
        }
      }
      polyStart.push(polyIndex.length);
      polyLine.push(firstLine);
      polyObject.push(curObject);
      polyGroup.push(curGroup);
    } else if (key === "o") {
      sawObject = true;
      const name = words.slice(1).join(" ");
      let k = objectIndex.get(name);
      if (k === undefined) { k = objectNames.length; objectNames.push(name); objectIndex.set(name, k); }
      curObject = k;
    } else if (key === "g") {
      const name = words.slice(1).join(" ");
      const nm = name === "default" ? "" : name;
      let k = groupIndex.get(nm);
      if (k === undefined) { k = groupNames.length; groupNames.push(nm); groupIndex.set(nm, k); }
      curGroup = k;
    } else if (!IGNORED.has(key)) {
      const u = unknown.get(key);
      if (u) u.count++; else unknown.set(key, { line: firstLine, count: 1 });
    }
  }
  if (degenerateFaces > 0) warnings.push(`line ${firstDegenerate}: ${degenerateFaces} face(s) with fewer than 3 distinct vertices dropped`);
  for (const [k, u] of unknown) {
    warnings.push(`line ${u.line}: unknown statement "${k.slice(0, 40)}" ignored${u.count > 1 ? ` (${u.count} times)` : ""}`);
  }
  const nVert = pos.length / 3;
  if (pending >= nVert) {
    throw new InputError(`face refers to vertex ${pending + 1} but the file defines ${nVert} vertices`, file, atLine(pendingLine));
  }

  const positions = pos.toArray();
  const polys = polyLine.length;
  const tri = new GrowU32(3 * polys + 16);
  const grp = new GrowU32(polys + 16);
  const names = sawObject ? objectNames : groupNames;
  const owner = sawObject ? polyObject.data : polyGroup.data;
  let fannedBad = 0, firstBad = 0;
  for (let f = 0; f < polys; f++) {
    const s = polyStart.data[f], e = polyStart.data[f + 1];
    const before = tri.length;
    const r = triangulatePolygon(positions, polyIndex.data, s, e, tri);
    if (r === 2) { if (fannedBad === 0) firstBad = polyLine.data[f]; fannedBad++; }
    for (let k = before; k < tri.length; k += 3) grp.push(owner[f]);
  }
  if (fannedBad > 0) warnings.push(`line ${firstBad}: ${fannedBad} polygon(s) not simple (self-crossing) or of zero area; fanned from the first vertex, check the result`);
  return { positions, triangles: tri.toArray(), group: grp.toArray(), groupNames: names.slice(), warnings };
}

const IGNORED = new Set(["vt", "vn", "vp", "usemtl", "mtllib", "s", "l", "p", "cstype", "deg", "bmat", "step", "curv", "curv2", "surf", "parm", "trim", "hole", "scrv", "sp", "end", "con", "mg", "bevel", "c_interp", "d_interp", "lod", "maplib", "usemap", "shadow_obj", "trace_obj", "ctech", "stech", "call", "csh"]);

function coord(s: string | undefined): number {
  if (s === undefined || !/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(s)) return NaN;
  return Number(s);
}

// Scratch for polygon triangulation, grown when a polygon is larger than any before.
let PX = new Float64Array(64), PY = new Float64Array(64);
let NEXT = new Int32Array(64), PREV = new Int32Array(64);

/**
 * Append the triangles of polygon idx[s..e) to `out`. Returns 0 when convex (fanned),
 * 1 when non-convex and ear-clipped, 2 when it could not be clipped (fanned anyway).
 */
function triangulatePolygon(p: Float64Array, idx: Uint32Array, s: number, e: number, out: GrowU32): number {
  const m = e - s;
  if (m === 3) { out.push3(idx[s], idx[s + 1], idx[s + 2]); return 0; }
  // Newell normal: robust plane of a polygon whose vertices are not exactly coplanar.
  let nx = 0, ny = 0, nz = 0;
  for (let k = 0; k < m; k++) {
    const a = 3 * idx[s + k], b = 3 * idx[s + ((k + 1) % m)];
    nx += (p[a + 1] - p[b + 1]) * (p[a + 2] + p[b + 2]);
    ny += (p[a + 2] - p[b + 2]) * (p[a] + p[b]);
    nz += (p[a] - p[b]) * (p[a + 1] + p[b + 1]);
  }
  const ax = Math.abs(nx), ay = Math.abs(ny), az = Math.abs(nz);
  if (PX.length < m) {
    PX = new Float64Array(2 * m); PY = new Float64Array(2 * m);
    NEXT = new Int32Array(2 * m); PREV = new Int32Array(2 * m);
  }
  // Drop the dominant axis; flip so the projected polygon is counter-clockwise.
  const u = ax >= ay && ax >= az ? 1 : 0;
  const v = ax >= ay && ax >= az ? 2 : ay >= az ? 2 : 1;
  const dom = ax >= ay && ax >= az ? nx : ay >= az ? ny : nz;
  const flip = ax >= ay && ax >= az ? dom < 0 : ay >= az ? dom > 0 : dom < 0;
  for (let k = 0; k < m; k++) {
    const a = 3 * idx[s + k];
    PX[k] = p[a + u]; PY[k] = flip ? -p[a + v] : p[a + v];
  }
  // Slightly warped polygons (quads on curved CAD faces) are cut in their projection; only a
  // polygon with no area at all has no plane to cut in.
  const planar = nx !== 0 || ny !== 0 || nz !== 0;
  let convex = planar;
  for (let k = 0; k < m && convex; k++) {
    const k1 = (k + 1) % m, k2 = (k + 2) % m;
    if (cross2(k, k1, k2) < 0) convex = false;
  }
  if (convex) {
    for (let k = 1; k + 1 < m; k++) out.push3(idx[s], idx[s + k], idx[s + k + 1]);
    return 0;
  }
  if (planar) {
    const start = out.length;
    for (let k = 0; k < m; k++) { NEXT[k] = (k + 1) % m; PREV[k] = (k + m - 1) % m; }
    let left = m, cur = 0, guard = 0;
    while (left > 3 && guard <= left) {
      const a = PREV[cur], b = cur, c = NEXT[cur];
      if (isEar(a, b, c)) {
        out.push3(idx[s + a], idx[s + b], idx[s + c]);
        NEXT[a] = c; PREV[c] = a; left--; guard = 0; cur = c;
      } else { cur = c; guard++; }
    }
    if (left === 3) {
      out.push3(idx[s + PREV[cur]], idx[s + cur], idx[s + NEXT[cur]]);
      return 1;
    }
    out.length = start;
  }
  for (let k = 1; k + 1 < m; k++) out.push3(idx[s], idx[s + k], idx[s + k + 1]);
  return 2;

  function isEar(a: number, b: number, c: number): boolean {
    if (cross2(a, b, c) <= 0) return false;
    for (let k = NEXT[c]; k !== a; k = NEXT[k]) {
      if (inTriangle(k, a, b, c)) return false;
    }
    return true;
  }
}

function cross2(a: number, b: number, c: number): number {
  return (PX[b] - PX[a]) * (PY[c] - PY[a]) - (PY[b] - PY[a]) * (PX[c] - PX[a]);
}

function inTriangle(k: number, a: number, b: number, c: number): boolean {
  return cross2(a, b, k) >= 0 && cross2(b, c, k) >= 0 && cross2(c, a, k) >= 0;
}

/** OBJ with `o NAME` and `g NAME` per conductor; coordinates divided by `metresPerUnit`. */
export function writeObj(mesh: SurfaceMesh, metresPerUnit: number): string {
  const p = mesh.positions, tr = mesh.triangles;
  let unit = `${metresPerUnit} m`;
  for (const [u, m] of Object.entries(METRES_PER_UNIT)) if (m === metresPerUnit) unit = u;
  const parts: string[] = [`# sigmesh OBJ; unit ${unit}; ${mesh.names.length} conductor(s)\n`];
  const u = toFileUnits(metresPerUnit);
  for (let v = 0; v < p.length; v += 3) {
    parts.push(`v ${formatCoordinate(u(p[v]))} ${formatCoordinate(u(p[v + 1]))} ${formatCoordinate(u(p[v + 2]))}\n`);
  }
  const order = trianglesByConductor(mesh.conductor, mesh.names.length);
  for (let c = 0; c < mesh.names.length; c++) {
    const name = mesh.names[c].replace(/\s+/g, " ").trim();
    parts.push(`o ${name}\ng ${name}\n`);
    for (let k = order.start[c]; k < order.start[c + 1]; k++) {
      const t = order.triangle[k];
      parts.push(`f ${tr[3 * t] + 1} ${tr[3 * t + 1] + 1} ${tr[3 * t + 2] + 1}\n`);
    }
  }
  return parts.join("");
}
