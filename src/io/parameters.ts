/**
 * Named parameters of a scene and the arithmetic expressions that use them.
 *
 * Anywhere a scene takes a number it may take a string starting with "=", such as
 * `"=gap/2 + w"`: an expression over numbers, the scene's parameters, + - * / ^,
 * parentheses, unary minus, the functions sqrt sin cos tan abs min max and the constant pi.
 * Angles of sin, cos and tan are in radians (as in every programming language's maths library).
 * Messages give the position of a fault in the string as written, counting the "=" as 1.
 *
 * The grammar is the usual one of school arithmetic (common practice; the same precedence
 * as Fortran's and most spreadsheets' except where noted):
 *
 *   sum     = product { ("+" | "-") product }          left-associative
 *   product = unary { ("*" | "/") unary }              left-associative
 *   unary   = ("-" | "+") unary | power
 *   power   = atom [ "^" unary ]                       right-associative: 2^3^2 = 2^9
 *   atom    = number | name | name "(" sum { "," sum } ")" | "(" sum ")"
 *
 * so -2^2 = -4 (the power binds tighter than the sign, as in mathematics and Fortran;
 * spreadsheets differ here) and 2^-1 = 0.5. It is parsed by recursive descent (one
 * function per rule; N. Wirth, "Compilerbau", Teubner 1977, ch. 3) and evaluated at once:
 * no code is generated, and nothing but these operations can run.
 */
import { isPrototypeKey } from "./json-value.js";

/** A fault in an expression; `position` is 1-based, counted in the text given to `evaluateExpression`. */
export class ExpressionError extends Error {
  constructor(readonly fault: string, readonly position: number) {
    super(`${fault} (at position ${position})`);
    this.name = "ExpressionError";
  }
}

// Maps, not object literals: a name is looked up among its own entries only, so `constructor`,
// `toString` or `__proto__` (inherited by every JavaScript object) stay unknown names.
const FUNCTIONS = new Map<string, { arity: [number, number]; fn: (xs: number[]) => number }>([
  ["sqrt", { arity: [1, 1], fn: (xs) => Math.sqrt(xs[0]) }],
  ["sin", { arity: [1, 1], fn: (xs) => Math.sin(xs[0]) }],
  ["cos", { arity: [1, 1], fn: (xs) => Math.cos(xs[0]) }],
  ["tan", { arity: [1, 1], fn: (xs) => Math.tan(xs[0]) }],
  ["abs", { arity: [1, 1], fn: (xs) => Math.abs(xs[0]) }],
  // A loop, not Math.min(...xs): spreading a very long argument list overflows the stack.
  ["min", { arity: [1, Infinity], fn: (xs) => xs.reduce((a, b) => Math.min(a, b), Infinity) }],
  ["max", { arity: [1, Infinity], fn: (xs) => xs.reduce((a, b) => Math.max(a, b), -Infinity) }],
]);
const CONSTANTS = new Map<string, number>([["pi", Math.PI]]);

/** Deepest nesting of parentheses, signs and powers an expression may have (recursive descent uses the stack). */
export const MAX_EXPRESSION_DEPTH = 100;
/** Longest chain of parameters defined in terms of one another (a -> b -> c ...). */
export const MAX_PARAMETER_CHAIN = 100;

/** Names a parameter may not take: they mean something else in an expression. */
export const RESERVED_NAMES: readonly string[] = [...FUNCTIONS.keys(), ...CONSTANTS.keys()];

const NAME = /^[A-Za-z_][A-Za-z0-9_]*$/;

/** Whether `name` can be a parameter name (letters, digits, underscore; not a function or pi). */
export function isParameterName(name: string): boolean {
  return NAME.test(name) && !RESERVED_NAMES.includes(name);
}

/**
 * Value of `text` (without the leading "=") with the parameters `values`. Throws
 * ExpressionError with the 1-based position of the fault; `lookup` lets a caller resolve
 * names lazily (parameters defined by other parameters).
 */
