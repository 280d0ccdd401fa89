/**
 * Hostile and careless inputs (issue 13): names JavaScript objects inherit, deep nesting, long
 * parameter chains, prototype keys in scenes, device files and other non-regular files,
 * byte-order marks and JSON syntax faults. Each ends in one InputError naming the file (or an
 * ExpressionError with its position, for a bare expression), never another error.
 */
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { mkdtempSync, writeFileSync, rmSync, symlinkSync, mkdirSync, existsSync } from "node:fs";
import { spawnSync } from "node:child_process";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { evaluateExpression, ExpressionError, resolveParameters, MAX_EXPRESSION_DEPTH, MAX_PARAMETER_CHAIN } from "../../src/io/parameters.js";
import { parseScene, loadSceneFile } from "../../src/io/scene.js";
import { parseJson, MAX_JSON_DEPTH } from "../../src/io/json-value.js";
import { loadScene } from "../../src/io/inputs.js";
import { loadMeshFile } from "../../src/io/load.js";
import { readInputBytes } from "../../src/io/input-file.js";
import { viewPage } from "../../src/report/view-server.js";
import { InputError } from "../../src/errors.js";
import { fixture } from "./helpers.js";
import { parsePotentials } from "../../cli/options.js";

let dir = "";
beforeAll(() => { dir = mkdtempSync(join(tmpdir(), "sigmesh-hostile-")); });
afterAll(() => { rmSync(dir, { recursive: true, force: true }); });

const fail = (path: string, fault: string): never => { throw new InputError(`${path}: ${fault}`); };

/** The error `f` throws; fails the test when it throws nothing. */
function thrown(f: () => unknown): Error {
  try { f(); } catch (err) { return err as Error; }
  throw new Error("no error thrown");
}

/** The InputError `f` throws, checked to be one line naming `file`. */
function inputError(f: () => unknown, file?: string): InputError {
  const err = thrown(f);
  expect(err, String(err.stack)).toBeInstanceOf(InputError);
  const e = err as InputError;
  expect(e.message).not.toMatch(/\n/);
  if (file !== undefined) expect(e.file).toBe(file);
  return e;
}

const plate = { shape: { plate: { size: [1, 1], divisions: 1 } } };
const sceneText = (extra: Record<string, unknown>, conductor: Record<string, unknown> = {}): string =>
  JSON.stringify({ unit: "mm", conductors: [{ name: "a", ...plate, ...conductor }], ...extra });

describe("expressions: inherited names are unknown names", () => {
  for (const name of ["constructor", "toString", "hasOwnProperty", "__proto__", "valueOf", "isPrototypeOf"]) {
    it(`${name}(1) is an unknown function, ${name} an unknown parameter`, () => {
      const e = thrown(() => evaluateExpression(`${name}(1)`, { gap: 1 }));
      expect(e).toBeInstanceOf(ExpressionError);
      expect((e as ExpressionError).fault).toMatch(new RegExp(`^unknown function "${name}"`));
      const p = thrown(() => evaluateExpression(`2 * ${name}`, { gap: 1 }));
      expect(p).toBeInstanceOf(ExpressionError);
      expect((p as ExpressionError).fault).toBe(`unknown parameter "${name}"`);
      // And in a scene: one InputError with the key path.
      const e2 = inputError(() => parseScene(sceneText({ parameters: { w: 1 } }, { potential: `=${name}(1)` }), "s.json"), "s.json");
      expect(e2.fault).toMatch(new RegExp(`^conductors\\[0\\]\\.potential: expression "=${name}\\(1\\)": unknown function "${name}"`));
    });
  }

  it("a parameter named toString is the scene's own, and calling it is still an unknown function", () => {
    expect(resolveParameters({ toString: 3, w: "=toString * 2" }, {}, fail)).toEqual({ toString: 3, w: 6 });
    expect(() => resolveParameters({ toString: 3, w: "=toString(1)" }, {}, fail)).toThrow(/parameters\.w: expression "=toString\(1\)": unknown function "toString"/);
    expect(() => resolveParameters({ w: "=hasOwnProperty" }, {}, fail)).toThrow(/parameters\.w: expression "=hasOwnProperty": unknown parameter "hasOwnProperty"/);
  });

  it("prototype names are refused as parameter names, with the key path", () => {
    for (const name of ["__proto__", "constructor", "prototype"]) {
      const text = `{ "unit": "mm", "parameters": { "w": 1, "${name}": 2 }, "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } } }] }`;
      expect(inputError(() => parseScene(text, "s.json"), "s.json").fault).toMatch(new RegExp(`^parameters\\.${name}: unknown key`));
    }
  });
});

