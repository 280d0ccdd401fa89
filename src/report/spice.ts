/**
 * SPICE subcircuit of the capacitance network: one port per conductor and one for the
 * reference (the far surroundings, or a ground plane when the extraction used one).
 * C_ii^m goes from port i to the reference, C_ij^m between ports i and j: exactly the
 * network whose port charges are Q = C·V with C the Maxwell matrix.
 *
 * Netlist syntax is the open trade convention of Berkeley SPICE3 and its successor
 * ngspice (T. Quarles et al., SPICE3 Version 3f User's Manual, UC Berkeley 1993; ngspice
 * User's Manual, chapter "Circuit description"): a `*` line is a comment, a `+` line
 * continues the previous one, an element line is `Cname node+ node- value`, `.SUBCKT
 * name ports...` / `.ENDS name` bracket a subcircuit, names are case-insensitive, and a
 * value may carry one scale factor T G MEG K MIL M U N P F (M is milli, MEG mega; letters
 * after the factor are ignored). Node "0" is the global ground, so the reference is a
 * port of its own that the user ties to 0 or to anything else.
 */
import { engineeringExponent } from "../io/si.js";
import { displayText } from "../io/display-text.js";

/** Scale factors SPICE3 reads (ngspice manual, table of scale factors). */
const SCALE: ReadonlyArray<[string, number]> = [
  // Longest first so that "MEG" and "MIL" win over "M".
  ["MEG", 1e6], ["MIL", 25.4e-6], ["T", 1e12], ["G", 1e9], ["K", 1e3], ["M", 1e-3], ["U", 1e-6], ["N", 1e-9], ["P", 1e-12], ["F", 1e-15],
];

/** Prefixes written: only those every SPICE3 descendant reads (atto is not among them). */
const WRITTEN: ReadonlyArray<[number, string]> = [[-15, "f"], [-12, "p"], [-9, "n"], [-6, "u"], [-3, "m"], [0, ""]];

/**
 * A value in SPICE engineering notation with `digits` significant digits, trailing zeros
 * dropped: 1.234e-12 → "1.234p", 4.7e-9 → "4.7n", 0.5 → "500m". Outside femto … units the
 * value is written with an exponent ("2.5e-18"), which every SPICE reads.
 */
export function spiceNumber(value: number, digits = 6): string {
  if (!Number.isFinite(value)) throw new RangeError(`spiceNumber: ${value} is not a finite value`);
  if (value === 0) return "0";
  const mag = Math.abs(value);
  const e3 = engineeringExponent(mag, digits);
  const sign = value < 0 ? "-" : "";
  const prefix = WRITTEN.find(([e]) => e === e3);
  if (!prefix) return sign + trimZeros(mag.toExponential(digits - 1));
  return sign + trimZeros((mag / 10 ** e3).toPrecision(digits)) + prefix[1];
}

function trimZeros(s: string): string {
  const [mant, exp] = s.split("e");
  const m = mant.includes(".") ? mant.replace(/0+$/, "").replace(/\.$/, "") : mant;
  return exp === undefined ? m : `${m}e${exp.replace(/^\+/, "")}`;
}

