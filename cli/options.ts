/**
 * Option values shared by the commands: each turns the text of one option into a value or an
 * InputError naming the option, so `extract`, `sweep` and `demo` refuse the same things alike.
 */
import { InputError } from "../src/errors.js";
import type { ExtractSettings } from "../src/extract/extract.js";
import { checkedRefinement } from "../src/extract/options.js";

/** A finite number passing `check`, else an InputError "OPTION "TEXT": expected WHAT". */
export function numberOption(text: string, option: string, check: (x: number) => boolean, what: string): number {
  const x = Number(text);
  if (text.trim() === "" || !Number.isFinite(x) || !check(x)) throw new InputError(`${option} "${text}": expected ${what}`);
  return x;
}

/** A whole number from 0 to `max`. */
export function countOption(text: string, option: string, max: number): number {
  return numberOption(text, option, (x) => Number.isInteger(x) && x >= 0 && x <= max && /^\s*\d+\s*$/.test(text), `a whole number from 0 to ${max}`);
}

export interface SolveOptionText { method: string; solver: string; tol: string; refine: string }

/** --method, --solver, --tol and --refine as extraction settings. */
export function solveSettings(opts: SolveOptionText): Required<Pick<ExtractSettings, "method" | "solver" | "tolerance" | "refine">> {
  const method = opts.method;
  if (method !== "galerkin" && method !== "collocation") throw new InputError(`--method "${method}": use galerkin or collocation`);
  const solver = opts.solver;
  if (solver !== "auto" && solver !== "direct" && solver !== "iterative" && solver !== "compressed") throw new InputError(`--solver "${solver}": use auto, direct, iterative or compressed`);
  const refine = countOption(opts.refine, "--refine", 4);
  const tolerance = numberOption(opts.tol, "--tol", (x) => x > 0 && x < 1, "a number between 0 and 1, e.g. 1e-4");
  return { method, solver, tolerance, refine };
}

/**
 * --accuracy as a relative error: a number (1e-3) or a percentage (0.1%). Range and meaning are
 * the library's (checkedAccuracy); this only reads the text.
 */
export function accuracyOption(text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  const t = text.trim();
  const percent = t.endsWith("%");
  const x = Number(percent ? t.slice(0, -1) : t);
  if (t === "" || t === "%" || !Number.isFinite(x) || !(x > 0)) throw new InputError(`--accuracy "${text}": expected a relative error, e.g. 1e-3 or 0.1%`);
  return percent ? x / 100 : x;
}

/**
 * --accuracy and --max-panels as settings, refused beside --refine (`refine`, already read) with the
 * options' own names; the values' ranges are the library's (checkedRefinement).
 */
export function accuracySettings(opts: { accuracy?: string; maxPanels?: string }, refine: number): { accuracy?: number; maxPanels?: number } {
  const accuracy = accuracyOption(opts.accuracy);
  const maxPanels = opts.maxPanels === undefined ? undefined : numberOption(opts.maxPanels, "--max-panels", (x) => Number.isInteger(x) && x > 0, "a positive whole number of panels");
  if (accuracy !== undefined && refine > 0) throw new InputError("--accuracy and --refine are two ways to refine: give one");
  checkedRefinement({ accuracy, maxPanels });
  return { accuracy, maxPanels };
}

/** Repeated NAME=VOLTS options as a map of potentials. */
export function parsePotentials(items: string[]): Record<string, number> {
  // No prototype: a conductor named "__proto__" is a name like any other, not the map's prototype.
  const out = Object.create(null) as Record<string, number>;
  for (const item of items) {
    const eq = item.lastIndexOf("=");
    if (eq <= 0) throw new InputError(`--potential "${item}": expected NAME=VOLTS, e.g. --potential pad=5`);
    const name = item.slice(0, eq).trim();
    out[name] = numberOption(item.slice(eq + 1), `--potential ${name}`, () => true, "a number of volts");
  }
  return out;
}

/** Collect a repeatable option into an array (commander helper). */
export function collect(value: string, previous: string[] = []): string[] {
  return [...previous, value];
}
