/**
 * Potential and electric field at points in space from the solved surface charge
 * (the probe routine later features build on). Points on or very near a surface are
 * legal: the panel integrals are in closed form there; on a panel the normal field is
 * the principal value (the mean of the two sides).
 */
import { hasImages, imageSet, type AxisPlane, type SymmetryPlane } from "../bem/images.js";
import { EPSILON_0 } from "./constants.js";
import { potentialAt, fieldAt } from "../bem/field.js";
import type { PanelSet } from "../bem/panels.js";
import type { ImageSet } from "../bem/images.js";
import { sharedFloat64, type WorkerPool } from "../linalg/pool.js";
import { applyOnce } from "../linalg/apply-once.js";
import { task } from "../linalg/task.js";
import { fieldBlockTask, sharedPanels } from "../bem/assembly.js";

export interface ProbeResult {
  /** Potential at each point; volts. */
  potential: Float64Array;
  /** Field at each point, 3 per point; V/m. */
  field: Float64Array;
}

/**
 * Probe the field of panel charges `charge` (coulombs per panel) on `panels` in a medium of
 * absolute permittivity `permittivity` (F/m), at `points` (3 per point, metres). `images`: the
 * mirror charges of a ground plane or symmetry planes (bem/images.ts), included when given.
 */
export function probeField(panels: PanelSet, charge: Float64Array, permittivity: number, points: Float64Array,
  images?: ImageSet): ProbeResult {
  if (points.length % 3 !== 0) throw new RangeError(`probe points hold ${points.length} numbers, not a multiple of 3`);
  const m = points.length / 3;
  const potential = new Float64Array(m), field = new Float64Array(3 * m);
  potentialAt(panels, charge, points, potential, images);
  fieldAt(panels, charge, points, field, images);
  const k = 1 / (4 * Math.PI * permittivity);
  for (let i = 0; i < m; i++) potential[i] *= k;
  for (let i = 0; i < 3 * m; i++) field[i] *= k;
  return { potential, field };
}

/** E_pv at the centroids of the listed panels (3 per listed panel); V/m. */
export function centroidFields(panels: PanelSet, charge: Float64Array, permittivity: number, list: Uint32Array,
  images?: ImageSet): Float64Array {
  const pts = new Float64Array(3 * list.length);
  for (let a = 0; a < list.length; a++) {
    const p = list[a];
    pts[3 * a] = panels.centroids[3 * p]; pts[3 * a + 1] = panels.centroids[3 * p + 1]; pts[3 * a + 2] = panels.centroids[3 * p + 2];
  }
  return probeField(panels, charge, permittivity, pts, images).field;
}

/**
 * centroidFields with the listed panels split over the workers of `pool` (each sums over all
 * source panels for its share, the same arithmetic as the serial routine, so the result is the
 * same to the last bit); serial without a pool or for short lists.
 */
export async function centroidFieldsParallel(panels: PanelSet, charge: Float64Array, permittivity: number, list: Uint32Array,
  images: ImageSet | undefined, pool: WorkerPool | undefined): Promise<Float64Array> {
  const parts = pool ? Math.min(pool.size, Math.floor(list.length / PARALLEL_MIN_TARGETS)) : 0;
  if (!pool || parts < 2) return centroidFields(panels, charge, permittivity, list, images);
  const out = sharedFloat64(3 * list.length);
  const step = Math.ceil(list.length / parts);
  await Promise.all(Array.from({ length: parts }, (_, w) => {
    const a0 = w * step, a1 = Math.min(list.length, a0 + step);
    return pool.run(centroidFieldsTask, w, [panels, charge, permittivity, list.subarray(a0, a1), images, out, 3 * a0]);
  }));
  return Float64Array.from(out);
}

/**
 * E_pv at the centroids of the listed panels (3 per listed panel; V/m) in about N log N work:
 * the field of all the panel charges, evaluated block by block over an H-matrix block tree
 * without storing it (linalg/apply-once.ts; near blocks with the closed-form panel
 * integrals, admissible blocks through ACA+ of the three field matrices stacked, to
 * `tolerance` per block). Used where the all-pairs sum of centroidFields would cost minutes
 * (an 80k-panel pad array: 6.4·10⁹ panel pairs); below FAST_FIELD_PAIRS target-source pairs it
 * (or `minPairs`) is that exact sum. Measured against it in tests/extract/centroid-fields.test.ts.
 */
export async function centroidFieldsFast(panels: PanelSet, charge: Float64Array, permittivity: number, list: Uint32Array,
  images: ImageSet | undefined, pool: WorkerPool | undefined, tolerance: number, minPairs = FAST_FIELD_PAIRS): Promise<Float64Array> {
  const n = panels.n, sources = images ? n * (images.count + 1) : n;
  if (list.length * sources < minPairs) return centroidFieldsParallel(panels, charge, permittivity, list, images, pool);
  const S = sharedPanels(panels);
  const wanted = new Uint8Array(n);
  for (let a = 0; a < list.length; a++) wanted[list[a]] = 1;
  const y = await applyOnce(S.centroids, { source: { task: fieldBlockTask, before: [S], after: [images] } }, charge, {
    tolerance, components: 3, pad: S.radii, rows: wanted, pool,
  });
  const k = 1 / (4 * Math.PI * permittivity), out = new Float64Array(3 * list.length);
  for (let a = 0; a < list.length; a++) {
    const p = list[a];
    out[3 * a] = k * y[3 * p]; out[3 * a + 1] = k * y[3 * p + 1]; out[3 * a + 2] = k * y[3 * p + 2];
  }
  return out;
}

/** Target × source panel pairs from which centroidFieldsFast compresses (an exact sum of about 2 s on 2 cores). */
export const FAST_FIELD_PAIRS = 3e7;

/** Fewest target panels per worker worth a task (the panels are copied to the workers unless shared). */
const PARALLEL_MIN_TARGETS = 64;

/** Worker task: centroidFields for `list`, written into the shared `out` from `outOff`. */
export function centroidFieldsInto(panels: PanelSet, charge: Float64Array, permittivity: number, list: Uint32Array,
  images: ImageSet | undefined, out: Float64Array, outOff: number): number {
  out.set(centroidFields(panels, charge, permittivity, list, images), outOff);
  return list.length;
}

export const centroidFieldsTask = task(import.meta.url, { centroidFieldsInto });

/** Probe an extraction's field at the working potentials (finest mesh). */
export function probeExtraction(r: { panels: PanelSet; excitation: { charge: Float64Array }; permittivity: number; images?: ImageSet;
  dielectric?: { panels: PanelSet; totalCharge: Float64Array }; groundPlane?: AxisPlane; symmetry?: SymmetryPlane[] },
  points: Float64Array): ProbeResult {
  // With dielectric bodies every charge, free and bound, radiates in vacuum; the images then
  // mirror all panels, not only the conductors'.
  if (r.dielectric) {
    // Planes with images "both" are unfolded into explicit copies (symmetry-unfold.ts): no images for them.
    const spec = { groundPlane: r.groundPlane, symmetry: (r.symmetry ?? []).filter((p) => p.images !== "both") };
    const images = hasImages(spec) ? imageSet(r.dielectric.panels, spec) : undefined;
    return probeField(r.dielectric.panels, r.dielectric.totalCharge, EPSILON_0, points, images);
  }
  return probeField(r.panels, r.excitation.charge, r.permittivity, points, r.images);
}