/** Read a SPICE number ("1.5p", "1.5pF", "2MEG", "3e-12", "10mil"); NaN when it is not one. */
export function parseSpiceNumber(text: string): number {
  const m = /^([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)([A-Za-z]*)$/.exec(text.trim());
  if (!m) return NaN;
  const base = Number(m[1]);
  const suffix = m[2].toUpperCase();
  if (suffix === "") return base;
  for (const [s, f] of SCALE) if (suffix.startsWith(s)) return base * f;
  // Letters that are not a scale factor are a unit name and are ignored ("1V", "3Farad"
  // would read as femto: SPICE's own pitfall, kept so that we read what SPICE reads).
  return base;
}

/** Names SPICE reserves for the global ground in ngspice ("0", and "gnd" as an alias). */
const RESERVED = ["0", "gnd"];

/**
 * Legal, unique SPICE node names for `names`: ASCII letters, digits and underscores, not
 * starting with a digit, unique without regard to case (SPICE folds case), and different
 * from `reserved` (the reference node and the ground names). Accents are dropped (Düse →
 * Duse), other characters become underscores, and a clash takes a suffix _2, _3, ….
 */
export function spiceNodeNames(names: readonly string[], reserved: readonly string[] = []): string[] {
  const taken = new Set([...RESERVED, ...reserved].map((s) => s.toLowerCase()));
  return names.map((name) => {
    let s = name.normalize("NFKD").replace(/[\u0300-\u036f]/g, "").replace(/[^A-Za-z0-9_]+/g, "_").replace(/^_+|_+$/g, "");
    if (s === "") s = "N";
    if (/^[0-9]/.test(s)) s = "N" + s;
    let candidate = s;
    for (let n = 2; taken.has(candidate.toLowerCase()); n++) candidate = `${s}_${n}`;
    taken.add(candidate.toLowerCase());
    return candidate;
  });
}

export interface SpiceOptions {
  /** Subcircuit name (sanitised like a node name); default "SIGMESH_CAP". */
  subcktName?: string;
  /** What the reference port stands for; default "infinity". */
  reference?: "infinity" | "ground plane";
  /** Name of the reference port; default "REF". */
  referenceNode?: string;
  /** Capacitors smaller than this fraction of the largest are dropped; default 1e-4. */
  relativeThreshold?: number;
  /** First comment line (a deck's first line is its title in SPICE). */
  title?: string;
  /** Significant digits of the values; default 6. */
  digits?: number;
  /**
   * Floating conductors eliminated from `mutual` (they carry no net charge, so they are no
   * ports); named in a comment so that a reader misses no conductor without being told.
   */
  eliminated?: readonly string[];
}

/**
 * `words` as one logical line of at most `width` columns per physical line, broken between
 * words onto `+` continuation lines: Berkeley SPICE2 read 80 columns, and readers of its
 * lineage (and people reading the netlist) still expect it. A word longer than the line
 * stays whole.
 */
export function spiceLines(words: readonly string[], width = 80): string[] {
  const lines: string[] = [];
  let line = "";
  for (const w of words) {
    if (line === "") line = w;
    else if (line.length + 1 + w.length <= width) line += " " + w;
    else { lines.push(line); line = "+ " + w; }
  }
  if (line !== "") lines.push(line);
  return lines;
}

/**
 * The subcircuit of a k×k mutual (two-terminal) capacitance matrix `mutual` (F, row-major:
 * C_ii^m on the diagonal, C_ij^m ≥ 0 off it; the two halves are averaged).
 */
export function spiceSubcircuit(names: string[], mutual: Float64Array, opts: SpiceOptions = {}): string {
  const k = names.length;
  if (mutual.length !== k * k) throw new RangeError(`spiceSubcircuit: ${k} names but a matrix of ${mutual.length} entries`);
  const threshold = opts.relativeThreshold ?? 1e-4;
  if (!(threshold >= 0 && threshold < 1)) throw new RangeError(`spiceSubcircuit: relative threshold must be in [0, 1), got ${threshold}`);
  const digits = opts.digits ?? 6;
  const reference = opts.reference ?? "infinity";
  const [refNode] = spiceNodeNames([opts.referenceNode ?? "REF"]);
  const nodes = spiceNodeNames(names, [refNode]);
  const [subckt] = spiceNodeNames([opts.subcktName ?? "SIGMESH_CAP"]);

  type Cap = { name: string; a: string; b: string; value: number; what: string };
  const caps: Cap[] = [];
  let largest = 0;
  for (let i = 0; i < k; i++) {
    for (let j = i; j < k; j++) {
      const v = i === j ? mutual[i * k + i] : 0.5 * (mutual[i * k + j] + mutual[j * k + i]);
      if (!Number.isFinite(v)) throw new RangeError(`spiceSubcircuit: capacitance ${names[i]}–${names[j]} is ${v}`);
      largest = Math.max(largest, Math.abs(v));
      caps.push(i === j
        ? { name: `C${i + 1}_R`, a: nodes[i], b: refNode, value: v, what: `${names[i]} to reference` }
        : { name: `C${i + 1}_${j + 1}`, a: nodes[i], b: nodes[j], value: v, what: `${names[i]} to ${names[j]}` });
    }
  }
  const cut = threshold * largest;
  const kept = caps.filter((c) => Math.abs(c.value) >= cut && c.value !== 0);
  const dropped = caps.length - kept.length;

  const out: string[] = [];
  // Comments wrapped to 80 columns like the element lines; a chunk (a phrase with spaces)
  // is never broken.
  const comment = (chunks: string[]): void => {
    out.push(...spiceLines(chunks, 78).map((l, n) => (n === 0 ? `* ${l}` : `*   ${l.slice(2)}`)));
  };
  const words = (text: string): string[] => text.split(" ");
  // Names and the title in comments: one physical line, control and format characters (C1
  // and the bidirectional overrides too, which reach a terminal showing the netlist) as
  // visible escapes.
  out.push(`* ${displayText(opts.title ?? "sigmesh capacitance network")}`);
  comment([`${k} conductor${k === 1 ? "" : "s"}; ports in order:`, ...nodes, refNode]);
  comment(words(reference === "infinity"
    ? `reference port ${refNode}: the far surroundings (potential at infinity); tie it to 0 for an isolated system`
    : `reference port ${refNode}: the ground plane of the extraction; tie it to 0`));
  const eliminated = opts.eliminated ?? [];
  if (eliminated.length > 0) comment([`floating conductor${eliminated.length === 1 ? "" : "s"} eliminated (no net charge, no port):`, ...eliminated.map(displayText)]);
  out.push("* conductor names and their nodes:");
  for (let i = 0; i < k; i++) out.push(`*   ${nodes[i]} = ${displayText(names[i])}`);
  comment([...words(`values from the mutual capacitance matrix (F); capacitors below ${Number(threshold.toPrecision(3))} times the largest (${spiceNumber(largest, 4)})`), `dropped: ${dropped} of ${caps.length}`]);
  const negative = kept.filter((c) => c.value < 0);
  if (negative.length > 0) comment(words(`${negative.length} negative value(s) kept as computed (a shielded conductor's capacitance to the reference is near zero and within the error of the extraction)`));
  out.push(...spiceLines([".SUBCKT", subckt, ...nodes, refNode]));
  for (const c of kept) out.push(`${c.name} ${c.a} ${c.b} ${spiceNumber(c.value, digits)}`);
  out.push(`.ENDS ${subckt}`);
  return out.join("\n") + "\n";
}

export interface SpiceCapacitor {
  name: string;
  a: string;
  b: string;
  /** farads */
  value: number;
}

/**
 * The capacitors of a netlist (the first subcircuit's when there is one) and its nodes:
 * the subcircuit's ports in order, else the nodes in the order they appear. Comments (`*`
 * lines, `;` and ` $ ` to the end of a line, as ngspice reads them) and `+` continuations
 * are honoured; elements other than capacitors are ignored. Throws on a capacitor line that
 * cannot be read, naming the line.
 */
export function parseSpiceCapacitors(text: string): { nodes: string[]; caps: SpiceCapacitor[]; subckt?: string } {
  const logical: Array<{ line: number; text: string }> = [];
  const raw = text.split(/\r\n|\n|\r/);
  for (let n = 0; n < raw.length; n++) {
    let s = raw[n];
    const semi = s.indexOf(";");
    if (semi >= 0) s = s.slice(0, semi);
    s = s.replace(/\s\$\s.*$/, "").trim();
    if (s === "" || s.startsWith("*")) continue;
    if (s.startsWith("+") && logical.length > 0) logical[logical.length - 1].text += " " + s.slice(1);
    else logical.push({ line: n + 1, text: s });
  }
  const caps: SpiceCapacitor[] = [];
  const seen: string[] = [];
  const seenSet = new Set<string>();
  const note = (node: string): void => { if (!seenSet.has(node.toLowerCase())) { seenSet.add(node.toLowerCase()); seen.push(node); } };
  let ports: string[] | undefined;
  let subckt: string | undefined;
  let inside = false, done = false;
  for (const { line, text: s } of logical) {
    if (done) break;
    const f = s.split(/\s+/);
    const head = f[0].toUpperCase();
    if (head === ".SUBCKT") {
      if (ports === undefined) { subckt = f[1]; ports = f.slice(2).filter((p) => !p.includes("=")); inside = true; }
      continue;
    }
    if (head === ".ENDS") { if (inside) done = true; continue; }
    if (head === ".END") break;
    if (ports !== undefined && !inside) continue;
    if (head[0] !== "C") continue;
    if (f.length < 4) throw new RangeError(`line ${line}: capacitor ${f[0]} needs two nodes and a value`);
    const valueText = f[3].replace(/^C=/i, "");
    const value = parseSpiceNumber(valueText);
    if (!Number.isFinite(value)) throw new RangeError(`line ${line}: capacitor ${f[0]} has value "${f[3]}", not a number`);
    caps.push({ name: f[0], a: f[1], b: f[2], value });
    note(f[1]); note(f[2]);
  }
  return { nodes: ports ?? seen, caps, subckt };
}

/**
 * Rebuild the k×k mutual matrix (F, row-major) for conductors `names` from a netlist written
 * by `spiceSubcircuit`: node i is the i-th port, the last port the reference (for a netlist
 * without .SUBCKT, the nodes named as `spiceNodeNames(names)` names them and the reference
 * is node 0 or REF). Parallel capacitors add. Throws on a capacitor between unknown nodes.
 */
export function mutualFromSpice(text: string, names: string[]): Float64Array {
  const k = names.length;
  const { nodes, caps, subckt } = parseSpiceCapacitors(text);
  const index = new Map<string, number>();
  let ref: string;
  if (subckt !== undefined) {
    if (nodes.length !== k + 1) throw new RangeError(`subcircuit ${subckt} has ${nodes.length} ports, expected ${k} conductors and a reference`);
    nodes.slice(0, k).forEach((n, i) => index.set(n.toLowerCase(), i));
    ref = nodes[k].toLowerCase();
  } else {
    spiceNodeNames(names, ["REF"]).forEach((n, i) => index.set(n.toLowerCase(), i));
    ref = "ref";
  }
  const isRef = (n: string): boolean => { const l = n.toLowerCase(); return l === ref || RESERVED.includes(l); };
  const m = new Float64Array(k * k);
  for (const c of caps) {
    const ia = isRef(c.a) ? -1 : index.get(c.a.toLowerCase());
    const ib = isRef(c.b) ? -1 : index.get(c.b.toLowerCase());
    if (ia === undefined || ib === undefined) throw new RangeError(`capacitor ${c.name} connects node ${ia === undefined ? c.a : c.b}, which is neither a conductor nor the reference`);
    if (ia === ib) continue; // both ends on one node: no effect on the network
    if (ia < 0) m[ib * k + ib] += c.value;
    else if (ib < 0) m[ia * k + ia] += c.value;
    else { m[ia * k + ib] += c.value; m[ib * k + ia] += c.value; }
  }
  return m;
}
