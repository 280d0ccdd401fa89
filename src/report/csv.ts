/**
 * Tables of an extraction for spreadsheets (CSV) and design reviews (Markdown).
 *
 * Both take the JSON report object (`extractionReport` in ./json.ts) as a plain value, so
 * they work as well from a report saved earlier as from a fresh extraction; `reportData`
 * validates such a value and names the key path of any fault.
 *
 * CSV follows RFC 4180 (Y. Shafranovich, "Common Format and MIME Type for Comma-Separated
 * Values (CSV) Files", IETF 2005): CRLF line ends, fields holding a comma, a double quote
 * or a line break are enclosed in double quotes with inner quotes doubled, and every record
 * has the same number of fields (shorter ones are padded). Numbers are written in SI units
 * named in the headers, with all the digits needed to read the same double back.
 *
 * Text that a spreadsheet would take for a formula (a net named "+3V3", "-12V", "=A1" or
 * "@x") is written with a leading apostrophe, the neutralisation MITRE's CWE-1236 ("Improper
 * Neutralization of Formula Elements in a CSV File") lists: Excel, LibreOffice and Google
 * Sheets show such a cell as text. Numbers, also negative ones given as text, are left alone.
 *
 * Markdown tables are the GitHub Flavored Markdown table extension (GFM spec 0.29, section
 * 4.10 "Tables"); text is escaped with backslashes, which CommonMark allows before any ASCII
 * punctuation (CommonMark spec 0.30, section 2.4 "Backslash escapes"). Control, format and
 * line-break characters in names are first written as visible escapes (`displayText`), so a
 * name can neither break a table nor send control sequences to a terminal showing the file;
 * the CSV, like the JSON report, keeps every name exactly.
 */
import { InputError } from "../errors.js";
import type { LengthUnit } from "../io/units.js";
import { formatSI, formatNumber, formatFieldStrength, formatPoint, formatArea, unitLabel, digitsFor, derivedErrors } from "../io/si.js";
import { displayText } from "../io/display-text.js";

/**
 * What an `--accuracy` run was asked and whether it got it, as the terminal summary and the
 * Markdown page both say it: "0.10 % on every diagonal entry and every coupling above 5.0 % of its
 * row's diagonal: reached".
 */
export function accuracyRequest(a: { requested: number; couplingThreshold: number; reached: boolean }): string {
  return `${formatNumber(100 * a.requested, 2)} % on every diagonal entry and every coupling above ${formatNumber(100 * a.couplingThreshold, 2)} % of its row's diagonal: ${a.reached ? "reached" : "NOT reached"}`;
}

export interface ReportConductor {
  name: string;
  triangles?: number;
  /** m² */
  area?: number;
  closed?: boolean;
  /** V */
  potential: number;
  /** C */
  charge: number;
  /** V/m; null when not finite. */
  peakField: number | null;
  /** metres */
  peakFieldAt: (number | null)[];
  fieldRatio: number | null;
  /** The peak is at a sharp edge: its value depends on the mesh (absent in reports written before it was carried). */
  peakFieldSingular?: boolean;
  /** N */
  force: number[];
}

/** The fields of a JSON extraction report that the tables use. */
export interface ReportData {
  input?: { files?: string[]; scene?: string | null; unit?: string; title?: string; parameters?: Record<string, number> };
  medium?: { relativePermittivity?: number; permittivity?: number; breakdownField?: number };
  conductors: ReportConductor[];
  capacitance: { maxwell: number[][]; mutual: number[][]; reference?: string; extrapolated?: boolean };
  /** J */
  energy?: number;
  accuracy?: {
    levels: Array<{ panels: number; maxwell: number[][] }>;
    order?: number;
    orderObserved?: boolean;
    errorEstimate?: number[][];
    relativeError?: number;
    /** With --accuracy (json.ts). */
    adaptive?: { requested: number; reached: boolean; marking: string; couplingThreshold: number; steps: number } | null;
  } | null;
  fieldCheck?: {
    breakdownField?: number;
    worstConductor?: string;
    peakField?: number | null;
    fieldRatio?: number | null;
    exceeded?: string[];
    cautions?: string[];
  };
  forcesComplete?: boolean;
  warnings?: string[];
}

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === "object" && v !== null && !Array.isArray(v);
}

