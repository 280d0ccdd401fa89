/**
 * Length units accepted on input. Mesh files carry no units, so the unit is always
 * stated by the user (or the scene) and echoed in every human-readable summary.
 * The default is the millimetre: CAD exports of the parts sigmesh serves
 * (boards, connectors, electrodes) are in millimetres far more often than not.
 */
import { InputError } from "../errors.js";

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

/** Spellings accepted for each unit, compared after trimming and lower-casing (the scene schema's `unit` lists them). */
export const UNIT_SPELLINGS: Readonly<Record<LengthUnit, readonly string[]>> = {
  m: ["m", "meter", "meters", "metre", "metres"],
  cm: ["cm", "centimeter", "centimeters", "centimetre", "centimetres"],
  mm: ["mm", "millimeter", "millimeters", "millimetre", "millimetres"],
  // U+00B5 MICRO SIGN and U+03BC GREEK SMALL LETTER MU both appear in the wild.
  um: ["um", "\u00b5m", "\u03bcm", "micron", "microns", "micrometer", "micrometers", "micrometre", "micrometres"],
  in: ["in", "inch", "inches"],
  mil: ["mil", "mils", "thou"],
};

const ALIASES = new Map<string, LengthUnit>();
for (const [u, names] of Object.entries(UNIT_SPELLINGS) as Array<[LengthUnit, readonly string[]]>) for (const n of names) ALIASES.set(n, u);

/** The accepted set, for messages: "m, cm, mm, um (µm, micron), in (inch), mil (thou)". */
export const UNIT_CHOICES = "m, cm, mm, um (µm, micron), in (inch), mil (thou); full names such as millimetre(s) or millimeter(s) also";

/** Parse a unit name, case-insensitively; throws InputError listing the accepted names. */
export function parseUnit(text: string, where?: string): LengthUnit {
  const u = typeof text === "string" ? ALIASES.get(text.trim().toLowerCase()) : undefined;
  if (u === undefined) {
    throw new InputError(`unknown length unit "${String(text).slice(0, 40)}" (use ${UNIT_CHOICES})`, where);
  }
  return u;
}

export function metresPer(unit: LengthUnit): number {
  return METRES_PER_UNIT[unit];
}
