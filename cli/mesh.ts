/**
 * `sigmesh mesh <shape>`: write a generated mesh of a simple conductor to STL or OBJ.
 * Parameters are in the user's unit; the library works in metres.
 */
import type { Command } from "commander";
import { statSync } from "node:fs";
import { action, printWarnings } from "./common.js";
import { InputError } from "../src/errors.js";
import { parseUnit, metresPer, DEFAULT_UNIT } from "../src/io/units.js";
import { encodeMesh, outputFormatFromPath, writeMeshFile } from "../src/io/write.js";
import { checkOutputPaths } from "../src/io/atomic.js";
import { generateShape, SHAPES, type ShapeParams } from "../src/mesh/primitives/index.js";
import { surfaceArea } from "../src/mesh/measure.js";
import { formatArea, formatSI, unitLabel } from "../src/io/si.js";
import { compressedBytes } from "../src/extract/memory.js";
import { displayText } from "../src/io/display-text.js";

/** Option flag for a parameter name: panelSize -> --panel-size. */
const flag = (param: string): string => "--" + param.replace(/[A-Z]/g, (c) => "-" + c.toLowerCase());

const PARAMETERS: [string, string][] = [
  ["radius", "radius (sphere, disk, cylinder, capsule)"],
  ["majorRadius", "axis to tube centre (torus)"],
  ["minorRadius", "tube radius (torus)"],
  ["size", "edge lengths LX,LY,LZ (box) or LX,LY (plate)"],
  ["fillet", "radius of every edge and corner of a box (0 = sharp, up to half the smallest side)"],
  ["holes", "circular holes in a plate: X,Y,R[;X,Y,R...] from the plate's centre, in its plane"],
  ["length", "length along the axis (bar); of the straight part between the hemispheres (capsule, 0 = sphere)"],
  ["width", "width (bar)"],
  ["thickness", "thickness (bar, washer)"],
  ["innerRadius", "hole radius (washer)"],
  ["outerRadius", "outer radius (washer)"],
  ["edgeRadius", "radius of the washer's edges (0 = square, the default; up to half the thickness)"],
  ["height", "length cap to cap (cylinder)"],
  ["level", "icosphere subdivision level L, 20*4^L triangles (sphere; default 3)"],
  ["panels", "least number of triangles (sphere)"],
  ["divisions", "divisions per side N or NX,NY[,NZ] (of a box's flat part when filleted); rings (disk); segments around (cylinder, capsule, washer's outer rim, torus NU[,NV])"],
  ["panelSize", "target panel edge length, instead of divisions"],
  ["grading", "largest/smallest spacing along a side, toward edges and rims (1 = uniform)"],
  ["center", "centre X,Y,Z"],
  ["axis", "axis x, y or z: normal of a plate or disk, axis of a cylinder, capsule, washer, torus or bar"],
  ["name", "conductor name (default: the shape)"],
];

/** Triangles above which `mesh` warns that the mesh is far finer than an extraction needs. */
const LARGE_MESH = 1_000_000;

export function registerMesh(program: Command): void {
  const cmd = program
    .command("mesh")
    .argument("<shape>", `one of ${SHAPES.join(", ")}`)
    .description("generate a boundary-element mesh of a simple conductor (closed shapes outward-oriented)");
  for (const [param, help] of PARAMETERS) cmd.option(`${flag(param)} <value>`, help);
  cmd
    .option("--unit <unit>", "length unit of the parameters and the output file (m, cm, mm, um, in, mil, or spelled out)", DEFAULT_UNIT)
    .option("-o, --output <file>", "output mesh: .stl (binary), .obj, or - for ASCII STL on stdout")
    .option("--ascii", "write ASCII STL instead of binary")
    .option("-q, --quiet", "no summary line")
    .action(action((shape: string, opts: Record<string, string | boolean | undefined>) => {
      const unit = parseUnit(String(opts.unit), "--unit");
      const output = typeof opts.output === "string" ? opts.output : undefined;
      if (output === undefined || output === "") throw new InputError("give the output file with -o (.stl or .obj, or - for stdout)");
      const format = output === "-" ? "stl-ascii" : outputFormatFromPath(output, Boolean(opts.ascii));
      checkOutputPaths([{ path: output, option: "-o" }]);
      const params: ShapeParams = {};
      for (const [param] of PARAMETERS) {
        const v = opts[param];
        if (typeof v === "string") params[param] = v;
      }
      const mesh = generateShape(shape, params, { metresPerUnit: metresPer(unit), describe: flag });
      if (output === "-") {
        // A reader that stops early (`| head`) is not a failure of ours.
        process.stdout.on("error", (err: NodeJS.ErrnoException) => { if (err.code === "EPIPE") process.exit(0); else throw err; });
        process.stdout.write(encodeMesh(mesh, format, unit));
      }
      else writeMeshFile(output, mesh, format, unit);
      const n = mesh.triangles.length / 3;
      // A mesh far beyond what an extraction needs is said so, with what its solve would take.
      if (n > LARGE_MESH) {
        printWarnings([{ message: `${n} triangles${output === "-" ? "" : ` (${formatSI(statSync(output).size, "B", 3)})`}: an extraction of this mesh needs about ${formatSI(compressedBytes(n, 1), "B", 2)} and minutes; a coarser mesh (a smaller --level or a larger --panel-size) usually gives the capacitance to 0.1 % with --refine` }], false);
      }
      if (!opts.quiet) {
        // Area as `check` and `extract` print it (same digits, same unit notation).
        process.stderr.write(displayText(`sigmesh: ${shape} "${mesh.names[0]}": ${n} triangles, ${mesh.positions.length / 3} vertices, area ${formatArea(surfaceArea(mesh), unit)}, lengths in ${unitLabel(unit)} -> ${output === "-" ? "stdout" : `${output} (${formatSI(statSync(output).size, "B", 3)})`}`) + "\n");
      }
    }));
}