describe("expressions and parameters: depth and chain length are bounded with a clear message", () => {
  it("2,000 nested parentheses, signs or powers: one ExpressionError naming the bound", () => {
    for (const text of ["(".repeat(2000) + "1" + ")".repeat(2000), "-".repeat(5000) + "1", "2^".repeat(3000) + "1", "max(".repeat(2000) + "1" + ")".repeat(2000)]) {
      const e = thrown(() => evaluateExpression(text, {}));
      expect(e).toBeInstanceOf(ExpressionError);
      expect((e as ExpressionError).fault).toMatch(new RegExp(`nested more than ${MAX_EXPRESSION_DEPTH} deep`));
    }
    // Just inside the bound still evaluates.
    const ok = "(".repeat(MAX_EXPRESSION_DEPTH - 1) + "2" + ")".repeat(MAX_EXPRESSION_DEPTH - 1);
    expect(evaluateExpression(ok, {})).toBe(2);
  });

  it("a function of 200,000 arguments is evaluated, not spread onto the stack", () => {
    expect(evaluateExpression(`max(${"1, ".repeat(200_000)}7)`, {})).toBe(7);
    expect(evaluateExpression(`min(${"5, ".repeat(200_000)}3)`, {})).toBe(3);
  });

  it("a chain of 2,000 parameters is one InputError naming the bound, in either key order", () => {
    const down: Record<string, unknown> = {}, up: Record<string, unknown> = {};
    for (let i = 0; i < 2000; i++) down[`p${i}`] = i === 1999 ? 1 : `=p${i + 1} + 1`;
    for (let i = 0; i < 2000; i++) up[`p${i}`] = i === 0 ? 1 : `=p${i - 1} + 1`;
    for (const params of [down, up]) {
      const e = inputError(() => parseScene(JSON.stringify({ unit: "mm", parameters: params, conductors: [{ name: "a", ...plate }] }), "chain.json"), "chain.json");
      expect(e.fault).toMatch(new RegExp(`^parameters\\.p\\d+: defined through a chain of more than ${MAX_PARAMETER_CHAIN} parameters`));
    }
    // A chain within the bound resolves, and a cycle is still named as one.
    const fine: Record<string, unknown> = {};
    for (let i = 0; i < MAX_PARAMETER_CHAIN; i++) fine[`p${i}`] = i === MAX_PARAMETER_CHAIN - 1 ? 1 : `=p${i + 1} + 1`;
    expect(resolveParameters(fine, {}, fail).p0).toBe(MAX_PARAMETER_CHAIN);
    expect(() => resolveParameters({ a: "=b", b: "=c", c: "=a" }, {}, fail)).toThrow(/parameters\.a: defined in terms of itself \(a -> b -> c -> a\)/);
  });
});

describe("JSON nesting is bounded", () => {
  it("lists or objects nested 2,000 deep are one InputError, in a scene and anywhere in it", () => {
    const lists = "[".repeat(2000) + "]".repeat(2000);
    const objects = '{"a":'.repeat(2000) + "1" + "}".repeat(2000);
    for (const [deep, where] of [[lists, "conductors[0].potential"], [objects, "conductors[0].place"], [lists, "probes"]] as const) {
      const text = where === "probes" ? `{ "unit": "mm", "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } } }], "probes": ${deep} }`
        : where.endsWith("potential") ? `{ "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } }, "potential": ${deep} }] }`
          : `{ "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } }, "place": ${deep} }] }`;
      const e = inputError(() => parseScene(text, "deep.json"), "deep.json");
      expect(e.fault).toMatch(new RegExp(`^${where.replace(/[[\].]/g, "\\$&")}[^ ]*: nested more than ${MAX_JSON_DEPTH} levels deep`));
    }
    expect(inputError(() => parseScene(lists, "deep.json"), "deep.json").fault).toMatch(/nested more than/);
  });
});

