/**
 * The cautions every field report carries. Wording is our own; the advice is common
 * practice of high-voltage design, with the standards named as the authority.
 */

/** Potentials above this are treated as hazardous in the wording of the report; volts.
 *  50 V is the usual extra-low-voltage limit for AC (IEC 61140 practice; value from memory). */
export const HAZARDOUS_VOLTAGE = 50;

export const FIELD_CAUTIONS: readonly string[] = [
  "Surface fields are estimates from a boundary-element model of the surfaces as meshed, not measurements.",
  "At sharp mesh edges and corners the true field is singular: the computed peak there grows as the mesh is refined. Model the real edge and corner radii to get meaningful peak fields.",
  "The breakdown strength used (default about 3 MV/m for air) is a rule of thumb; real onset depends on gap length, pressure, humidity, surface condition, contamination and waveform.",
];

export const HAZARD_CAUTION =
  "Hazardous voltages: follow the applicable clearance and creepage standards (for example IEC 60664-1), local electrical codes and licensed engineering practice. sigmesh does not certify a design.";

export const SOLID_INSULATION_CAUTION =
  "Breakdown strengths of solid and liquid insulation are material data for a given thickness, temperature and waveform; voids, interfaces, creepage along surfaces and ageing lower them. The per-medium check compares the field just outside each conductor with the strength entered for that medium only; the field inside the bodies and along their surfaces is not checked.";

/**
 * The cautions for a job with these potentials (volts). `perMedium`: the field check used
 * strengths of dielectric bodies besides the background's.
 */
export function cautionsFor(potentials: ArrayLike<number>, opts: { perMedium?: boolean } = {}): string[] {
  let vmax = 0;
  for (let i = 0; i < potentials.length; i++) vmax = Math.max(vmax, Math.abs(potentials[i]));
  // Differences between conductors matter as much as potentials to the reference.
  let vmin = Infinity, vtop = -Infinity;
  for (let i = 0; i < potentials.length; i++) { vmin = Math.min(vmin, potentials[i]); vtop = Math.max(vtop, potentials[i]); }
  const span = Math.max(vmax, vtop - vmin);
  const out = [...FIELD_CAUTIONS];
  if (opts.perMedium) out.push(SOLID_INSULATION_CAUTION);
  if (span > HAZARDOUS_VOLTAGE) out.unshift(HAZARD_CAUTION);
  else out.push(HAZARD_CAUTION);
  return out;
}
