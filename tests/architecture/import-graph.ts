/**
 * The project's import graph, read from the sources, and the checker of its layering.
 *
 * Edges are the relative module specifiers of static `import … from`, `import type … from`,
 * `export … from`, side-effect `import "…"` and literal dynamic `import("…")`, resolved to
 * .ts files (`./x.js` → `./x.ts`, a folder → its index.ts). Worker entry points named by
 * `new URL(…, import.meta.url)` are not imports and are not followed. Package imports
 * ("three", "node:fs") and non-TypeScript assets (CSS) are not project files and are skipped.
 */
import { existsSync, readdirSync, readFileSync, statSync } from "node:fs";
import { dirname, join, relative, resolve, sep } from "node:path";

/** File (repository-relative, forward slashes) → the project files it imports, with the specifier as written. */
export type ImportGraph = Map<string, { target: string; specifier: string }[]>;

/** Every .ts file under the given folders (repository-relative). */
export function sourceFiles(root: string, folders: string[]): string[] {
  const out: string[] = [];
  const walk = (dir: string): void => {
    for (const name of readdirSync(dir).sort()) {
      const path = join(dir, name);
      if (statSync(path).isDirectory()) walk(path);
      else if (name.endsWith(".ts")) out.push(relative(root, path).split(sep).join("/"));
    }
  };
  for (const f of folders) if (existsSync(join(root, f))) walk(join(root, f));
  return out;
}

/**
 * The module specifiers a source imports. Statements are matched at the start of a line, so
 * `import` in comments (which start with `*` or `//` here) and in strings is not taken.
 */
export function importSpecifiers(source: string): string[] {
  const specs: string[] = [];
  const patterns = [
    // import x from "…", import { a, b } from "…" (over several lines), import type …, export … from "…"
    /^(?:import|export)\b[^;'"`]*?\bfrom\s*["']([^"']+)["']/gm,
    // import "…";
    /^import\s*["']([^"']+)["']/gm,
    // await import("…") with a literal path
    /\bimport\(\s*["']([^"']+)["']\s*\)/g,
  ];
  for (const re of patterns) for (const m of source.matchAll(re)) specs.push(m[1]);
  return specs;
}

/** The project .ts file a relative specifier names, or undefined (packages, assets). */
export function resolveSpecifier(root: string, from: string, specifier: string): string | undefined {
  if (!specifier.startsWith(".")) return undefined;
  const base = resolve(root, dirname(from), specifier);
  const candidates = [base.replace(/\.js$/, ".ts"), base.endsWith(".ts") ? base : `${base}.ts`, join(base, "index.ts")];
  for (const c of candidates) if (existsSync(c) && statSync(c).isFile()) return relative(root, c).split(sep).join("/");
  return undefined;
}

/** The graph of the given folders' .ts files. */
export function readImportGraph(root: string, folders: string[]): ImportGraph {
  const graph: ImportGraph = new Map();
  for (const file of sourceFiles(root, folders)) {
    const edges: { target: string; specifier: string }[] = [];
    for (const specifier of importSpecifiers(readFileSync(join(root, file), "utf8"))) {
      const target = resolveSpecifier(root, file, specifier);
      if (target !== undefined) edges.push({ target, specifier });
      else if (specifier.startsWith(".") && /\.(js|ts)$/.test(specifier)) edges.push({ target: `(unresolved) ${specifier}`, specifier });
    }
    graph.set(file, edges);
  }
  return graph;
}

/**
 * A layer rule: `layerOf` numbers a file (undefined: no layer known, itself a fault), and an
 * import from layer a to layer b is allowed when b ≤ a. `allowedImports`, when it returns a
 * list for a file, replaces the numeric rule for that file: it may import only those files
 * (prefixes ending in "/" stand for folders).
 */
export interface LayerRule {
  layerOf(file: string): number | undefined;
  allowedImports?(file: string): string[] | undefined;
  /** Name of a layer, for messages. */
  layerName?(layer: number): string;
}

/** Faults of the graph under the rule, one line each: upward imports, unknown files, then cycles. */
export function layerViolations(graph: ImportGraph, rule: LayerRule): string[] {
  const faults: string[] = [];
  const name = (l: number): string => rule.layerName?.(l) ?? `layer ${l}`;
  for (const [file, edges] of graph) {
    const allowed = rule.allowedImports?.(file);
    const la = rule.layerOf(file);
    if (la === undefined && allowed === undefined) { faults.push(`${file}: no layer assigned (add its folder to the layer table)`); continue; }
    for (const { target, specifier } of edges) {
      if (target.startsWith("(unresolved)")) { faults.push(`${file}: import "${specifier}" names no file`); continue; }
      if (allowed !== undefined) {
        if (!allowed.some((a) => (a.endsWith("/") ? target.startsWith(a) : target === a))) {
          faults.push(`${file} imports ${target} ("${specifier}"): only ${allowed.join(", ")} may be imported here`);
        }
        continue;
      }
      const lb = rule.layerOf(target);
      if (lb === undefined) continue; // reported as the target's own fault
      if (lb > (la as number)) faults.push(`${file} (${name(la as number)}) imports ${target} (${name(lb)}), a higher layer ("${specifier}")`);
    }
  }
  for (const cycle of importCycles(graph)) faults.push(`import cycle: ${cycle.join(" → ")} → ${cycle[0]}`);
  return faults;
}

/**
 * The cycles of the graph: one per strongly connected component of two or more files (or a
 * file importing itself), given as a closed path through some of its files, so that the
 * message names an actual loop. Tarjan's algorithm (R. Tarjan, "Depth-first search and linear
 * graph algorithms", SIAM J. Comput. 1(2):146, 1972).
 */
export function importCycles(graph: ImportGraph): string[][] {
  const index = new Map<string, number>(), low = new Map<string, number>(), onStack = new Set<string>();
  const stack: string[] = [], components: string[][] = [];
  let next = 0;
  const targets = (f: string): string[] => (graph.get(f) ?? []).map((e) => e.target).filter((t) => graph.has(t));
  const visit = (v: string): void => {
    index.set(v, next); low.set(v, next); next++;
    stack.push(v); onStack.add(v);
    for (const w of targets(v)) {
      if (!index.has(w)) { visit(w); low.set(v, Math.min(low.get(v)!, low.get(w)!)); }
      else if (onStack.has(w)) low.set(v, Math.min(low.get(v)!, index.get(w)!));
    }
    if (low.get(v) === index.get(v)) {
      const comp: string[] = [];
      let w: string;
      do { w = stack.pop()!; onStack.delete(w); comp.push(w); } while (w !== v);
      if (comp.length > 1 || targets(v).includes(v)) components.push(comp);
    }
  };
  for (const f of [...graph.keys()].sort()) if (!index.has(f)) visit(f);
  // Within each component, the shortest loop through its first file (breadth-first).
  return components.map((comp) => {
    const members = new Set(comp), start = [...comp].sort()[0];
    const prev = new Map<string, string>();
    const queue = [start];
    while (queue.length > 0) {
      const v = queue.shift()!;
      for (const w of targets(v)) {
        if (!members.has(w)) continue;
        if (w === start) {
          const path = [v];
          while (path[0] !== start) path.unshift(prev.get(path[0])!);
          return path;
        }
        if (!prev.has(w)) { prev.set(w, v); queue.push(w); }
      }
    }
    return comp;
  });
}
