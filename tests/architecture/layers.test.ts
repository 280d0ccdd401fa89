/**
 * The layers of sigmesh, read off the import graph (see /work/shared/style.md, "The shape of
 * sigmesh"). Bottom to top; a file may import its own layer and those below, never above:
 *   0 src/errors.ts, src/version.ts, src/geometry   what every layer may raise, name or measure; import nothing else
 *   1 src/linalg                    matrices and solvers: nothing of meshes, physics or files
 *   2 src/mesh                      the surface model and its checks
 *   3 src/bem                       integrals and kernels over panels: nothing of files
 *   4 src/io                        readers, writers, scenes, units, probe requests
 *   5 src/extract                   the pipeline
 *   6 src/report                    what a run writes
 *   7 src/index.ts and other src/*.ts   the public API
 *   8 cli                           commands over the API
 * viewer/src (the page) may import its own files and, of the library, only the pure formatting
 * it imports today: src/io/si.ts and src/io/units.ts. No two files may import each other
 * through any chain (no cycles). A new folder under src/ fails until it is given a layer here.
 */
import { describe, it, expect } from "vitest";
import { fileURLToPath } from "node:url";
import { readImportGraph, layerViolations, importCycles, importSpecifiers, type ImportGraph, type LayerRule } from "./import-graph.js";

const ROOT = fileURLToPath(new URL("../../", import.meta.url));

const LAYERS: [string, number][] = [
  ["src/errors.ts", 0], ["src/version.ts", 0], ["src/geometry/", 0], ["src/linalg/", 1], ["src/mesh/", 2], ["src/bem/", 3],
  ["src/io/", 4], ["src/extract/", 5], ["src/report/", 6], ["cli/", 8],
];
const LAYER_NAMES = ["errors/geometry", "linalg", "mesh", "bem", "io", "extract", "report", "API", "cli"];
const VIEWER_MAY_IMPORT = ["viewer/src/", "src/io/si.ts", "src/io/units.ts"];

const SIGMESH_LAYERS: LayerRule = {
  layerOf(file) {
    for (const [prefix, layer] of LAYERS) if (prefix.endsWith("/") ? file.startsWith(prefix) : file === prefix) return layer;
    if (/^src\/[^/]+\.ts$/.test(file)) return 7;
    return undefined;
  },
  allowedImports: (file) => (file.startsWith("viewer/src/") ? VIEWER_MAY_IMPORT : undefined),
  layerName: (l) => LAYER_NAMES[l] ?? `layer ${l}`,
};

const graph = readImportGraph(ROOT, ["src", "cli", "viewer/src"]);

/** The project files `from` (a folder prefix) imports from `to` (a folder prefix), as "file → target" lines. */
function importsBetween(g: ImportGraph, from: string, to: string[]): string[] {
  const out: string[] = [];
  for (const [file, edges] of g) if (file.startsWith(from)) for (const e of edges) if (to.some((t) => e.target.startsWith(t))) out.push(`${file} → ${e.target}`);
  return out;
}

describe("the checker itself, on a synthetic graph", () => {
  const g: ImportGraph = new Map([
    ["src/linalg/a.ts", [{ target: "src/mesh/m.ts", specifier: "../mesh/m.js" }]], // upward
    ["src/mesh/m.ts", [{ target: "src/geometry/g.ts", specifier: "../geometry/g.js" }, { target: "src/mesh/n.ts", specifier: "./n.js" }]],
    ["src/mesh/n.ts", [{ target: "src/mesh/o.ts", specifier: "./o.js" }]],
    ["src/mesh/o.ts", [{ target: "src/mesh/m.ts", specifier: "./m.js" }]], // closes m → n → o → m
    ["src/geometry/g.ts", []],
    ["src/newthing/x.ts", []],
    ["viewer/src/main.ts", [{ target: "src/io/si.ts", specifier: "../../src/io/si.js" }, { target: "src/extract/e.ts", specifier: "../../src/extract/e.js" }]],
  ]);
  const faults = layerViolations(g, SIGMESH_LAYERS);

  it("reports an upward import, naming the file, the import and both layers", () => {
    expect(faults).toContain('src/linalg/a.ts (linalg) imports src/mesh/m.ts (mesh), a higher layer ("../mesh/m.js")');
  });
  it("reports a cycle with its files, as a closed path", () => {
    expect(importCycles(g)).toEqual([["src/mesh/m.ts", "src/mesh/n.ts", "src/mesh/o.ts"]]);
    expect(faults).toContain("import cycle: src/mesh/m.ts → src/mesh/n.ts → src/mesh/o.ts → src/mesh/m.ts");
  });
  it("reports a file with no layer and a viewer import outside its list, and nothing else", () => {
    expect(faults).toContain("src/newthing/x.ts: no layer assigned (add its folder to the layer table)");
    expect(faults.some((f) => f.startsWith("viewer/src/main.ts imports src/extract/e.ts"))).toBe(true);
    expect(faults).toHaveLength(4);
  });
  it("reads import, import type, export … from, side-effect and literal dynamic imports, and skips comments", () => {
    const src = [
      "/**",
      " * import { nothing } from \"./in-a-comment.js\";",
      " */",
      'import { a,',
      '  b } from "./ab.js";',
      'import type { T } from "../t.js";',
      'export { c } from "./c.js";',
      'export * from "./d.js";',
      'import "./style.css";',
      'const m = await import("./lazy.js");',
      '// import x from "./commented.js";',
      'const s = "import y from \\"./in-a-string.js\\"";',
    ].join("\n");
    expect(importSpecifiers(src).sort()).toEqual(["../t.js", "./ab.js", "./c.js", "./d.js", "./lazy.js", "./style.css"]);
  });
});

describe("sigmesh's import graph", () => {
  it("reads the sources (a sanity check of the reader)", () => {
    expect(graph.size).toBeGreaterThan(100);
    expect(graph.get("src/io/stl.ts")?.some((e) => e.target === "src/errors.ts")).toBe(true);
  });

  it("imports only downward, and has no cycles", () => {
    expect(layerViolations(graph, SIGMESH_LAYERS)).toEqual([]);
  });

  it("src/errors.ts, src/version.ts and src/geometry import nothing of the project but each other", () => {
    expect([...importsBetween(graph, "src/errors.ts", ["src/", "cli/"]), ...importsBetween(graph, "src/version.ts", ["src/", "cli/"]), ...importsBetween(graph, "src/geometry/", ["src/", "cli/"])]
      .filter((l) => !/→ (src\/errors\.ts|src\/geometry\/)/.test(l))).toEqual([]);
  });

  it("src/linalg imports nothing of mesh, bem, io, extract or report", () => {
    expect(importsBetween(graph, "src/linalg/", ["src/mesh/", "src/bem/", "src/io/", "src/extract/", "src/report/"])).toEqual([]);
  });

  it("src/bem imports nothing of io (files)", () => {
    expect(importsBetween(graph, "src/bem/", ["src/io/"])).toEqual([]);
  });
});