/**
 * Check that `value` (a parsed JSON report) has what the tables need; InputError naming
 * `file` and the key path otherwise (`conductors[2].charge: expected a number`).
 */
export function reportData(value: unknown, file?: string): ReportData {
  const fail = (path: string, fault: string): never => { throw new InputError(`${path}: ${fault}`, file); };
  if (!isObject(value)) fail("(top level)", "expected a JSON object (a sigmesh extraction report)");
  const top = value as Record<string, unknown>;
  const num = (v: unknown, path: string, nullable = false): void => {
    if (nullable && v === null) return;
    if (typeof v !== "number" || !Number.isFinite(v)) fail(path, `expected a number${nullable ? " or null" : ""}`);
  };
  const matrix = (v: unknown, path: string, k: number): void => {
    if (!Array.isArray(v) || v.length !== k) fail(path, `expected ${k} rows (one per conductor)`);
    (v as unknown[]).forEach((row, i) => {
      if (!Array.isArray(row) || row.length !== k) fail(`${path}[${i}]`, `expected a row of ${k} numbers`);
      (row as unknown[]).forEach((x, j) => num(x, `${path}[${i}][${j}]`));
    });
  };
  if (!Array.isArray(top.conductors) || top.conductors.length === 0) fail("conductors", "expected a non-empty array");
  const conductors = top.conductors as unknown[];
  const k = conductors.length;
  conductors.forEach((c, i) => {
    const p = `conductors[${i}]`;
    if (!isObject(c)) fail(p, "expected an object");
    const o = c as Record<string, unknown>;
    if (typeof o.name !== "string") fail(`${p}.name`, "expected a string");
    num(o.potential, `${p}.potential`);
    num(o.charge, `${p}.charge`);
    num(o.peakField, `${p}.peakField`, true);
    if (o.peakFieldSingular !== undefined && typeof o.peakFieldSingular !== "boolean") fail(`${p}.peakFieldSingular`, "expected true or false");
    num(o.fieldRatio, `${p}.fieldRatio`, true);
    if (!Array.isArray(o.peakFieldAt) || o.peakFieldAt.length !== 3) fail(`${p}.peakFieldAt`, "expected 3 coordinates");
    (o.peakFieldAt as unknown[]).forEach((x, j) => num(x, `${p}.peakFieldAt[${j}]`, true));
    if (!Array.isArray(o.force) || o.force.length !== 3) fail(`${p}.force`, "expected 3 components");
    (o.force as unknown[]).forEach((x, j) => num(x, `${p}.force[${j}]`));
    if (o.area !== undefined) num(o.area, `${p}.area`);
    if (o.triangles !== undefined) num(o.triangles, `${p}.triangles`);
  });
  if (!isObject(top.capacitance)) fail("capacitance", "expected an object");
  const cap = top.capacitance as Record<string, unknown>;
  matrix(cap.maxwell, "capacitance.maxwell", k);
  matrix(cap.mutual, "capacitance.mutual", k);
  if (top.accuracy !== undefined && top.accuracy !== null) {
    if (!isObject(top.accuracy)) fail("accuracy", "expected an object or null");
    const a = top.accuracy as Record<string, unknown>;
    if (!Array.isArray(a.levels)) fail("accuracy.levels", "expected an array");
    (a.levels as unknown[]).forEach((l, i) => {
      if (!isObject(l)) fail(`accuracy.levels[${i}]`, "expected an object");
      num((l as Record<string, unknown>).panels, `accuracy.levels[${i}].panels`);
      matrix((l as Record<string, unknown>).maxwell, `accuracy.levels[${i}].maxwell`, k);
    });
    if (a.errorEstimate !== undefined) matrix(a.errorEstimate, "accuracy.errorEstimate", k);
    if (a.relativeError !== undefined) num(a.relativeError, "accuracy.relativeError");
    if (a.adaptive !== undefined && a.adaptive !== null) {
      if (!isObject(a.adaptive)) fail("accuracy.adaptive", "expected an object or null");
      const ad = a.adaptive as Record<string, unknown>;
      for (const key of ["requested", "couplingThreshold", "steps"]) num(ad[key], `accuracy.adaptive.${key}`);
      if (typeof ad.reached !== "boolean") fail("accuracy.adaptive.reached", "expected true or false");
      if (ad.marking !== "dorfler" && ad.marking !== "uniform") fail("accuracy.adaptive.marking", "expected dorfler or uniform");
    }
  }
  if (top.input !== undefined && isObject(top.input) && top.input.unit !== undefined) {
    if (typeof top.input.unit !== "string" || !(top.input.unit in { m: 1, cm: 1, mm: 1, um: 1, in: 1, mil: 1 })) fail("input.unit", "expected one of m, cm, mm, um, in, mil");
  }
  if (top.warnings !== undefined && (!Array.isArray(top.warnings) || !top.warnings.every((w) => typeof w === "string"))) fail("warnings", "expected an array of strings");
  if (top.fieldCheck !== undefined && isObject(top.fieldCheck)) {
    const c = top.fieldCheck.cautions;
    if (c !== undefined && (!Array.isArray(c) || !c.every((w) => typeof w === "string"))) fail("fieldCheck.cautions", "expected an array of strings");
  }
  return value as unknown as ReportData;
}

