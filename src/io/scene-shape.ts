/**
 * Shape entries of a scene: `"shape": { "box": { "size": [10, 10, 0.035], "divisions": 12 } }`,
 * `"shape": { "plate": { "size": [20, 10], "holes": [[-5, 0, 1.5], [5, 0, 1.5]] } }`,
 * the parameters of `sigmesh mesh` (src/mesh/primitives), lengths in the scene's unit. The mesh
 * is generated when the scene's meshes are loaded (./scene-mesh.ts).
 */
import { SHAPES, shapeParameters, type ShapeName, type ShapeParams } from "../mesh/primitives/index.js";
import { isObject } from "./json-value.js";

/** `"shape": { "<kind>": { params } }` with the parameter names checked against the generator's. */
export function parseShape(v: unknown, at: string, fail: (path: string, fault: string) => never): { kind: ShapeName; params: ShapeParams } {
  if (!isObject(v)) return fail(at, `expected an object naming one shape, such as { "box": { "size": [1, 1, 1] } } (shapes: ${SHAPES.join(", ")})`);
  const keys = Object.keys(v);
  if (keys.length !== 1) return fail(at, `expected exactly one shape (one of ${SHAPES.join(", ")}), got ${keys.length === 0 ? "none" : keys.join(", ")}`);
  const kind = keys[0];
  if (!(SHAPES as readonly string[]).includes(kind)) return fail(`${at}.${kind}`, `unknown shape (use ${SHAPES.join(", ")})`);
  const p = v[kind];
  if (!isObject(p)) return fail(`${at}.${kind}`, "expected an object of the shape's parameters");
  const known = shapeParameters(kind as ShapeName);
  for (const [name, value] of Object.entries(p)) {
    const param = known.find((q) => q.name === name);
    if (!param) fail(`${at}.${kind}.${name}`, `not a parameter of a ${kind} (it takes ${known.map((q) => q.name).join(", ")})`);
    const ok = (x: unknown): boolean => typeof x === "number" || typeof x === "string";
    if (param.circles) {
      // Circles: [[x, y, radius], ...], or the same numbers in one flat list.
      if (!(Array.isArray(value) && value.every((c) => ok(c) || (Array.isArray(c) && c.every(ok))))) fail(`${at}.${kind}.${name}`, "expected a list of circles [x, y, radius]");
    } else if (!(ok(value) || (Array.isArray(value) && value.every(ok)))) fail(`${at}.${kind}.${name}`, "expected a number, a list of numbers, or text");
  }
  for (const q of known) if (q.required && p[q.name] === undefined) fail(`${at}.${kind}`, `a ${kind} needs "${q.name}"`);
  return { kind: kind as ShapeName, params: p as ShapeParams };
}