describe("prototype keys in a scene are unknown keys at every level", () => {
  const cases: Array<[string, string, string]> = [
    ["top level", `{ "__proto__": { "unit": "m" }, "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } } }] }`, "__proto__"],
    ["conductor", `{ "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } }, "__proto__": { "potential": 7 } }] }`, "conductors[0].__proto__"],
    ["part", `{ "conductors": [{ "name": "a", "parts": [{ "shape": { "plate": { "size": [1, 1] } }, "__proto__": { "mesh": "x.stl" } }] }] }`, "conductors[0].parts[0].__proto__"],
    ["shape", `{ "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1], "constructor": 3 } } }] }`, "conductors[0].shape.plate.constructor"],
    ["shape kind", `{ "conductors": [{ "name": "a", "shape": { "__proto__": { "size": [1, 1] } } }] }`, "conductors[0].shape.__proto__"],
    ["placement", `{ "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } }, "place": { "__proto__": { "translate": [0, 0, 5] } } }] }`, "conductors[0].place.__proto__"],
    ["rotation", `{ "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } }, "place": { "rotate": { "axis": [0, 0, 1], "degrees": 0, "prototype": 1 } } }] }`, "conductors[0].place.rotate.prototype"],
    ["symmetry entry", `{ "symmetry": [{ "x": 0, "__proto__": { "images": "odd" } }], "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } } }] }`, "symmetry[0].__proto__"],
    ["ground plane", `{ "groundPlane": { "__proto__": { "z": 0 } }, "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } } }] }`, "groundPlane.__proto__"],
    ["probe", `{ "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } } }], "probes": [{ "point": [0, 0, 1], "__proto__": { "name": "x" } }] }`, "probes[0].__proto__"],
    ["probe line", `{ "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } } }], "probes": [{ "line": { "from": [0, 0, 1], "to": [0, 0, 2], "points": 3, "constructor": {} } }] }`, "probes[0].line.constructor"],
    ["floating list", `{ "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } } }, { "name": "b", "shape": { "plate": { "size": [1, 1] } }, "__proto__": { "floating": true } }] }`, "conductors[1].__proto__"],
    ["dielectric", `{ "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } } }], "dielectrics": [{ "shape": { "box": { "size": [1, 1, 1] } }, "permittivity": 2, "__proto__": {} }] }`, "dielectrics[0].__proto__"],
    ["parameters", `{ "parameters": { "__proto__": { "w": 1 } }, "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } } }] }`, "parameters.__proto__"],
  ];
  for (const [where, text, path] of cases) {
    it(`${where}: ${path}`, () => {
      const e = inputError(() => parseScene(text, "proto.json"), "proto.json");
      expect(e.fault).toBe(`${path}: unknown key ("__proto__", "constructor" and "prototype" are never keys of a scene)`);
    });
  }

  it("a conductor's __proto__ never sets its potential (the fault of the branch point: potential 7 taken silently)", () => {
    const text = `{ "conductors": [{ "name": "a", "shape": { "plate": { "size": [1, 1] } }, "__proto__": { "potential": 7 } }, { "name": "b", "shape": { "plate": { "size": [1, 1] } }, "place": { "translate": [0, 0, 3] } }] }`;
    const file = join(dir, "proto.json");
    writeFileSync(file, text);
    expect(() => loadScene(file)).toThrow(InputError);
  });

  it("conductors named __proto__ or constructor are names like any other, also for --potential", () => {
    const file = join(dir, "named.json");
    writeFileSync(file, JSON.stringify({ unit: "mm", conductors: [{ name: "__proto__", ...plate, potential: 1 },
      { name: "constructor", ...plate, place: { translate: [0, 0, 2] } }, { name: "toString", ...plate, place: { translate: [0, 0, 4] } }] }));
    const s = loadScene(file, { potentials: parsePotentials(["__proto__=3", "constructor=-2", "toString=5"]) });
    expect(s.mesh.names).toEqual(["__proto__", "constructor", "toString"]);
    expect(Array.from(s.potentials)).toEqual([3, -2, 5]);
  });

  it("nothing parsed carries a prototype key as its own key or as its prototype", () => {
    const v = parseJson(`{ "a": [{ "b": 1 }] }`, "x.json", { refusePrototypeKeys: true }) as { a: Array<Record<string, unknown>> };
    expect(Object.getPrototypeOf(v.a[0])).toBe(Object.prototype);
    // A report (no scene keys) keeps whatever keys it has, but never a prototype from them.
    const r = parseJson(`{ "__proto__": { "x": 1 } }`, "r.json") as Record<string, unknown>;
    expect(Object.getPrototypeOf(r)).toBe(Object.prototype);
    expect((r as { x?: number }).x).toBeUndefined();
  });
});

