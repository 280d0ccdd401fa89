/**
 * Generated meshes of simple conductors, and `generateShape`, the one entry that the
 * command line and scene files use: it checks every parameter and names the bad one.
 * Shape functions take metres; `generateShape` scales lengths from the caller's unit.
 */
import type { SurfaceMesh } from "../model.js";
import { InputError } from "../../errors.js";
import { sphereMesh } from "./sphere.js";
import { boxMesh } from "./box.js";
import { plateMesh } from "./plate.js";
import { diskMesh } from "./disk.js";
import { cylinderMesh } from "./cylinder.js";
import { torusMesh } from "./torus.js";
import { barMesh } from "./bar.js";
import { filletedBoxMesh } from "./filleted-box.js";
import { capsuleMesh } from "./capsule.js";
import { washerMesh } from "./washer.js";
import { plateHolesMesh, holesFault, type Hole } from "./plate-holes.js";
import type { Axis } from "./placement.js";

export { sphereMesh, sphereLevel, icosphereEdge, MAX_SPHERE_LEVEL, type SphereParams } from "./sphere.js";
export { boxMesh, sideDivisions, type BoxParams } from "./box.js";
export { plateMesh, type PlateParams } from "./plate.js";
export { diskMesh, diskLayout, diskFromLayout, diskRings, type DiskParams, type DiskLayout } from "./disk.js";
export { cylinderMesh, cylinderSegments, type CylinderParams } from "./cylinder.js";
export { torusMesh, torusSegments, type TorusParams } from "./torus.js";
export { barMesh, type BarParams } from "./bar.js";
export { filletedBoxMesh, filletedBoxDivisions, type FilletedBoxParams } from "./filleted-box.js";
export { capsuleMesh, capsuleSegments, type CapsuleParams } from "./capsule.js";
export { washerMesh, washerSpacing, type WasherParams } from "./washer.js";
export { plateHolesMesh, holesFault, type Hole, type PlateHolesParams } from "./plate-holes.js";
export { facedShape, referenceFactor, REFERENCE_TRIANGLE_BUDGET, type FaceNormal, type FacedTriangulation } from "./reference.js";
export { symmetricNodes, rimNodes, placeSymmetric } from "./grading.js";
export { placeShape, MAX_TRIANGLES, type Axis } from "./placement.js";

export const SHAPES = ["sphere", "box", "plate", "disk", "cylinder", "torus", "bar", "capsule", "washer"] as const;
export type ShapeName = (typeof SHAPES)[number];

/** A parameter as written by a user: a number, a list of numbers, text ("1,2,3", "x"), or for circles a list of [x, y, radius] lists. */
export type ShapeParamValue = number | string | readonly (number | string)[] | readonly (readonly (number | string)[])[];
export type ShapeParams = Record<string, ShapeParamValue | undefined>;

type Kind =
  | "length" | "length0" | "length2" | "length3" | "point" | "circles"
  | "level" | "count" | "count1or2" | "count1or3" | "count3"
  | "ratio" | "axis" | "name";

const SCHEMA: Record<ShapeName, Record<string, Kind>> = {
  sphere: { radius: "length", level: "level", panels: "count", panelSize: "length", center: "point", name: "name" },
  box: { size: "length3", fillet: "length0", divisions: "count1or3", panelSize: "length", grading: "ratio", center: "point", name: "name" },
  plate: { size: "length2", holes: "circles", divisions: "count1or2", panelSize: "length", grading: "ratio", axis: "axis", center: "point", name: "name" },
  disk: { radius: "length", divisions: "count", panelSize: "length", grading: "ratio", axis: "axis", center: "point", name: "name" },
  cylinder: { radius: "length", height: "length", divisions: "count", panelSize: "length", grading: "ratio", axis: "axis", center: "point", name: "name" },
  torus: { majorRadius: "length", minorRadius: "length", divisions: "count1or2", panelSize: "length", axis: "axis", center: "point", name: "name" },
  bar: { length: "length", width: "length", thickness: "length", divisions: "count3", panelSize: "length", grading: "ratio", axis: "axis", center: "point", name: "name" },
  capsule: { radius: "length", length: "length0", divisions: "count", panelSize: "length", axis: "axis", center: "point", name: "name" },
  washer: {
    innerRadius: "length", outerRadius: "length", thickness: "length", edgeRadius: "length0",
    divisions: "count", panelSize: "length", grading: "ratio", axis: "axis", center: "point", name: "name",
  },
};

const REQUIRED: Record<ShapeName, string[]> = {
  sphere: ["radius"], box: ["size"], plate: ["size"], disk: ["radius"],
  cylinder: ["radius", "height"], torus: ["majorRadius", "minorRadius"], bar: ["length", "width", "thickness"],
  capsule: ["radius", "length"], washer: ["innerRadius", "outerRadius", "thickness"],
};