// ---------- CSV ----------

/** A number as text: what a spreadsheet reads as a number, not a formula. */
const NUMBER_TEXT = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/**
 * Text that spreadsheets would evaluate as a formula (first character = + - @, tab or CR;
 * CWE-1236) with an apostrophe in front; other text, and numbers written as text, unchanged.
 * Idempotent: the apostrophe is not itself a formula character.
 */
export function csvSafeText(s: string): string {
  return /^[=+\-@\t\r]/.test(s) && !NUMBER_TEXT.test(s) ? `'${s}` : s;
}

/** One CSV field (RFC 4180, section 2, rules 5-7), text neutralised as by `csvSafeText`. */
export function csvField(value: string | number | boolean | null | undefined): string {
  if (value === null || value === undefined) return "";
  const s = typeof value === "number" ? csvNumber(value) : csvSafeText(String(value));
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** Shortest text that reads back as the same double; empty for a non-finite value. */
function csvNumber(x: number): string {
  return Number.isFinite(x) ? String(x) : "";
}

/** Records to CSV text with CRLF line ends; records are padded to the widest. */
export function csvText(records: ReadonlyArray<ReadonlyArray<string | number | boolean | null | undefined>>): string {
  const width = records.reduce((w, r) => Math.max(w, r.length), 0);
  return records.map((r) => {
    const cells = r.map(csvField);
    while (cells.length < width) cells.push("");
    return cells.join(",");
  }).join("\r\n") + "\r\n";
}

/**
 * Parse RFC 4180 CSV (also accepting bare LF line ends) into records of strings. Throws a
 * RangeError naming the line of an unterminated quote or of text after a closing quote.
 */
export function parseCsv(text: string): string[][] {
  const records: string[][] = [];
  let record: string[] = [];
  let field = "";
  let i = 0, line = 1;
  const n = text.length;
  if (n === 0) return records;
  while (i < n) {
    const ch = text[i];
    if (ch === '"' && field === "") {
      const start = line;
      i++;
      for (;;) {
        if (i >= n) throw new RangeError(`line ${start}: quoted field is not closed`);
        const c = text[i];
        if (c === '"') {
          if (text[i + 1] === '"') { field += '"'; i += 2; continue; }
          i++;
          break;
        }
        if (c === "\n") line++;
        field += c;
        i++;
      }
      if (i < n && text[i] !== "," && text[i] !== "\r" && text[i] !== "\n") throw new RangeError(`line ${line}: text after a closing quote`);
      continue;
    }
    if (ch === ",") { record.push(field); field = ""; i++; continue; }
    if (ch === "\r" || ch === "\n") {
      record.push(field); field = "";
      records.push(record); record = [];
      i += ch === "\r" && text[i + 1] === "\n" ? 2 : 1;
      line++;
      continue;
    }
    field += ch;
    i++;
  }
  if (field !== "" || record.length > 0) { record.push(field); records.push(record); }
  return records;
}

type Cell = string | number | boolean | null | undefined;

/** The report's tables, each a list of records (header first). */
export function csvTables(data: ReportData): Record<"conductors" | "maxwell" | "mutual" | "accuracy", Cell[][]> {
  const names = data.conductors.map((c) => c.name);
  const conductors: Cell[][] = [[
    "name", "potential (V)", "charge (C)", "peak field (V/m)", "peak field x (m)", "peak field y (m)", "peak field z (m)",
    "ratio to breakdown", "force x (N)", "force y (N)", "force z (N)", "area (m^2)", "triangles", "closed",
  ]];
  for (const c of data.conductors) {
    conductors.push([c.name, c.potential, c.charge, c.peakField, c.peakFieldAt[0], c.peakFieldAt[1], c.peakFieldAt[2],
      c.fieldRatio, c.force[0], c.force[1], c.force[2], c.area, c.triangles, c.closed === undefined ? undefined : c.closed ? "yes" : "no"]);
  }
  const square = (title: string, m: number[][]): Cell[][] => [[title, ...names], ...m.map((row, i) => [names[i], ...row])];
  const ref = data.capacitance.reference ?? "infinity";
  const accuracy: Cell[][] = [];
  if (data.accuracy) {
    const a = data.accuracy;
    accuracy.push(["panels", ...names.map((n) => `C ${n},${n} (F)`)]);
    for (const l of a.levels) accuracy.push([l.panels, ...l.maxwell.map((row, i) => row[i])]);
    accuracy.push(["extrapolated", ...data.capacitance.maxwell.map((row, i) => row[i])]);
    if (a.errorEstimate) accuracy.push(["error estimate (F)", ...a.errorEstimate.map((row, i) => row[i])]);
    if (a.relativeError !== undefined) accuracy.push(["relative error", a.relativeError]);
    if (a.order !== undefined) accuracy.push(["convergence order", a.order, a.orderObserved ? "observed" : "assumed"]);
  }
  return {
    conductors,
    maxwell: square("Maxwell capacitance (F)", data.capacitance.maxwell),
    mutual: square(`mutual capacitance (F); diagonal: to the reference (${ref})`, data.capacitance.mutual),
    accuracy,
  };
}

/**
 * One CSV document of the report: sections "conductors", "Maxwell matrix", "mutual matrix"
 * and, with an error estimate, "accuracy", each led by a record naming it and separated by
 * an empty record. All records have the same field count (RFC 4180, section 2, rule 4).
 */
export function csvReport(data: ReportData): string {
  const t = csvTables(data);
  const records: Cell[][] = [];
  const section = (title: string, rows: Cell[][]): void => {
    if (rows.length === 0) return;
    if (records.length > 0) records.push([]);
    records.push([`# ${title}`]);
    records.push(...rows);
  };
  section("conductors", t.conductors);
  section(data.capacitance.extrapolated ? "Maxwell matrix (extrapolated)" : "Maxwell matrix", t.maxwell);
  section("mutual matrix", t.mutual);
  section("accuracy (diagonal entries per mesh)", t.accuracy);
  return csvText(records);
}

// ---------- Markdown ----------

/**
 * Text safe in a GFM table cell or list item: one line (control and format characters, line
 * breaks among them, as visible escapes), and the punctuation that starts inline markup
 * (emphasis, code, links, HTML, entities, strikethrough, cell bounds) escaped.
 */
export function markdownText(s: string): string {
  return displayText(s).replace(/[\\`*_[\]<>|&~]/g, (c) => `\\${c}`);
}

function markdownTable(header: string[], rows: string[][], right: boolean[]): string[] {
  const align = header.map((_, i) => (right[i] ? "---:" : ":---"));
  return [header, align, ...rows].map((r) => `| ${r.join(" | ")} |`);
}

const field = (v: number | null | undefined): string => (v === null || v === undefined ? "n/a" : formatFieldStrength(v));
const ratio = (v: number | null | undefined): string => (v === null || v === undefined ? "n/a" : formatNumber(v, 3));

function knownUnit(u: string | undefined): LengthUnit | undefined {
  return u !== undefined && u in { m: 1, cm: 1, mm: 1, um: 1, in: 1, mil: 1 } ? (u as LengthUnit) : undefined;
}

/**
 * A design-review page in Markdown: the conductor table, both matrices with engineering
 * prefixes, the accuracy estimate, the field check with margins, cautions and warnings.
 * Lengths are shown in the report's input unit (metres when it names none).
 */
export function markdownReport(data: ReportData, opts: { title?: string } = {}): string {
  const unit = knownUnit(data.input?.unit) ?? "m";
  const names = data.conductors.map((c) => markdownText(c.name));
  const k = names.length;
  const out: string[] = [];
  // The scene's own title first; else the caller's (the input's name).
  const title = typeof data.input?.title === "string" && data.input.title.trim() !== "" ? data.input.title : opts.title;
  out.push(`# ${markdownText(title ?? "Capacitance extraction")}`);
  out.push("");
  const facts: string[] = [];
  if (data.input?.scene) facts.push(`scene ${markdownText(data.input.scene)}`);
  else if (data.input?.files?.length) facts.push(`mesh ${data.input.files.map(markdownText).join(", ")}`);
  const params = data.input?.parameters && typeof data.input.parameters === "object" ? Object.entries(data.input.parameters) : [];
  if (params.length > 0) facts.push(`parameters ${params.map(([n, x]) => `${markdownText(n)} = ${String(x)}`).join(", ")}`);
  facts.push(`${k} conductor${k === 1 ? "" : "s"}`);
  if (data.medium?.relativePermittivity !== undefined) facts.push(`εr = ${formatNumber(data.medium.relativePermittivity)}`);
  facts.push(`lengths in ${unitLabel(unit)}`);
  out.push(facts.join("; ") + ".");
  out.push("");

  out.push("## Conductors");
  out.push("");
  // Capacitances and charges to the digits their estimates support, as the terminal prints them (three without).
  const errors = data.accuracy?.errorEstimate ? derivedErrors(data.accuracy.errorEstimate, data.conductors.map((c) => c.potential)) : undefined;
  const cap = (x: number, e: number | undefined): string => formatSI(x, "F", digitsFor(x, e));
  const crow = data.conductors.map((c, i) => {
    const at = c.peakFieldAt.every((x) => x !== null) ? formatPoint(c.peakFieldAt as number[], unit, 4) : "n/a";
    const f = Math.hypot(c.force[0], c.force[1], c.force[2]);
    return [names[i], formatSI(c.potential, "V"), formatSI(c.charge, "C", digitsFor(c.charge, errors?.charge[i])), field(c.peakField), markdownText(at), ratio(c.fieldRatio),
      formatSI(f, "N"), c.area === undefined ? "" : formatArea(c.area, unit)];
  });
  out.push(...markdownTable(["conductor", "potential", "charge", "peak \\|E\\|", "at", "E/Eb", "\\|force\\|", "area"], crow,
    [false, true, true, true, false, true, true, true]));
  out.push("");

  const matrixTable = (m: number[][], e: number[][] | undefined): string[] =>
    markdownTable(["", ...names], m.map((row, i) => [names[i], ...row.map((x, j) => cap(x, e?.[i][j]))]), [false, ...names.map(() => true)]);
  out.push(`## Maxwell capacitance matrix${data.capacitance.extrapolated ? " (extrapolated)" : ""}`);
  out.push("");
  out.push(...matrixTable(data.capacitance.maxwell, errors?.maxwell));
  out.push("");
  out.push("## Two-terminal (mutual) capacitances");
  out.push("");
  const ref = data.capacitance.reference ?? "infinity";
  const mrows: string[][] = [];
  // The reference named as the terminal summary names it.
  const refName = ref === "ground plane" ? "ground plane" : `reference (${markdownText(ref)})`;
  for (let i = 0; i < k; i++) mrows.push([`${names[i]} – ${refName}`, cap(data.capacitance.mutual[i][i], errors?.mutual[i][i])]);
  for (let i = 0; i < k; i++) for (let j = i + 1; j < k; j++) mrows.push([`${names[i]} – ${names[j]}`, cap(data.capacitance.mutual[i][j], errors?.mutual[i][j])]);
  out.push(...markdownTable(["between", "capacitance"], mrows, [false, true]));
  out.push("");
  if (data.energy !== undefined) {
    out.push(`Stored energy at the working potentials: ${formatSI(data.energy, "J", digitsFor(data.energy, errors?.energy))}.`);
    out.push("");
  }

  out.push("## Accuracy");
  out.push("");
  if (data.accuracy) {
    const a = data.accuracy;
    const order = typeof a.order === "number" && Number.isFinite(a.order) ? `, order ${formatNumber(a.order, 3)} ${a.orderObserved ? "observed" : "assumed"}`
      : a.levels.length >= 3 ? ", no steady convergence: the finest values with twice their last change" : "";
    if (a.relativeError !== undefined) out.push(`Estimated error: ±${formatNumber(100 * a.relativeError, 2)} % of the largest entry in each row (Richardson extrapolation over ${a.levels.map((l) => l.panels).join(" → ")} panels${order}).`);
    if (a.adaptive) out.push("", `Requested ${accuracyRequest(a.adaptive)} (${a.adaptive.marking === "dorfler" ? "adaptive" : "uniform"} refinement, ${a.adaptive.steps} solves).`);
    out.push("");
    out.push(...markdownTable(["panels", ...names.map((n) => `C(${n})`)],
      [...a.levels.map((l) => [String(l.panels), ...l.maxwell.map((row, i) => formatSI(row[i], "F"))]),
        ["extrapolated", ...data.capacitance.maxwell.map((row, i) => cap(row[i], errors?.maxwell[i][i]))]],
      [true, ...names.map(() => true)]));
  } else {
    out.push("Not estimated: the extraction ran on one mesh (refine it for an error estimate).");
  }
  out.push("");

  out.push("## Field check");
  out.push("");
  const eb = data.fieldCheck?.breakdownField ?? data.medium?.breakdownField;
  if (eb !== undefined) out.push(`Breakdown field used: ${formatFieldStrength(eb)}.`);
  out.push("");
  const frows = data.conductors.map((c, i) => {
    const r = c.fieldRatio;
    // A peak at a sharp edge grows with refinement: no verdict (peak-field.ts).
    const verdict = c.peakFieldSingular ? "sharp edge: grows with refinement, model the real radius"
      : r === null ? "n/a" : r >= 1 ? "**exceeds breakdown**" : r > 0 ? `${formatNumber(1 / r, 3)}× below` : "no field";
    return [names[i], field(c.peakField), ratio(r), verdict];
  });
  out.push(...markdownTable(["conductor", "peak \\|E\\|", "E/Eb", "margin"], frows, [false, true, true, false]));
  out.push("");
  const cautions = data.fieldCheck?.cautions ?? [];
  if (cautions.length) {
    out.push("## Cautions");
    out.push("");
    for (const c of cautions) out.push(`- ${markdownText(c)}`);
    out.push("");
  }
  if (data.warnings?.length) {
    out.push("## Warnings");
    out.push("");
    for (const w of data.warnings) out.push(`- ${markdownText(w)}`);
    out.push("");
  }
  return out.join("\n");
}
