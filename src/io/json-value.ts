/**
 * JSON text and values for the input files (scenes, reports): parse faults with their line and
 * column, the nesting bound and the prototype keys every parsed tree is checked against, and
 * the object test every key-path validator starts with.
 *
 * JSON.parse itself is iterative in V8 and keeps `"__proto__"` as an own key, but what reads
 * the tree afterwards recurses (substitution, validation, JSON.stringify) or copies keys by
 * assignment, where `__proto__` would set the copy's prototype. So a tree is checked once,
 * iteratively, right after parsing: nested at most MAX_JSON_DEPTH deep and, for scenes, free
 * of the keys JavaScript objects inherit meaning from.
 */
import { InputError } from "../errors.js";

/** Deepest nesting of objects and lists in an input file (a scene nests about eight). */
export const MAX_JSON_DEPTH = 64;

const PROTOTYPE_KEYS = new Set(["__proto__", "constructor", "prototype"]);

/** Whether `key` is one JavaScript gives meaning to on every object (never a key of a scene). */
export function isPrototypeKey(key: string): boolean {
  return PROTOTYPE_KEYS.has(key);
}

export function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === "object" && v !== null && !Array.isArray(v);
}

export interface JsonReadOptions {
  /** Refuse `__proto__`, `constructor` and `prototype` as keys anywhere (scenes). */
  refusePrototypeKeys?: boolean;
}

/**
 * The parsed value of JSON text; `file` names it in the fault. A leading byte-order mark is
 * skipped. A syntax fault gives its line and column and never quotes the text (it may be any
 * file, a password file among them).
 */
export function parseJson(text: string, file: string, opts: JsonReadOptions = {}): unknown {
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  let value: unknown;
  try {
    value = JSON.parse(text) as unknown;
  } catch (err) {
    const message = String((err as Error)?.message ?? err);
    throw new InputError(`not valid JSON (${jsonFault(message)})`, file, linePlace(text, jsonErrorOffset(text, message)));
  }
  checkJsonTree(value, file, opts);
  return value;
}

/** Punctuation V8 may name in "Unexpected token 'x'": shown, as it says what is wrong; anything else is text of the file. */
const PUNCTUATION = new Set(["{", "}", "[", "]", ",", ":", "\""]);

/** V8's message without the snippet of text it may quote, lower-cased to run on after "not valid JSON (". */
function jsonFault(message: string): string {
  const token = /^Unexpected token '([\s\S])'/.exec(message);
  if (token) return PUNCTUATION.has(token[1]) ? `unexpected "${token[1]}"` : "unexpected character";
  if (/is not valid JSON/.test(message)) return "unexpected character";
  const fault = message.replace(/ in JSON at position \d+[\s\S]*$/, "").replace(/\s+/g, " ").replace(/^Unexpected/, "unexpected");
  // Every V8 message left names what was expected, never the text; cut anything longer all the same.
  return fault.length > 80 ? `${fault.slice(0, 80)}...` : fault;
}

/**
 * 0-based offset of a syntax fault: the position V8 names, or (for the messages that quote a
 * snippet instead) the end of the longest prefix that could still begin a valid text, found by
 * bisection over JSON.parse of prefixes (only on this error path).
 */
function jsonErrorOffset(text: string, message: string): number {
  const m = / at position (\d+)/.exec(message);
  if (m) return Number(m[1]);
  const viable = (n: number): boolean => {
    try { JSON.parse(text.slice(0, n)); return true; } catch (err) {
      const msg = String((err as Error)?.message ?? err);
      if (/^Unexpected end of JSON input/.test(msg)) return true;
      const at = / at position (\d+)/.exec(msg);
      return at !== null && Number(at[1]) >= n;
    }
  };
  let lo = 0, hi = text.length;
  while (hi - lo > 1) {
    const mid = (lo + hi) >>> 1;
    if (viable(mid)) lo = mid; else hi = mid;
  }
  return lo;
}

/** Line and column (1-based) of a 0-based offset. */
function linePlace(text: string, offset: number): string {
  let line = 1, col = 1;
  for (let i = 0; i < offset && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) { line++; col = 1; } else col++;
  }
  return `line ${line}, column ${col}`;
}

/** A key as it is shown in a key path: bare when it is a name, else quoted (escapes visible). */
function pathKey(parent: string, key: string): string {
  if (/^[A-Za-z_$][A-Za-z0-9_$]*$/.test(key)) return parent === "" ? key : `${parent}.${key}`;
  return `${parent}[${JSON.stringify(key)}]`;
}

/** Nesting bound and (optionally) prototype keys over a parsed tree, without recursion. */
function checkJsonTree(root: unknown, file: string, opts: JsonReadOptions): void {
  interface Node { value: object; depth: number; parent?: Node; step: string | number }
  const pathOf = (n: Node | undefined, last?: string | number): string => {
    const steps: Array<string | number> = last === undefined ? [] : [last];
    for (let p = n; p && p.parent; p = p.parent) steps.push(p.step);
    let path = "";
    for (let k = steps.length - 1; k >= 0; k--) {
      const s = steps[k];
      path = typeof s === "number" ? `${path}[${s}]` : pathKey(path, s);
    }
    return path === "" ? "(top level)" : path;
  };
  if (typeof root !== "object" || root === null) return;
  const stack: Node[] = [{ value: root, depth: 1, step: "" }];
  while (stack.length > 0) {
    const node = stack.pop() as Node;
    if (node.depth > MAX_JSON_DEPTH) {
      const path = pathOf(node);
      const shown = path.length > 60 ? `${path.slice(0, 60)}...` : path;
      throw new InputError(`${shown}: nested more than ${MAX_JSON_DEPTH} levels deep (objects and lists within one another)`, file);
    }
    if (Array.isArray(node.value)) {
      const a = node.value as unknown[];
      for (let i = a.length - 1; i >= 0; i--) {
        const v = a[i];
        if (typeof v === "object" && v !== null) stack.push({ value: v, depth: node.depth + 1, parent: node, step: i });
      }
    } else {
      const keys = Object.keys(node.value);
      const bad = opts.refusePrototypeKeys ? keys.find((k) => PROTOTYPE_KEYS.has(k)) : undefined;
      if (bad !== undefined) throw new InputError(`${pathOf(node, bad)}: unknown key ("__proto__", "constructor" and "prototype" are never keys of a scene)`, file);
      for (let i = keys.length - 1; i >= 0; i--) {
        const k = keys[i];
        const v = (node.value as Record<string, unknown>)[k];
        if (typeof v === "object" && v !== null) stack.push({ value: v, depth: node.depth + 1, parent: node, step: k });
      }
    }
  }
}
