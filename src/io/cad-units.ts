/**
 * The length unit a CAD file declares, read from its own text: STEP's unit entities
 * (ISO 10303-41: SI_UNIT with an optional prefix, CONVERSION_BASED_UNIT such as 'INCH')
 * named by the GLOBAL_UNIT_ASSIGNED_CONTEXT of a representation context, and IGES's global
 * section, parameters 14 (units flag) and 15 (units name) (IGES 5.3, section 2.2.4.3). BREP
 * files carry no unit.
 *
 * The geometry itself is converted by the kernel (occt reads STEP and IGES in their own unit
 * and writes millimetres when asked); this is what the summary reports, and it decides
 * whether a `--unit` differs from the file's.
 */

export interface DeclaredUnit {
  /** The unit as people write it: "millimetre", "inch", "foot", ... */
  name: string;
  /** Metres per unit; NaN when the name is not one we know. */
  metres: number;
}

const SI_PREFIX: Record<string, number> = {
  EXA: 1e18, PETA: 1e15, TERA: 1e12, GIGA: 1e9, MEGA: 1e6, KILO: 1e3, HECTO: 1e2, DECA: 1e1,
  DECI: 1e-1, CENTI: 1e-2, MILLI: 1e-3, MICRO: 1e-6, NANO: 1e-9, PICO: 1e-12, FEMTO: 1e-15, ATTO: 1e-18,
};

/** Named conversion-based length units; 1 in = 25.4 mm exactly, 1 ft = 12 in. */
const NAMED: Record<string, number> = {
  INCH: 25.4e-3, FOOT: 0.3048, FEET: 0.3048, MIL: 25.4e-6, THOU: 25.4e-6, YARD: 0.9144, MILE: 1609.344, MICROINCH: 25.4e-9,
  MILLIMETRE: 1e-3, MILLIMETER: 1e-3, CENTIMETRE: 1e-2, CENTIMETER: 1e-2, METRE: 1, METER: 1,
};

/**
 * Length units of a STEP file's representation contexts, each once in order of appearance
 * (several when an assembly mixes parts drawn in different units); empty when none is found.
 */
export function stepLengthUnits(text: string): DeclaredUnit[] {
  const entity = new Map<string, string>();
  const contexts: string[] = [];
  // Instances are `#id = ...;`; a ';' inside a quoted string would end one early, which at
  // worst loses a unit we then report as not declared.
  const re = /#(\d+)\s*=\s*([^;]*);/g;
  for (let m = re.exec(text); m !== null; m = re.exec(text)) {
    const body = m[2].replace(/\s+/g, " ");
    entity.set(m[1], body);
    if (/GLOBAL_UNIT_ASSIGNED_CONTEXT/i.test(body)) contexts.push(body);
  }
  const found: DeclaredUnit[] = [];
  for (const ctx of contexts) {
    const list = /GLOBAL_UNIT_ASSIGNED_CONTEXT\s*\(\s*\(([^)]*)\)/i.exec(ctx);
    if (!list) continue;
    for (const ref of list[1].split(",")) {
      const unit = entity.get(ref.trim().replace(/^#/, ""));
      if (unit === undefined || !/LENGTH_UNIT/i.test(unit)) continue;
      const d = lengthUnitEntity(unit);
      if (d && !found.some((f) => f.name === d.name)) found.push(d);
    }
  }
  return found;
}

function lengthUnitEntity(body: string): DeclaredUnit | undefined {
  const conv = /CONVERSION_BASED_UNIT\s*\(\s*'([^']*)'/i.exec(body);
  if (conv) {
    const raw = conv[1].trim();
    const key = raw.toUpperCase().replace(/\s+/g, "");
    return { name: raw.toLowerCase(), metres: NAMED[key] ?? NaN };
  }
  const si = /SI_UNIT\s*\(\s*(\$|\.[A-Z]+\.)\s*,\s*\.METRE\.\s*\)/i.exec(body);
  if (si) {
    const prefix = si[1] === "$" ? "" : si[1].slice(1, -1).toUpperCase();
    const factor = prefix === "" ? 1 : SI_PREFIX[prefix] ?? NaN;
    return { name: `${prefix.toLowerCase()}metre`, metres: factor };
  }
  return undefined;
}

/** IGES units flags (IGES 5.3, global parameter 14). */
const IGES_FLAG: Record<number, DeclaredUnit> = {
  1: { name: "inch", metres: 25.4e-3 }, 2: { name: "millimetre", metres: 1e-3 }, 4: { name: "foot", metres: 0.3048 },
  5: { name: "mile", metres: 1609.344 }, 6: { name: "metre", metres: 1 }, 7: { name: "kilometre", metres: 1e3 },
  8: { name: "mil", metres: 25.4e-6 }, 9: { name: "micrometre", metres: 1e-6 }, 10: { name: "centimetre", metres: 1e-2 },
  11: { name: "microinch", metres: 25.4e-9 },
};
const IGES_NAME: Record<string, DeclaredUnit> = {
  IN: IGES_FLAG[1], INCH: IGES_FLAG[1], MM: IGES_FLAG[2], FT: IGES_FLAG[4], MI: IGES_FLAG[5], M: IGES_FLAG[6], KM: IGES_FLAG[7],
  MIL: IGES_FLAG[8], UM: IGES_FLAG[9], MICRON: IGES_FLAG[9], CM: IGES_FLAG[10], UIN: IGES_FLAG[11],
};

/** The unit of an IGES file's global section, or undefined when it cannot be read. */
export function igesLengthUnit(text: string): DeclaredUnit | undefined {
  // Fixed 80-column records: section letter in column 73, data in columns 1-72.
  let global = "";
  for (const line of text.split(/\r?\n/)) if (line.length >= 73 && line[72] === "G") global += line.slice(0, 72);
  if (global === "") return undefined;
  const params = igesParameters(global);
  const flag = Number(params[13]);
  const name = (params[14] ?? "").trim().toUpperCase();
  if (flag === 3) return IGES_NAME[name] ?? (name ? { name: name.toLowerCase(), metres: NaN } : undefined);
  return IGES_FLAG[flag] ?? (IGES_NAME[name] ? IGES_NAME[name] : undefined);
}

/**
 * Global parameters as strings, Hollerith strings (`nHtext`) decoded. The parameter and
 * record delimiters are parameters 1 and 2 themselves (default ',' and ';').
 */
function igesParameters(g: string): string[] {
  let pd = ",", rd = ";", i = 0;
  const out: string[] = [];
  const readOne = (): string => {
    const start = i;
    const h = /^\s*(\d+)H/.exec(g.slice(i, i + 12));
    if (h) {
      const n = Number(h[1]);
      const from = i + h[0].length;
      i = from + n;
      const s = g.slice(from, i);
      while (i < g.length && g[i] === " ") i++;
      return s;
    }
    while (i < g.length && g[i] !== pd && g[i] !== rd) i++;
    return g.slice(start, i).trim();
  };
  while (i < g.length && out.length < 26) {
    const v = readOne();
    out.push(v);
    if (out.length === 1 && v.length === 1) pd = v;
    if (out.length === 2 && v.length === 1) rd = v;
    if (i >= g.length || g[i] === rd) break;
    i++; // the parameter delimiter
  }
  return out;
}

/** "inch", or "inch, millimetre" for an assembly of mixed units; "" when none is declared. */
export function describeUnits(units: DeclaredUnit[]): string {
  return units.map((u) => u.name).join(", ");
}
