/** Physical constants and defaults of the trade, in SI units. */

/** Vacuum permittivity ε0; F/m. CODATA 2022 recommended value 8.8541878188(14)e-12. */
export const EPSILON_0 = 8.8541878188e-12;

/**
 * Breakdown strength of air used by the field check by default; V/m.
 * About 3 MV/m for dry air at sea level between large smooth electrodes: common practice,
 * no single source (it falls with altitude, humidity, contamination and gap size, and
 * rises for very small gaps per Paschen's law).
 */
export const AIR_BREAKDOWN_FIELD = 3e6;

/** Coulomb's constant for a medium of relative permittivity εr: 1/(4π ε0 εr); m/F. */
export function coulombFactor(relativePermittivity: number): number {
  return 1 / (4 * Math.PI * EPSILON_0 * relativePermittivity);
}
