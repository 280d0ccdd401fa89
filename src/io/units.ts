/**
 * Length units accepted on input. Mesh files carry no units, so the unit is always
 * stated by the user (or the scene) and echoed in every human-readable summary.
 * The default is the millimetre: CAD exports of the parts sigmesh serves
 * (boards, connectors, electrodes) are in millimetres far more often than not.
 */
import { InputError } from "./errors.js";

export type LengthUnit = "m" | "cm" | "mm" | "um" | "in" | "mil";

export const DEFAULT_UNIT: LengthUnit = "mm";

/** Metres per unit. 1 in = 25.4 mm exactly (international inch, 1959); 1 mil = 1/1000 in. */
export const METRES_PER_UNIT: Readonly<Record<LengthUnit, number>> = {
  m: 1,
  cm: 1e-2,
  mm: 1e-3,
  um: 1e-6,
  in: 25.4e-3,
  mil: 25.4e-6,
};

const ALIASES: Record<string, LengthUnit> = {
  m: "m", cm: "cm", mm: "mm", um: "um", "µm": "um", "μm": "um", micron: "um", in: "in", inch: "in", mil: "mil", thou: "mil",
};

/** Parse a unit name; throws InputError listing the accepted names. */
export function parseUnit(text: string, where?: string): LengthUnit {
  const u = ALIASES[text.trim().toLowerCase()];
  if (u === undefined) {
    throw new InputError(`unknown length unit "${text}" (use m, cm, mm, um, in or mil)`, where);
  }
  return u;
}

export function metresPer(unit: LengthUnit): number {
  return METRES_PER_UNIT[unit];
}