describe("non-regular files are refused at once", () => {
  const devices = ["/dev/zero", "/dev/urandom"].filter((d) => existsSync(d));

  it("a device as a mesh, a scene or a report, directly or through a symlink", { timeout: 10_000 }, () => {
    expect(devices.length).toBeGreaterThan(0);
    for (const dev of devices) {
      const link = join(dir, `link-${dev.slice(5)}`);
      for (const [path, ext] of [[dev, ""], [link + ".stl", ".stl"], [link + ".json", ".json"], [link + ".html", ".html"]] as const) {
        if (path !== dev && !existsSync(path)) symlinkSync(dev, path);
        const start = Date.now();
        const tries: Array<() => unknown> = ext === ".json" ? [() => loadScene(path), () => loadSceneFile(path), () => viewPage(path)]
          : ext === ".html" ? [() => viewPage(path)] : ext === ".stl" ? [() => loadMeshFile(path, { unit: "mm" })]
            : [() => loadMeshFile(path, { unit: "mm" }), () => loadSceneFile(path), () => viewPage(path)];
        for (const t of tries) {
          const e = inputError(t, path);
          expect(e.fault).toMatch(/^not a regular file \(a character device\); give a (mesh|scene|report) file$/);
        }
        expect(Date.now() - start).toBeLessThan(2000);
      }
    }
  });

  it("a named pipe is refused without waiting for a writer", { timeout: 10_000 }, () => {
    const fifo = join(dir, "pipe.json");
    const made = spawnSync("mkfifo", [fifo]);
    if (made.status !== 0) { console.warn("mkfifo not available: named-pipe case skipped"); return; }
    expect(inputError(() => loadSceneFile(fifo), fifo).fault).toMatch(/^not a regular file \(a named pipe\)/);
    expect(inputError(() => loadMeshFile(fifo, { unit: "mm" }), fifo).fault).toMatch(/^not a regular file \(a named pipe\)/);
    expect(inputError(() => viewPage(fifo), fifo).fault).toMatch(/^not a regular file \(a named pipe\)/);
  });

  it("through the command line: exit 2 at once, one line naming the file (extract, view, sweep, sweep merge)", { timeout: 60_000 }, () => {
    const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
    const dev = devices[0];
    const link = join(dir, "zero-link.json");
    if (!existsSync(link)) symlinkSync(dev, link);
    const runs: Array<[string[], string]> = [[["extract", dev], dev], [["extract", link], link], [["check", dev], dev], [["view", link], link],
      [["sweep", link, "--vary", "w=1:2:2"], link], [["sweep", "merge", dev, "--csv", join(dir, "merged.csv")], dev]];
    for (const [args, file] of runs) {
      const r = spawnSync(process.execPath, [cli, ...args], { encoding: "utf8", cwd: dir, timeout: 20_000 });
      expect(r.error, args.join(" ")).toBeUndefined();
      expect(r.status, `${args.join(" ")}: ${r.stderr}`).toBe(2);
      expect(r.stderr, args.join(" ")).toMatch(new RegExp(`^sigmesh: error: ${file.replace(/[/.]/g, "\\$&")}: not a regular file \\(a character device\\); give a \\w+ file\n$`));
    }
    expect(existsSync(join(dir, "merged.csv"))).toBe(false);
  });

  it("a folder, a missing file and a file over the cap are one line each", () => {
    const folder = join(dir, "folder.json");
    mkdirSync(folder, { recursive: true });
    expect(inputError(() => loadSceneFile(folder), folder).fault).toBe("is a directory, not a scene file");
    expect(inputError(() => viewPage(folder), folder).fault).toBe("is a directory, not a report file");
    expect(inputError(() => viewPage(join(dir, "nope.json")), join(dir, "nope.json")).fault).toBe("no such file");
    const big = join(dir, "big.stl");
    writeFileSync(big, "x".repeat(5000));
    expect(inputError(() => readInputBytes(big, "mesh", 4096), big).fault).toMatch(/^file too large to read \(over 4096 bytes/);
    expect(readInputBytes(fixture("two_solids.stl"), "mesh").length).toBeGreaterThan(0);
  });
});

describe("byte-order marks and JSON syntax faults", () => {
  it("a scene file starting with a UTF-8 byte-order mark is read", () => {
    const file = join(dir, "bom.json");
    writeFileSync(file, "\uFEFF" + sceneText({}));
    const s = loadSceneFile(file);
    expect(s.conductors.map((c) => c.name)).toEqual(["a"]);
  });

  it("a syntax fault is one line with line and column, and never quotes the file", () => {
    const secret = "root:x:0:0:hunter2:/root:/bin/bash\ndaemon:x:1:1::/usr/sbin:/usr/sbin/nologin\n";
    const file = join(dir, "passwd.json");
    writeFileSync(file, secret);
    const e = inputError(() => loadSceneFile(file), file);
    expect(e.place).toBe("line 1, column 1");
    expect(e.message).not.toMatch(/root|hunter2|bash|daemon/);
    const report = inputError(() => viewPage(file), file);
    expect(report.message).not.toMatch(/root|hunter2|bash|daemon/);
    // A password-like value deeper in a file: the place is found, the text is not shown.
    const cases: Array<[string, string]> = [
      ['{\n  "unit": "mm",\n  "password": hunter2\n}', "line 3, column 15"],
      ['{\n  "unit": "mm",,\n}', "line 2, column 16"],
      ['{ "a": [1, 2 }', "line 1, column 14"],
      ['{ "a": 1 } trailing-secret', "line 1, column 12"],
      ['{ "a": "line\nbreak" }', "line 1, column 13"],
      ['{ "a": tru }', "line 1, column 11"],
    ];
    for (const [text, place] of cases) {
      const f = inputError(() => parseJson(text, "x.json"));
      expect(f.place, text).toBe(place);
      expect(f.message, text).not.toMatch(/hunter2|secret|trailing|break"|tru\b/);
      expect(f.message).toMatch(/^x\.json: line \d+, column \d+: not valid JSON \([^)\n]+\)$/);
    }
  });
});
