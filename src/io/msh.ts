/**
 * Gmsh MSH, ASCII, versions 4.1 and 2.x (layouts as given in the Gmsh reference manual,
 * section "MSH file format", and its appendix on the legacy 2.2 format).
 *
 * Only 3-node triangles (element type 2) are read. Conductors come from physical surfaces
 * (`$PhysicalNames` with dimension 2; unnamed physical groups become `physical_N`). Without any
 * physical group each surface entity would be one face of a body, and calling the faces of a
 * box six conductors would be wrong physics; so surface entities that share nodes are joined
 * into one body, named after its lowest entity tag (`surface_7`), with a warning.
 */
import { InputError, atLine } from "./errors.js";
import { GrowF64, GrowU32, decodeText, type RawMesh } from "./raw.js";

interface Cursor { lines: string[]; i: number }

const TRIANGLE = 2;

export function readMsh(text: string | Uint8Array, file: string): RawMesh {
  const src = decodeText(text);
  if (src.trim().length === 0) throw new InputError("empty file", file);
  const c: Cursor = { lines: src.split("\n"), i: 0 };
  const warnings: string[] = [];

  let tokLine = 0;
  const fail = (fault: string, line = c.i): never => { throw new InputError(fault, file, atLine(line)); };
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

  // $MeshFormat must come first.
  let first = "";
  while (c.i < c.lines.length && (first = c.lines[c.i].trim()) === "") c.i++;
  c.i++;
  if (first !== "$MeshFormat") fail(`not a Gmsh MSH file: expected "$MeshFormat", found "${first.slice(0, 40)}"`);
  const fmt = next("$MeshFormat");
  const version = fmt[0];
  const binary = fmt[1];
  if (binary !== undefined && binary !== "0") fail("binary MSH not supported; re-export as ASCII (Gmsh: Mesh.Binary = 0)");
  let v4 = false;
  if (version === "4.1") v4 = true;
  else if (/^2(\.\d+)?$/.test(version)) v4 = false;
  else fail(`MSH version ${version} not supported (sigmesh reads ASCII 4.1 and 2.2)`);
  closeSection("$MeshFormat");

  const physicalNames = new Map<number, string>(); // physical surface tag -> name
  const entityPhysical = new Map<number, number>(); // surface entity tag -> first physical tag
  const nodeIndex = new Map<number, number>();
  const pos = new GrowF64(3 * 1024);
  const triNodes = new GrowU32(3 * 1024); // node tags, resolved once all nodes are known
  const triLine = new GrowU32(1024);
  const triPhys = new GrowU32(1024);
  const triEntity = new GrowU32(1024);
  const otherTypes = new Map<number, number>();
  let sawNodes = false, sawElements = false;

  const addNode = (tag: number, x: number, y: number, z: number, line: number): void => {
    if (nodeIndex.has(tag)) fail(`node tag ${tag} defined twice`, line);
    nodeIndex.set(tag, pos.length / 3);
    pos.push3(x, y, z);
  };
  const addTriangle = (nodes: string[], from: number, phys: number, entity: number, line: number): void => {
    if (nodes.length - from < 3) fail(`triangle needs 3 node tags, found ${Math.max(0, nodes.length - from)}`, line);
    triNodes.push3(int(nodes[from], "node tag"), int(nodes[from + 1], "node tag"), int(nodes[from + 2], "node tag"));
    triLine.push(line);
    triPhys.push(phys);
    triEntity.push(entity);
  };

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
        if (q1 < 0 || q2 <= q1) fail('physical name must be in double quotes', line);
        if (dim === 2) physicalNames.set(tag, raw.slice(q1 + 1, q2));
      }
      closeSection(head);
    } else if (head === "$Entities" && v4) {
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
        if (nphys > 0) entityPhysical.set(tag, Math.abs(int(e[8], "physical tag")));
      }
      for (let k = 0; k < nv; k++) next(head);
      closeSection(head);
    } else if (head === "$Nodes") {
      sawNodes = true;
      if (v4) {
        const t = next(head);
        const blocks = count(t[0], "number of node blocks");
        const total = count(t[1], "number of nodes");
        let seen = 0;
        for (let b = 0; b < blocks; b++) {
          const h = next(head);
          int(h[0], "entity dimension"); int(h[1], "entity tag"); int(h[2], "parametric flag");
          const m = count(h[3], "number of nodes in block");
          const tags: number[] = [];
          for (let k = 0; k < m; k++) tags.push(int(next(head)[0], "node tag"));
          for (let k = 0; k < m; k++) {
            const x = next(head);
            addNode(tags[k], real(x[0], "x coordinate"), real(x[1], "y coordinate"), real(x[2], "z coordinate"), tokLine);
          }
          seen += m;
        }
        if (seen !== total) warnings.push(`line ${c.i}: $Nodes announces ${total} nodes, blocks hold ${seen}`);
      } else {
        const n = count(next(head)[0], "number of nodes");
        for (let k = 0; k < n; k++) {
          const x = next(head);
          addNode(int(x[0], "node tag"), real(x[1], "x coordinate"), real(x[2], "y coordinate"), real(x[3], "z coordinate"), tokLine);
        }
      }
      closeSection(head);
    } else if (head === "$Elements") {
      sawElements = true;
      if (v4) {
        const t = next(head);
        const blocks = count(t[0], "number of element blocks");
        count(t[1], "number of elements");
        for (let b = 0; b < blocks; b++) {
          const h = next(head);
          const dim = int(h[0], "entity dimension"), entity = int(h[1], "entity tag");
          const type = int(h[2], "element type"), m = count(h[3], "number of elements in block");
          const phys = dim === 2 ? entityPhysical.get(entity) ?? 0 : 0;
          for (let k = 0; k < m; k++) {
            const e = next(head);
            if (type === TRIANGLE) addTriangle(e, 1, phys, entity, tokLine);
          }
          if (type !== TRIANGLE) otherTypes.set(type, (otherTypes.get(type) ?? 0) + m);
        }
      } else {
        const n = count(next(head)[0], "number of elements");
        for (let k = 0; k < n; k++) {
          const e = next(head);
          const line = tokLine;
          const type = int(e[1], "element type");
          const ntags = int(e[2], "number of tags");
          if (ntags < 0 || 3 + ntags > e.length) fail(`element announces ${ntags} tags but the line holds fewer`, line);
          if (type !== TRIANGLE) { otherTypes.set(type, (otherTypes.get(type) ?? 0) + 1); continue; }
          const phys = ntags >= 1 ? Math.abs(int(e[3], "physical tag")) : 0;
          const entity = ntags >= 2 ? Math.abs(int(e[4], "elementary tag")) : 0;
          addTriangle(e, 3 + ntags, phys, entity, line);
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

  const nt = triLine.length;
  const triangles = new Uint32Array(3 * nt);
  for (let k = 0; k < 3 * nt; k++) {
    const v = nodeIndex.get(triNodes.data[k]);
    if (v === undefined) fail(`triangle refers to node ${triNodes.data[k]}, which $Nodes does not define`, triLine.data[Math.floor(k / 3)]);
    triangles[k] = v as number;
  }
  if (nt === 0) {
    const other = [...otherTypes].map(([t, n]) => `${n} of type ${t}`).join(", ");
    warnings.push(`no triangles (element type 2) in the file${other ? `; ignored elements: ${other}` : ""}`);
  }

  const { group, groupNames } = conductorGroups(triangles, triPhys.data, triEntity.data, nt, physicalNames, pos.length / 3, warnings);
  return { positions: pos.toArray(), triangles, group, groupNames, warnings };
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
    for (let t = 0; t < nt; t++) {
      const p = phys[t];
      group[t] = p !== 0 ? use(`p${p}`, physicalNames.get(p) ?? `physical_${p}`) : use(`e${entity[t]}`, `surface_${entity[t]}`);
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
  for (let t = 0; t < nt; t++) {
    const e = entities.get(entity[t]) as number;
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
  for (let t = 0; t < nt; t++) {
    const r = find(entities.get(entity[t]) as number);
    const tag = lowest.get(r) as number;
    group[t] = use(`b${tag}`, `surface_${tag}`);
  }
  if (entities.size > groupNames.length) {
    warnings.push(`no physical groups: ${entities.size} surface entities joined into ${groupNames.length} conductor(s) by shared nodes; define physical surfaces in Gmsh to choose conductors and their names`);
  }
  return { group, groupNames };
}
