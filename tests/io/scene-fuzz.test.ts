/**
 * Property-based fuzzing of scene files (fast-check): random keys (known, unknown and the keys
 * JavaScript objects inherit meaning from), random types, random depths (up to thousands of
 * levels), random expressions (deep parentheses, inherited names, long chains of parameters),
 * a byte-order mark now and then, and broken JSON text. Every scene goes through `loadScene`
 * in process and must end in a loaded scene or in one InputError of one line naming a file:
 * never another error type, never a stack overflow. A handful of the refused scenes also go
 * through the command line: exit 2, one line, no stack trace.
 *
 * The seed is fixed (SIGMESH_FUZZ_SEED overrides it) and printed by fast-check on a failure,
 * with the path that replays the failing case.
 */
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import fc from "fast-check";
import { mkdtempSync, writeFileSync, rmSync } from "node:fs";
import { spawnSync } from "node:child_process";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { loadScene } from "../../src/io/inputs.js";
import { InputError } from "../../src/errors.js";
import { fixture } from "./helpers.js";

const SEED = Number(process.env.SIGMESH_FUZZ_SEED ?? 20261205);
const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));

let dir = "";
beforeAll(() => { dir = mkdtempSync(join(tmpdir(), "sigmesh-scene-fuzz-")); });
afterAll(() => { rmSync(dir, { recursive: true, force: true }); });

/**
 * A JSON value kept as text-ready data: objects as lists of [key, value] pairs, so keys such as
 * `__proto__` stay plain keys until the text is written (an object literal would take them
 * as its prototype).
 */
type J = null | boolean | number | string | J[] | { entries: Array<[string, J]> } | { raw: string };

function text(v: J): string {
  if (v === null || typeof v !== "object") return JSON.stringify(v) ?? "null";
  if (Array.isArray(v)) return `[${v.map(text).join(",")}]`;
  if ("raw" in v) return v.raw;
  return `{${v.entries.map(([k, x]) => `${JSON.stringify(k)}:${text(x)}`).join(",")}}`;
}
const obj = (...entries: Array<[string, J] | undefined>): J => ({ entries: entries.filter((e): e is [string, J] => e !== undefined) });

const PROTO_KEYS = ["__proto__", "constructor", "prototype", "toString", "hasOwnProperty", "valueOf"];
const SCENE_KEYS = ["unit", "permittivity", "breakdownField", "groundPlane", "symmetry", "conductors", "dielectrics", "probes", "parameters",
  "name", "mesh", "shape", "parts", "place", "group", "groups", "potential", "floating", "scale", "rotate", "translate", "axis", "degrees",
  "x", "y", "z", "images", "mirrored", "point", "points", "line", "grid", "from", "to", "origin", "u", "v", "size", "divisions", "radius"];
const NAMES = ["gap", "w", "h", "a1", "_b", "pi", "sqrt", "max", "toString", "constructor", "__proto__", "hasOwnProperty", "valueOf"];

const key = fc.oneof({ weight: 4, arbitrary: fc.constantFrom(...SCENE_KEYS) }, { weight: 2, arbitrary: fc.constantFrom(...PROTO_KEYS) },
  { weight: 1, arbitrary: fc.string({ maxLength: 6 }) });

/** Expression text after "=": tokens of every kind, with deep nesting now and then. */
const expression: fc.Arbitrary<string> = fc.oneof(
  { weight: 5, arbitrary: fc.array(fc.oneof(fc.constantFrom(...NAMES), fc.constantFrom("1", "2.5", "0", "1e3", "-", "+", "*", "/", "^", "(", ")", ",", " ", "$"),
    fc.constantFrom(...NAMES).map((n) => `${n}(`)), { maxLength: 12 }).map((t) => t.join("")) },
  { weight: 1, arbitrary: fc.integer({ min: 1, max: 3000 }).map((n) => "(".repeat(n) + "1" + ")".repeat(n)) },
  { weight: 1, arbitrary: fc.integer({ min: 1, max: 3000 }).map((n) => "-".repeat(n) + "2") },
  { weight: 1, arbitrary: fc.integer({ min: 1, max: 2000 }).map((n) => "2^".repeat(n) + "1") },
);

const number: fc.Arbitrary<J> = fc.oneof(
  { weight: 12, arbitrary: fc.constantFrom(1, 2, 0.5, 3, 10) },
  { weight: 2, arbitrary: fc.constantFrom("=1 + 1", "=2 * pi / 3", "=max(1, 2, 3)", "=sqrt(4)^2 - 1") },
  { weight: 1, arbitrary: fc.constantFrom(0, -1, 1e308, -1e308, 1e-300, 5e-324, 1e6, 2 ** 31, -0) },
  { weight: 1, arbitrary: expression.map((e) => `=${e}`) },
);

