/**
 * ASCII Gmsh MSH 4.1, 4.0 and 2.x, line by line (layouts in ./msh.ts). Every fault names its line.
 */
import { atLine } from "../errors.js";
import { decodeText, type RawMesh } from "./raw.js";
import { MeshBuilder, NODES_PER_TYPE, QUAD_TYPES, type MshVersion } from "./msh-elements.js";

interface Cursor { lines: string[]; i: number }

export function readMshAscii(bytes: Uint8Array, file: string): RawMesh {
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
  const v: MshVersion = version === "4.1" ? "4.1" : version.startsWith("4") ? "4.0" : "2";
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