/**
 * The parameters of each shape: which take the caller's length unit, which are required, and
 * which are a list of circles (x, y, radius triples: a scene may write them as a list of lists).
 */
export function shapeParameters(shape: ShapeName): { name: string; isLength: boolean; required: boolean; circles: boolean }[] {
  return Object.entries(SCHEMA[shape]).map(([name, kind]) => ({
    name, isLength: ["length", "length0", "length2", "length3", "point", "circles"].includes(kind), required: REQUIRED[shape].includes(name), circles: kind === "circles",
  }));
}

export interface GenerateOptions {
  /** Metres per unit of the length parameters (1 when they are in metres). */
  metresPerUnit?: number;
  /** How to name a parameter in a message (the CLI says `--panel-size`, a scene `"panelSize"`). */
  describe?: (param: string) => string;
  /** File and place for messages (a scene file and its entry). */
  file?: string;
  place?: string;
}

/** A length back in the caller's unit for a message, without the last-digit noise of the scaling. */
const shown = (metres: number, scale: number): number => Number((metres / scale).toPrecision(12));

const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

function numbersOf(value: ShapeParamValue, fail: (why: string) => never): number[] {
  const parts = typeof value === "number" ? [value] : typeof value === "string" ? value.split(",") : value.flat();
  if (parts.length === 0) fail("is empty");
  return parts.map((p) => {
    if (typeof p === "number") {
      if (!Number.isFinite(p)) fail(`must be finite, got ${p}`);
      return p;
    }
    const s = String(p).trim();
    if (!DECIMAL.test(s)) fail(`"${s}" is not a number`);
    const x = Number(s);
    if (!Number.isFinite(x)) fail(`"${s}" is out of range`);
    return x;
  });
}

/**
 * Build a shape from user parameters. Lengths are in the caller's unit (scaled by
 * `metresPerUnit`); the mesh returned is in metres. Throws InputError naming the
 * parameter for an unknown shape or parameter, a missing one, or a bad value.
 */
export function generateShape(shape: string, params: ShapeParams, opts: GenerateOptions = {}): SurfaceMesh {
  const scale = opts.metresPerUnit ?? 1;
  const describe = opts.describe ?? ((p: string) => `"${p}"`);
  const error = (fault: string): InputError => new InputError(fault, opts.file, opts.place);
  if (!(SHAPES as readonly string[]).includes(shape)) throw error(`unknown shape "${shape}" (use ${SHAPES.join(", ")})`);
  const name = shape as ShapeName;
  const schema = SCHEMA[name];
  const values: Record<string, unknown> = {};
  for (const [param, raw] of Object.entries(params)) {
    if (raw === undefined) continue;
    const kind = schema[param];
    if (kind === undefined) throw error(`${describe(param)} does not apply to a ${name} (it takes ${Object.keys(schema).map(describe).join(", ")})`);
    const fail = (why: string): never => { throw error(`${describe(param)} ${why}`); };
    values[param] = convert(kind, raw, scale, fail);
  }
  for (const param of REQUIRED[name]) if (values[param] === undefined) throw error(`a ${name} needs ${describe(param)}`);
  const sizing = ["level", "panels", "panelSize", "divisions"].filter((p) => values[p] !== undefined);
  if (sizing.length > 1) throw error(`give only one of ${sizing.map(describe).join(" and ")}`);
  if ((name === "cylinder" || name === "torus" || name === "capsule" || name === "washer") && values.divisions !== undefined) {
    const d = values.divisions;
    if (!(typeof d === "number" ? d >= 3 : (d as number[]).every((x) => x >= 3))) throw error(`${describe("divisions")} must be at least 3 segments around`);
  }
  try {
    switch (name) {
      case "sphere": return sphereMesh(values as never);
      case "box": {
        const r = (values.fillet as number | undefined) ?? 0;
        const sides = values.size as number[];
        if (r > Math.min(...sides) / 2) throw error(`${describe("fillet")} must be at most half the smallest side (${shown(Math.min(...sides) / 2, scale)}), got ${shown(r, scale)}`);
        // A fillet of 0 is the plain box, mesh for mesh.
        return r > 0 ? filletedBoxMesh(values as never) : boxMesh(values as never);
      }
      case "plate": {
        const holes = values.holes as Hole[] | undefined;
        if (holes === undefined || holes.length === 0) return plateMesh(values as never);
        // In the caller's unit, so the message reads as the input was written.
        const fault = holesFault((values.size as number[]).map((l) => shown(l, scale)), holes.map(([x, y, r]) => [shown(x, scale), shown(y, scale), shown(r, scale)]));
        if (fault) throw error(`${describe("holes")}: ${fault}`);
        return plateHolesMesh(values as never);
      }
      case "disk": return diskMesh(values as never);
      case "cylinder": return cylinderMesh(values as never);
      case "torus": {
        if ((values.minorRadius as number) >= (values.majorRadius as number)) throw error(`${describe("minorRadius")} must be less than ${describe("majorRadius")}`);
        return torusMesh(values as never);
      }
      case "bar": return barMesh(values as never);
      case "capsule": return capsuleMesh(values as never);
      case "washer": {
        const a = values.innerRadius as number, b = values.outerRadius as number, t = values.thickness as number, e = (values.edgeRadius as number | undefined) ?? 0;
        if (!(a < b)) throw error(`${describe("innerRadius")} must be less than ${describe("outerRadius")}`);
        if (e > t / 2 || e > (b - a) / 2) throw error(`${describe("edgeRadius")} must be at most half the thickness and half the ring's width (${shown(Math.min(t, b - a) / 2, scale)}), got ${shown(e, scale)}`);
        return washerMesh(values as never);
      }
    }
  } catch (err) {
    // Generators refuse meshes beyond the triangle budget with a RangeError; for a user that is bad input.
    if (err instanceof RangeError) {
      const sizingHint = schema.panelSize ? `; use a larger ${describe("panelSize")} or fewer ${describe(name === "sphere" ? "level" : "divisions")}` : "";
      throw error(`${name}: ${err.message.replace(/^\w+Mesh: /, "")}${sizingHint}`);
    }
    throw err;
  }
}