/** Any JSON value, shallow; deep lists or objects now and then. */
const anyValue: fc.Arbitrary<J> = fc.letrec<{ v: J }>((tie) => ({
  v: fc.oneof({ depthSize: "small", withCrossShrink: true },
    fc.constant(null), fc.boolean(), number, fc.string({ maxLength: 8 }),
    fc.array(tie("v"), { maxLength: 3 }),
    fc.array(fc.tuple(key, tie("v")), { maxLength: 3 }).map((entries) => ({ entries })),
    fc.integer({ min: 10, max: 3000 }).map((n): J => ({ raw: "[".repeat(n) + "]".repeat(n) })),
    fc.integer({ min: 10, max: 3000 }).map((n): J => ({ raw: '{"x":'.repeat(n) + "1" + "}".repeat(n) })),
  ),
})).v;

/** `a` once in `odds` draws, else undefined. */
const rarely = <T>(a: fc.Arbitrary<T>, odds = 10): fc.Arbitrary<T | undefined> =>
  fc.oneof({ weight: odds - 1, arbitrary: fc.constant(undefined) }, { weight: 1, arbitrary: a });
/** An extra entry for an object now and then: an unknown, inherited or prototype key with any value. */
const extra = rarely(fc.tuple(key, anyValue));
const maybe = <T>(a: fc.Arbitrary<T>) => fc.option(a, { freq: 2 }).map((x) => x ?? undefined);
const vec3 = fc.oneof({ weight: 10, arbitrary: fc.tuple(number, number, number).map((t): J => t) }, { weight: 1, arbitrary: anyValue });

const placement: fc.Arbitrary<J> = fc.oneof({ weight: 10, arbitrary: fc.record({ s: maybe(number), t: maybe(vec3), r: maybe(fc.tuple(vec3, number)), x: extra })
  .map(({ s, t, r, x }) => obj(s !== undefined ? ["scale", s] : undefined, t !== undefined ? ["translate", t] : undefined,
    r !== undefined ? ["rotate", obj(["axis", r[0]], ["degrees", r[1]])] : undefined, x)) }, { weight: 1, arbitrary: anyValue });

// Small shapes only: the fuzz is about reading scenes, not about meshing large ones.
const shape: fc.Arbitrary<J> = fc.oneof(
  { weight: 10, arbitrary: fc.record({ kind: fc.constantFrom("plate", "box", "sphere", "disk"), size: number, x: extra }).map(({ kind, size, x }) =>
    obj([kind, kind === "sphere" || kind === "disk" ? obj(["radius", size], x) : obj(["size", kind === "plate" ? [size, 1] : [size, 1, 1]], ["divisions", 1], x)])) },
  { weight: 1, arbitrary: anyValue },
);

const source: fc.Arbitrary<Array<[string, J] | undefined>> = fc.oneof(
  shape.map((s): Array<[string, J]> => [["shape", s]]),
  fc.constantFrom<Array<[string, J]>>([["mesh", fixture("two_solids.stl")]], [["mesh", fixture("two_solids.stl")]], [["mesh", fixture("parts.obj")]],
    [["mesh", "missing.stl"]], [["mesh", "/dev/zero"]]),
);

const conductor: fc.Arbitrary<J> = fc.oneof(
  { weight: 12, arbitrary: fc.record({ name: maybe(fc.oneof(fc.constantFrom("a", "b", "pad", "__proto__", "constructor"), fc.string({ maxLength: 4 }))),
    src: source, parts: rarely(fc.array(fc.tuple(source, maybe(placement), extra), { maxLength: 2 }), 4), place: maybe(placement),
    potential: maybe(number), floating: rarely(fc.oneof(fc.boolean(), anyValue), 5), x: extra })
    .map(({ name, src, parts, place, potential, floating, x }) => obj(name !== undefined ? ["name", name] : undefined,
      ...(parts ? [["parts", parts.map(([s, p, px]) => obj(...s, p !== undefined ? ["place", p] : undefined, px))] as [string, J]] : src),
      place !== undefined ? ["place", place] : undefined, potential !== undefined ? ["potential", potential] : undefined,
      floating !== undefined ? ["floating", floating] : undefined, x)) },
  { weight: 1, arbitrary: anyValue },
);

const plane = fc.oneof({ weight: 10, arbitrary: fc.tuple(fc.constantFrom("x", "y", "z"), number, maybe(fc.constantFrom("even", "odd", "both", "sideways")), extra)
  .map(([axis, at, images, x]) => obj([axis, at], images !== undefined ? ["images", images] : undefined, x)) }, { weight: 1, arbitrary: anyValue });

const probe = fc.oneof({ weight: 10, arbitrary: fc.tuple(fc.constantFrom("point", "line", "grid"), vec3, vec3, number, extra).map(([kind, a, b, n, x]) =>
  kind === "point" ? obj(["point", a], x) : kind === "line" ? obj(["line", obj(["from", a], ["to", b], ["points", n], x)])
    : obj(["grid", obj(["origin", a], ["u", b], ["v", [0, 1, 0]], ["points", [n, 2]], x)])) }, { weight: 1, arbitrary: anyValue });

