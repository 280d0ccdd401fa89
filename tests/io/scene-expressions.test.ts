/**
 * Scene parameters and expressions: precedence and associativity against the values any
 * calculator gives (hand-worked below; the precedence rules are common practice, documented
 * in src/io/parameters.ts), faults with their positions, and substitution into scenes.
 */
import { describe, it, expect } from "vitest";
import { evaluateExpression, ExpressionError, resolveParameters } from "../../src/io/parameters.js";
import { parseScene, substituteScene } from "../../src/io/scene.js";
import { InputError } from "../../src/errors.js";

const fail = (path: string, fault: string): never => { throw new InputError(`${path}: ${fault}`); };

describe("expressions", () => {
  it("follow the usual precedence and associativity", () => {
    const p = { gap: 2, w: 10 };
    const cases: [string, number][] = [
      ["1 + 2 * 3", 7], ["(1 + 2) * 3", 9], ["10 - 4 - 3", 3], ["24 / 4 / 2", 3], ["2 ^ 3 ^ 2", 512],
      ["-2 ^ 2", -4], ["(-2) ^ 2", 4], ["2 ^ -1", 0.5], ["- -3", 3], ["+4 * -2", -8],
      ["gap/2 + w", 11], ["w - gap * 3", 4], ["2 * (gap + w) / 4", 6], ["1.5e3 * .002", 3],
      ["sqrt(16) + abs(-3)", 7], ["min(3, gap, w)", 2], ["max(1, 2 * w, 3)", 20], ["cos(0) + sin(0)", 1],
      ["2 * pi", 2 * Math.PI], ["tan(pi / 4)", Math.tan(Math.PI / 4)], ["sqrt(gap^2 + w^2)", Math.sqrt(104)],
    ];
    for (const [text, want] of cases) expect(evaluateExpression(text, p), text).toBe(want);
  });

  it("name the fault and its position", () => {
    const at = (text: string): [string, number] => {
      try { evaluateExpression(text, { gap: 2 }); } catch (err) {
        expect(err).toBeInstanceOf(ExpressionError);
        return [(err as ExpressionError).fault, (err as ExpressionError).position];
      }
      throw new Error(`no error for ${text}`);
    };
    expect(at("gap/2 + wx")).toEqual(['unknown parameter "wx"', 9]);
    expect(at("1 +")[1]).toBe(4);
    expect(at("(1 + 2")).toEqual(['expected ")" to close the "(" at position 1, found the end', 7]);
    expect(at("1 + 2)")).toEqual(['")" without a matching "("', 6]);
    expect(at("2 3")).toEqual(['unexpected "3" after a complete expression', 3]);
    expect(at("foo(1)")[0]).toMatch(/unknown function "foo"/);
    expect(at("sqrt 2")[0]).toMatch(/sqrt is a function/);
    expect(at("1 / (gap - 2)")).toEqual(["division by zero", 3]);
    expect(at("sqrt(1, 2)")[0]).toMatch(/sqrt takes 1 argument, got 2/);
    expect(at("sqrt(-1)")[0]).toMatch(/not a finite number/);
    expect(at("   ")[0]).toBe("empty expression");
    expect(at("1 $ 2")).toEqual(['unexpected "$" after a complete expression', 3]);
  });

  it("resolve parameters defined from other parameters in any order, and refuse cycles", () => {
    expect(resolveParameters({ half: "=gap/2", gap: 4 }, {}, fail)).toEqual({ half: 2, gap: 4 });
    expect(resolveParameters({ half: "=gap/2", gap: 4 }, { gap: 10 }, fail)).toEqual({ half: 5, gap: 10 });
    expect(() => resolveParameters({ a: "=b", b: "=a + 1" }, {}, fail)).toThrow(/parameters\.a: defined in terms of itself \(a -> b -> a\)/);
    expect(() => resolveParameters({ pi: 3 }, {}, fail)).toThrow(/parameters\.pi: "pi" is a function or constant/);
    expect(() => resolveParameters({ gap: 1 }, { gapp: 2 }, fail)).toThrow(/no parameter "gapp" to vary \(the scene's parameters are gap\)/);
    expect(() => resolveParameters({ gap: true }, {}, fail)).toThrow(/parameters\.gap: expected a number or an expression/);
  });
});

describe("parameters in scenes", () => {
  const scene = (conductors: unknown[], extra: Record<string, unknown> = {}): string =>
    JSON.stringify({ unit: "mm", parameters: { gap: 2, w: 10 }, ...extra, conductors });

  it("substitute into shape sizes, placements, potentials and planes, as if written by hand", () => {
    const text = scene([
      { name: "pad", shape: { box: { size: ["=w", "=w", 0.035], divisions: 2 } }, potential: "=gap * 2.5" },
      { name: "top", shape: { plate: { size: ["=w", "=w"], divisions: 2 } }, place: { translate: [0, 0, "=gap + 0.035/2"] } },
    ], { groundPlane: { z: "=-gap" } });
    const byHand = JSON.stringify({ unit: "mm", parameters: { gap: 2, w: 10 }, groundPlane: { z: -2 }, conductors: [
      { name: "pad", shape: { box: { size: [10, 10, 0.035], divisions: 2 } }, potential: 5 },
      { name: "top", shape: { plate: { size: [10, 10], divisions: 2 } }, place: { translate: [0, 0, 2 + 0.035 / 2] } },
    ] });
    expect(substituteScene(text, "s.json")).toEqual(JSON.parse(byHand));
    const a = parseScene(text, "s.json"), b = parseScene(byHand, "s.json");
    expect(a).toEqual(b);
    expect(a.parameters).toEqual({ gap: 2, w: 10 });
    const moved = parseScene(text, "s.json", { parameters: { gap: 3 } });
    expect(moved.conductors[1].place?.translate[2]).toBe(3 + 0.035 / 2);
    expect(moved.conductors[0].potential).toBe(7.5);
    expect(moved.groundPlane?.offset).toBeCloseTo(-3e-3, 15);
  });

  it("report faults with the key path and the position in the expression", () => {
    const bad = (conductors: unknown[], re: RegExp): void => expect(() => parseScene(scene(conductors), "s.json")).toThrow(re);
    bad([{ name: "a", shape: { box: { size: ["=w", "=wx", 1] } } }],
      /^s\.json: conductors\[0\]\.shape\.box\.size\[1\]: expression "=wx": unknown parameter "wx" at position 2$/);
    bad([{ name: "a", shape: { box: { size: [1, 1, 1] } } }, { name: "b", shape: { box: { size: [1, 1, "=(gap"] } } }],
      /conductors\[1\]\.shape\.box\.size\[2\]: expression "=\(gap": expected "\)" to close the "\(" at position 1, found the end at position 6/);
    bad([{ name: "a", mesh: "a.stl", shape: { box: { size: [1, 1, 1] } } }], /conductors\[0\]: give either mesh .* or shape/);
    bad([{ name: "a", shape: { cube: { size: 1 } } }], /conductors\[0\]\.shape\.cube: unknown shape/);
    bad([{ name: "a", shape: { box: { size: [1, 1, 1], radius: 2 } } }], /conductors\[0\]\.shape\.box\.radius: not a parameter of a box/);
    bad([{ name: "a", shape: { box: { divisions: 2 } } }], /conductors\[0\]\.shape\.box: a box needs "size"/);
    bad([{ name: "a", shape: { box: { size: [1, 1, 1], fillet: [[0.1]] } } }], /^s\.json: conductors\[0\]\.shape\.box\.fillet: expected a number, a list of numbers, or text$/);
    bad([{ name: "a", shape: { plate: { size: [10, 6], holes: 5 } } }], /^s\.json: conductors\[0\]\.shape\.plate\.holes: expected a list of circles \[x, y, radius\]$/);
    bad([{ name: "a", shape: { capsule: { radius: 1 } } }], /^s\.json: conductors\[0\]\.shape\.capsule: a capsule needs "length"$/);
    bad([{ name: "a", shape: { washer: { innerRadius: 1, outerRadius: 2, thickness: 1, edge: 0.1 } } }], /^s\.json: conductors\[0\]\.shape\.washer\.edge: not a parameter of a washer \(it takes innerRadius, outerRadius, thickness, edgeRadius,/);
    bad([{ name: "a", shape: { box: { size: [1, 1, 1] } }, place: { rotate: { axis: [0, 0, 0], degrees: 5 } } }], /conductors\[0\]\.place\.rotate\.axis: the axis has zero length/);
    bad([{ name: "a", shape: { box: { size: [1, 1, 1] } }, place: { scale: [1, 0, 1] } }], /conductors\[0\]\.place\.scale\[1\]: a scale factor of 0/);
    bad([{ name: "a", shape: { box: { size: [1, 1, 1] } }, place: { move: [1, 0, 1] } }], /conductors\[0\]\.place\.move: unknown key/);
    bad([{ name: "a", shape: { box: { size: [1, 1, 1] } }, place: { translate: [1, "=gap/0", 1] } }], /conductors\[0\]\.place\.translate\[1\]: expression "=gap\/0": division by zero at position 5/);
    expect(() => parseScene(scene([{ shape: { box: { size: [1, 1, 1] } } }]), "s.json", { parameters: { height: 1 } })).toThrow(/s\.json: parameters: no parameter "height" to vary/);
  });
});
