/**
 * The physical range of a model's size, checked before welding and solving.
 *
 * Limits (our choice, generous on both sides):
 * - no coordinate beyond 1e6 m (1,000 km) from the origin. The largest conductor systems people
 *   model electrostatically (a transmission-line span, an HV substation) are kilometres; past
 *   about 1e150 m the squares of lengths in the kernels overflow to Infinity, and long before
 *   that a mesh in millimetres read as metres (or a scale typed with too many zeros) is the
 *   likely cause.
 * - a bounding-box diagonal of at least 1e-9 m (1 nm). Below that the conductor is a few atoms
 *   across and continuum electrostatics does not describe it; past about 1e-75 m the products of
 *   four lengths in the panel integrals underflow to zero, and a model in metres read as
 *   millimetres (or a scale of 1e-300) is the likely cause.
 * - a diagonal of at least 1e-7 of the largest coordinate's magnitude: a model far from the
 *   origin for its size keeps few digits of its shape in its coordinates (a 1 mm part at 10 km
 *   keeps about 9; the weld tolerance, 1e-6 of the diagonal, must stay many rounding steps wide).
 * Non-finite coordinates (Infinity from an overflowing scale, NaN) are refused with the first.
 */
/** Largest magnitude of a coordinate; metres. */
export const MAX_COORDINATE = 1e6;
/** Smallest bounding-box diagonal of a model; metres. */
export const MIN_MODEL_SIZE = 1e-9;
/** Smallest ratio of the bounding-box diagonal to the largest coordinate magnitude. */
export const MIN_SIZE_TO_OFFSET = 1e-7;

/**
 * The fault of a model outside the physical range, or undefined. Only vertices a triangle uses
 * count. `metresPerUnit` scales `positions` to metres; `vertexPlace(v, t)` names vertex v of triangle t for the
 * message (its line, facet or node), `unitName` the unit the coordinates are written in.
 */
export function physicalSizeFault(positions: Float64Array, triangles: Uint32Array, metresPerUnit = 1,
  vertexPlace: (v: number, t: number) => string = (v) => `vertex ${v + 1}`, unitName = "m"): string | undefined {
  let minx = Infinity, miny = Infinity, minz = Infinity, maxx = -Infinity, maxy = -Infinity, maxz = -Infinity;
  const limit = MAX_COORDINATE / metresPerUnit;
  for (let k = 0; k < triangles.length; k++) {
    const v = triangles[k];
    const x = positions[3 * v], y = positions[3 * v + 1], z = positions[3 * v + 2];
    if (!(Math.abs(x) <= limit && Math.abs(y) <= limit && Math.abs(z) <= limit)) {
      const worst = [x, y, z].find((c) => !(Math.abs(c) <= limit))!;
      const axis = "xyz"[[x, y, z].indexOf(worst)];
      const where = Number.isFinite(worst)
        ? `lies ${formatLengthAny(Math.abs(worst) * metresPerUnit)} from the origin, beyond the ${formatLengthAny(MAX_COORDINATE)} a model may reach`
        : "is not a finite number";
      return `${vertexPlace(v, Math.floor(k / 3))}: coordinate ${axis} = ${Number(worst.toPrecision(6))} ${unitName} ${where}; check the length unit and any scale`;
    }
    if (x < minx) minx = x; if (x > maxx) maxx = x;
    if (y < miny) miny = y; if (y > maxy) maxy = y;
    if (z < minz) minz = z; if (z > maxz) maxz = z;
  }
  if (triangles.length === 0) return undefined;
  const diagonal = Math.hypot(maxx - minx, maxy - miny, maxz - minz) * metresPerUnit;
  if (!(diagonal >= MIN_MODEL_SIZE)) {
    return `the model is ${formatLengthAny(diagonal)} across (bounding-box diagonal), smaller than the ${formatLengthAny(MIN_MODEL_SIZE)} ` +
      "below which a conductor is a few atoms wide; check the length unit and any scale";
  }
  const offset = Math.max(Math.abs(minx), Math.abs(maxx), Math.abs(miny), Math.abs(maxy), Math.abs(minz), Math.abs(maxz)) * metresPerUnit;
  if (diagonal < MIN_SIZE_TO_OFFSET * offset) {
    return `the model is ${formatLengthAny(diagonal)} across but lies ${formatLengthAny(offset)} from the origin: its coordinates keep ` +
      "too few digits of its shape; move it nearer the origin";
  }
  return undefined;
}

/** A length in metres for a message (this layer has no unit formatting; src/io/si.ts sits above it). */
function formatLengthAny(metres: number): string {
  const m = Math.abs(metres);
  return `${m !== 0 && (m >= 1e4 || m < 1e-3) ? metres.toExponential(2).replace("e+", "e") : String(Number(metres.toPrecision(3)))} m`;
}