/** A chain of parameters each defined from the next (up to thousands long), or a small random set. */
const parameters: fc.Arbitrary<J> = fc.oneof(
  { weight: 8, arbitrary: fc.array(fc.tuple(fc.constantFrom(...NAMES, "gap", "w"), number), { maxLength: 4 }).map((entries): J => ({ entries })) },
  { weight: 1, arbitrary: fc.tuple(fc.integer({ min: 2, max: 2500 }), fc.boolean()).map(([n, down]): J => ({ entries: Array.from({ length: n }, (_, i): [string, J] =>
    [`p${i}`, down ? (i === n - 1 ? 1 : `=p${i + 1} + 1`) : (i === 0 ? 1 : `=p${i - 1} * 1`)]) })) },
  { weight: 1, arbitrary: anyValue },
);

const scene: fc.Arbitrary<string> = fc.record({
  unit: maybe(fc.oneof({ weight: 10, arbitrary: fc.constantFrom("mm", "m", "um") }, { weight: 1, arbitrary: fc.oneof(fc.constant("parsec"), anyValue) })),
  permittivity: maybe(number), breakdownField: maybe(number), ground: rarely(plane, 4), symmetry: rarely(fc.array(plane, { maxLength: 2 }), 4),
  conductors: fc.oneof({ weight: 20, arbitrary: fc.array(conductor, { minLength: 1, maxLength: 3 }) }, { weight: 1, arbitrary: anyValue }),
  probes: rarely(fc.array(probe, { maxLength: 2 }), 4), parameters: maybe(parameters), x: extra, bom: fc.boolean(), broken: rarely(fc.nat(), 12),
}).map((s) => {
  const body = text(obj(s.unit !== undefined ? ["unit", s.unit] : undefined, s.permittivity !== undefined ? ["permittivity", s.permittivity] : undefined,
    s.breakdownField !== undefined ? ["breakdownField", s.breakdownField] : undefined, s.ground !== undefined ? ["groundPlane", s.ground] : undefined,
    s.symmetry !== undefined ? ["symmetry", s.symmetry] : undefined, s.parameters !== undefined ? ["parameters", s.parameters] : undefined,
    ["conductors", s.conductors], s.probes !== undefined ? ["probes", s.probes] : undefined, s.x));
  // Now and then a syntax fault: the text cut short somewhere.
  const cut = s.broken === undefined ? body : body.slice(0, s.broken % Math.max(1, body.length));
  return (s.bom ? "\uFEFF" : "") + cut;
});

let counter = 0;
function writeScene(t: string): string {
  const file = join(dir, `scene-${counter++}.json`);
  writeFileSync(file, t);
  return file;
}

/** Load a scene file in process: "loaded", or the InputError's message; anything else fails the property. */
function outcome(file: string): string {
  try {
    loadScene(file);
    return "loaded";
  } catch (err) {
    if (!(err instanceof InputError)) throw new Error(`not an InputError: ${(err as Error)?.stack ?? String(err)}`);
    expect(err.message).not.toMatch(/[\n\r]/);
    expect(err.file, err.message).toBeTruthy();
    return err.message;
  }
}

describe("scene files fuzzed", () => {
  it("load or end in one InputError of one line naming a file", { timeout: 60_000 }, () => {
    const seen = { loaded: 0, refused: 0 };
    fc.assert(fc.property(scene, (t) => {
      if (outcome(writeScene(t)) === "loaded") seen.loaded++; else seen.refused++;
    }), { seed: SEED, numRuns: Number(process.env.SIGMESH_FUZZ_RUNS ?? 600) });
    // The generator must reach both ends, or the property says little.
    console.log(`scene fuzz (seed ${SEED}): ${seen.loaded} loaded, ${seen.refused} refused`);
    expect(seen.loaded).toBeGreaterThan(0);
    expect(seen.refused).toBeGreaterThan(seen.loaded);
  });

  it("the command line gives exit 2, one line and no stack trace for refused scenes", { timeout: 60_000 }, () => {
    const refused = fc.sample(scene, { seed: SEED + 1, numRuns: 60 }).filter((t) => outcome(writeScene(t)) !== "loaded").slice(0, 6);
    expect(refused.length).toBe(6);
    for (const t of refused) {
      const file = writeScene(t);
      const r = spawnSync(process.execPath, [cli, "extract", file], { encoding: "utf8", cwd: dir, timeout: 30_000 });
      expect(r.status, r.stderr).toBe(2);
      const lines = r.stderr.split("\n").filter((l) => l !== "");
      expect(lines.length, r.stderr).toBe(1);
      expect(lines[0]).toMatch(/^sigmesh: error: /);
      expect(r.stderr).not.toMatch(/\n\s+at /);
    }
  });
});
