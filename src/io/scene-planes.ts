/**
 * Planes of a scene: the ground plane and the mirror symmetry planes with their images, each an
 * axis-aligned plane written `{ "z": 0 }` (position in the scene's unit, offsets in metres here).
 */
import type { AxisPlane, Axis, SymmetryPlane } from "../bem/images.js";
import { metresPer, type LengthUnit } from "./units.js";
import { isObject } from "./json-value.js";

/**
 * An axis-aligned plane written `{ "z": 0 }` (one of x, y, z, its position in `unit`), or the
 * fault as a phrase. Exported for the command line's plane options (`z=0`).
 */
export function planeFromObject(v: unknown, unit: LengthUnit): AxisPlane | string {
  if (!isObject(v)) return "expected an object naming one axis and its position, such as { \"z\": 0 }";
  const keys = Object.keys(v);
  if (keys.length !== 1 || !["x", "y", "z"].includes(keys[0])) {
    return `expected exactly one of the keys x, y, z (the plane's normal axis), got ${keys.length === 0 ? "none" : keys.join(", ")}`;
  }
  const at = v[keys[0]];
  if (typeof at !== "number" || !Number.isFinite(at)) return `${keys[0]}: expected a number (position in ${unit})`;
  return { axis: keys[0] as Axis, offset: at * metresPer(unit) };
}

/**
 * The scene's `symmetry` list (undefined: none): at most one plane per axis, none parallel to
 * the ground plane.
 */
export function parseSymmetry(value: unknown, unit: LengthUnit, groundPlane: AxisPlane | undefined,
  fail: (path: string, fault: string) => never): SymmetryPlane[] {
  const symmetry: SymmetryPlane[] = [];
  if (value !== undefined) {
    if (!Array.isArray(value)) fail("symmetry", "expected a list of planes, such as [ { \"x\": 0 } ]");
    (value as unknown[]).forEach((entry, i) => {
      let images: SymmetryPlane["images"], mirrored: SymmetryPlane["mirrored"];
      let bare = entry;
      if (isObject(entry) && ("images" in entry || "mirrored" in entry)) {
        const { images: im, mirrored: mi, ...rest } = entry;
        if (im !== undefined) {
          if (im !== "even" && im !== "odd" && im !== "both") fail(`symmetry[${i}].images`, `expected "even", "odd" or "both", got ${JSON.stringify(im)}`);
          images = im as SymmetryPlane["images"];
        }
        if (mi !== undefined) {
          if (images !== "both") fail(`symmetry[${i}].mirrored`, "the mirrored conductors' potentials apply to \"images\": \"both\" only");
          if (mi !== "same" && mi !== "opposite") fail(`symmetry[${i}].mirrored`, `expected "same" or "opposite", got ${JSON.stringify(mi)}`);
          mirrored = mi as SymmetryPlane["mirrored"];
        }
        bare = rest;
      }
      const g = planeFromObject(bare, unit);
      if (typeof g === "string") fail(`symmetry[${i}]`, g);
      const plane: SymmetryPlane = { ...(g as AxisPlane), images: images ?? "even" };
      if (mirrored) plane.mirrored = mirrored;
      const j = symmetry.findIndex((q) => q.axis === plane.axis);
      if (j >= 0) fail(`symmetry[${i}]`, `symmetry[${j}] is already normal to ${plane.axis} (at most one symmetry plane per axis)`);
      if (groundPlane && groundPlane.axis === plane.axis) fail(`symmetry[${i}]`, `parallel to the ground plane (normal to ${plane.axis}): the images would never end; use planes on other axes`);
      symmetry.push(plane);
    });
  }
  return symmetry;
}