export function evaluateExpression(text: string, values: Readonly<Record<string, number>> | ((name: string) => number | undefined)): number {
  const get = typeof values === "function" ? values : (n: string) => (Object.prototype.hasOwnProperty.call(values, n) ? values[n] : undefined);
  let i = 0;
  const n = text.length;
  const fail = (fault: string, at = i): never => { throw new ExpressionError(fault, at + 1); };
  const skip = (): void => { while (i < n && (text[i] === " " || text[i] === "\t")) i++; };
  const peek = (): string => { skip(); return i < n ? text[i] : ""; };
  const describe = (): string => (i < n ? `"${text[i]}"` : "the end");

  const sum = (): number => {
    let x = product();
    for (;;) {
      const c = peek();
      if (c === "+") { i++; x += product(); }
      else if (c === "-") { i++; x -= product(); }
      else return x;
    }
  };
  const product = (): number => {
    let x = unary();
    for (;;) {
      const c = peek();
      if (c === "*") { i++; x *= unary(); }
      else if (c === "/") {
        const at = i++;
        const d = unary();
        if (d === 0) fail("division by zero", at);
        x /= d;
      }
      else return x;
    }
  };
  // Every recursion of the grammar passes through unary: its depth bounds the stack.
  let depth = 0;
  const unary = (): number => {
    if (++depth > MAX_EXPRESSION_DEPTH) fail(`nested more than ${MAX_EXPRESSION_DEPTH} deep (parentheses, signs and powers); split it into parameters`);
    const c = peek();
    const x = c === "-" ? (i++, -unary()) : c === "+" ? (i++, unary()) : power();
    depth--;
    return x;
  };
  const power = (): number => {
    const base = atom();
    if (peek() === "^") {
      const at = i++;
      const e = unary();
      const x = base ** e;
      if (!Number.isFinite(x)) fail(`${base}^${e} is not a finite number`, at);
      return x;
    }
    return base;
  };
  const atom = (): number => {
    const c = peek();
    const start = i;
    if (c === "(") {
      i++;
      const x = sum();
      if (peek() !== ")") fail(`expected ")" to close the "(" at position ${start + 1}, found ${describe()}`);
      i++;
      return x;
    }
    const num = /^(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?/.exec(text.slice(i));
    if (num) {
      i += num[0].length;
      return Number(num[0]);
    }
    const name = /^[A-Za-z_][A-Za-z0-9_]*/.exec(text.slice(i));
    if (name) {
      const id = name[0];
      i += id.length;
      if (peek() === "(") {
        const f = FUNCTIONS.get(id);
        if (!f) return fail(`unknown function "${id}" (use ${[...FUNCTIONS.keys()].join(", ")})`, start);
        i++;
        const args = [sum()];
        while (peek() === ",") { i++; args.push(sum()); }
        if (peek() !== ")") fail(`expected "," or ")" in the arguments of ${id}, found ${describe()}`);
        i++;
        if (args.length < f.arity[0] || args.length > f.arity[1]) fail(`${id} takes ${f.arity[0] === f.arity[1] ? f.arity[0] : `at least ${f.arity[0]}`} argument${f.arity[0] === 1 && f.arity[1] === 1 ? "" : "s"}, got ${args.length}`, start);
        const x = f.fn(args);
        if (!Number.isFinite(x)) fail(`${id}(${args.join(", ")}) is not a finite number`, start);
        return x;
      }
      if (FUNCTIONS.has(id)) fail(`${id} is a function: write ${id}(...)`, start);
      const constant = CONSTANTS.get(id);
      if (constant !== undefined) return constant;
      const v = get(id);
      if (v === undefined) fail(`unknown parameter "${id}"`, start);
      return v as number;
    }
    if (c === "") return fail("expression ends where a number, name or \"(\" was expected");
    return fail(`unexpected ${describe()} where a number, name or "(" was expected`);
  };

  if (peek() === "") fail("empty expression", 0);
  const x = sum();
  if (peek() !== "") fail(peek() === ")" ? `")" without a matching "("` : `unexpected ${describe()} after a complete expression`);
  if (!Number.isFinite(x)) fail("the value is not a finite number", 0);
  return x;
}

/** Whether a JSON value is an expression string. */
export function isExpression(v: unknown): v is string {
  return typeof v === "string" && v.startsWith("=");
}

/**
 * Resolve a scene's `parameters` object: numbers, or expressions over other parameters
 * (any order; a cycle is an error). `overrides` (a sweep point) replace the given values
 * before anything is evaluated, so parameters defined from them follow. `fail(path, fault)`
 * raises the caller's error with the key path.
 */
export function resolveParameters(raw: Readonly<Record<string, unknown>>, overrides: Readonly<Record<string, number>>,
  fail: (path: string, fault: string) => never, key = "parameters"): Record<string, number> {
  for (const name of Object.keys(raw)) {
    if (!isParameterName(name)) {
      fail(`${key}.${name}`, RESERVED_NAMES.includes(name) ? `"${name}" is a function or constant of expressions; choose another name`
        : "a parameter name is letters, digits and underscores, starting with a letter or underscore");
    }
    const v = raw[name];
    if (!(typeof v === "number" && Number.isFinite(v)) && !isExpression(v)) fail(`${key}.${name}`, "expected a number or an expression string such as \"=2*w\"");
  }
  for (const name of Object.keys(overrides)) {
    if (!Object.prototype.hasOwnProperty.call(raw, name)) {
      const known = Object.keys(raw);
      fail(`${key}`, `no parameter "${name}" to vary (${known.length ? `the scene's parameters are ${known.join(", ")}` : "the scene has no parameters"})`);
    }
  }
  // Evaluated with an explicit stack, not by recursion, so a long chain cannot overflow the
  // call stack: an expression that meets a parameter not yet known stops (Pending), the
  // parameter is pushed, and the expression is evaluated again once it is known.
  const out: Record<string, number> = Object.create(null) as Record<string, number>;
  const done = new Set<string>();
  // Length of the longest chain of definitions under each parameter: bounded whatever the key order.
  const level = new Map<string, number>();
  class Pending { constructor(readonly name: string) {} }
  for (const root of Object.keys(raw)) {
    const stack: string[] = [root];
    while (stack.length > 0) {
      const name = stack[stack.length - 1];
      if (done.has(name)) { stack.pop(); continue; }
      const given = Object.prototype.hasOwnProperty.call(overrides, name) ? overrides[name] : raw[name];
      let x: number;
      let below = 0;
      if (typeof given === "number") x = given;
      else {
        const text = (given as string).slice(1);
        try {
          x = evaluateExpression(text, (n) => {
            if (!Object.prototype.hasOwnProperty.call(raw, n)) return undefined;
            if (done.has(n)) { below = Math.max(below, level.get(n) as number); return out[n]; }
            throw new Pending(n);
          });
        } catch (err) {
          if (err instanceof Pending) {
            const k = stack.indexOf(err.name);
            if (k >= 0) fail(`${key}.${stack[k]}`, `defined in terms of itself (${[...stack.slice(k), err.name].join(" -> ")})`);
            stack.push(err.name);
            continue;
          }
          if (err instanceof ExpressionError) fail(`${key}.${name}`, `expression "${given}": ${err.fault} at position ${err.position + 1}`);
          throw err;
        }
      }
      if (below + 1 > MAX_PARAMETER_CHAIN) {
        fail(`${key}.${name}`, `defined through a chain of more than ${MAX_PARAMETER_CHAIN} parameters, each in terms of the next; at most ${MAX_PARAMETER_CHAIN} may build on one another`);
      }
      out[name] = x;
      level.set(name, below + 1);
      done.add(name);
      stack.pop();
    }
  }
  return out;
}

/** Keys whose strings are text, never expressions (names, paths, descriptions). */
const TEXT_KEYS = new Set(["name", "mesh", "group", "groups", "description", "title", "$schema", "parameters"]);

/**
 * A copy of a parsed JSON value with every expression string replaced by its value, so the
 * result is the scene a user would write by hand with those numbers. `path` is the key path
 * of `value` for messages (`conductors[2].shape.box.size[0]`).
 */
export function substituteExpressions(value: unknown, params: Readonly<Record<string, number>>, path: string,
  fail: (path: string, fault: string) => never): unknown {
  if (isExpression(value)) {
    try {
      return evaluateExpression(value.slice(1), params);
    } catch (err) {
      if (err instanceof ExpressionError) fail(path, `expression "${value}": ${err.fault} at position ${err.position + 1}`);
      throw err;
    }
  }
  if (Array.isArray(value)) return value.map((v, i) => substituteExpressions(v, params, `${path}[${i}]`, fail));
  if (typeof value === "object" && value !== null) {
    const out: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(value)) {
      const at = path === "" ? k : `${path}.${k}`;
      // Assigning `__proto__` would set the copy's prototype (scene files are checked for these keys on reading).
      if (isPrototypeKey(k)) fail(at, "unknown key (\"__proto__\", \"constructor\" and \"prototype\" are never keys of a scene)");
      out[k] = TEXT_KEYS.has(k) ? v : substituteExpressions(v, params, at, fail);
    }
    return out;
  }
  return value;
}
