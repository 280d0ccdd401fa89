/**
 * JSON text and values for the input files (scenes): parse faults with their line and column,
 * and the object test every key-path validator starts with.
 */
import { InputError } from "../errors.js";

/** Turn a JSON.parse failure into a line and column. */
function jsonPlace(text: string, err: unknown): string | undefined {
  const m = /position (\d+)/.exec(String((err as Error)?.message ?? ""));
  if (!m) return undefined;
  const pos = Number(m[1]);
  let line = 1, col = 1;
  for (let i = 0; i < pos && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) { line++; col = 1; } else col++;
  }
  return `line ${line}, column ${col}`;
}

export function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === "object" && v !== null && !Array.isArray(v);
}

/** The parsed value of JSON text; `file` names it in the fault. */
export function parseJson(text: string, file: string): unknown {
  try {
    return JSON.parse(text) as unknown;
  } catch (err) {
    const detail = String((err as Error).message).replace(/ in JSON at position \d+.*$/, "").replace(/^Unexpected/, "unexpected");
    throw new InputError(`not valid JSON (${detail})`, file, jsonPlace(text, err));
  }
}