function convert(kind: Kind, raw: ShapeParamValue, scale: number, fail: (why: string) => never): unknown {
  if (kind === "name") {
    if (typeof raw !== "string" || raw.trim() === "") fail("must be a non-empty name");
    return (raw as string).trim();
  }
  if (kind === "axis") {
    const a = typeof raw === "string" ? raw.trim().toLowerCase() : "";
    if (a !== "x" && a !== "y" && a !== "z") fail(`must be x, y or z, got "${String(raw)}"`);
    return a as Axis;
  }
  if (kind === "circles" && Array.isArray(raw) && raw.length === 0) return [];
  // Circles on the command line may be separated by ";" ("0,0,1;2,2,0.5").
  if (kind !== "circles" && Array.isArray(raw) && raw.some((x) => Array.isArray(x))) fail("expected a number, a list of numbers, or text");
  if (kind === "circles" && Array.isArray(raw) && raw.some((x) => Array.isArray(x) && x.length !== 3)) fail("takes each circle as [x, y, radius]");
  const xs = numbersOf(kind === "circles" && typeof raw === "string" ? raw.replace(/;/g, ",") : raw, fail);
  const expect = (counts: number[]): void => {
    if (!counts.includes(xs.length)) fail(`takes ${counts.join(" or ")} value${counts.length === 1 && counts[0] === 1 ? "" : "s"}, got ${xs.length}`);
  };
  switch (kind) {
    case "length": case "length2": case "length3": {
      expect([kind === "length" ? 1 : kind === "length2" ? 2 : 3]);
      if (!xs.every((x) => x > 0)) fail(`must be positive, got ${xs.join(",")}`);
      const m = xs.map((x) => x * scale);
      return kind === "length" ? m[0] : m;
    }
    case "length0":
      expect([1]);
      if (!(xs[0] >= 0)) fail(`must be 0 or more, got ${xs[0]}`);
      return xs[0] * scale;
    case "circles": {
      if (xs.length % 3 !== 0) fail(`takes circles as x, y, radius triples, got ${xs.length} number${xs.length === 1 ? "" : "s"}`);
      const circles: Hole[] = [];
      // Radii, and where the circles lie, are checked against the shape (holesFault).
      for (let i = 0; i < xs.length; i += 3) circles.push([xs[i] * scale, xs[i + 1] * scale, xs[i + 2] * scale]);
      return circles;
    }
    case "point":
      expect([3]);
      return xs.map((x) => x * scale);
    case "ratio":
      expect([1]);
      if (!(xs[0] >= 1)) fail(`must be at least 1 (largest / smallest spacing; 1 is uniform), got ${xs[0]}`);
      if (!(xs[0] <= 1e6)) fail(`must be at most 1e6, got ${xs[0]}`);
      return xs[0];
    case "level":
      expect([1]);
      if (!(Number.isInteger(xs[0]) && xs[0] >= 0 && xs[0] <= 10)) fail(`must be a whole number from 0 to 10, got ${xs[0]}`);
      return xs[0];
    case "count": case "count1or2": case "count1or3": case "count3": {
      expect(kind === "count" ? [1] : kind === "count1or2" ? [1, 2] : kind === "count1or3" ? [1, 3] : [3]);
      if (!xs.every((x) => Number.isInteger(x) && x >= 1)) fail(`must be whole numbers of at least 1, got ${xs.join(",")}`);
      if (!xs.every((x) => x <= 1e7)) fail(`is too large (${xs.join(",")})`);
      return xs.length === 1 && kind !== "count3" ? xs[0] : xs;
    }
  }
  return fail("has an unknown kind");
}
