/**
 * The journal of a sweep: the points finished so far, one JSON line each, appended as each
 * point finishes, so a sweep that fails at some points or is interrupted keeps the others.
 * It lives beside the table (`sweep.csv.journal`) and is removed once the table is written.
 *
 *   {"journal":"sigmesh sweep","version":1,"scene":"/abs/scene.json"}
 *   {"point":3,"key":"<sha256>","parameters":{"gap":2},"names":["a","b"],"maxwell":[...],"mutual":[...]}
 *
 * Numbers are written by JSON.stringify, which gives the shortest text that reads back as the
 * same double (ECMA-262 Number::toString), so a resumed table is byte for byte the table of an
 * uninterrupted run. A last line cut short by a kill is ignored on reading.
 */
import { appendFileSync, existsSync, readFileSync, unlinkSync } from "node:fs";
import { InputError } from "../errors.js";
import { writeFileAtomic } from "./atomic.js";

export interface JournalEntry {
  /** Point number in the sweep grid. */
  point: number;
  /** Digest of what the point's result depends on (extract/sweep.ts `sweepPointKey`). */
  key: string;
  parameters: Record<string, number>;
  names: string[];
  /** Maxwell and two-terminal matrices, row-major; farads. */
  maxwell: number[];
  mutual: number[];
}

const HEADER = "sigmesh sweep";
const FORMAT = 1;

/** Where the journal of the table `csv` lives. */
export const journalPath = (csv: string): string => `${csv}.journal`;

/** Entries of a journal by key (a later line for the same key wins), and the count of unreadable lines skipped. */
export function readJournal(path: string): { entries: Map<string, JournalEntry>; skipped: number } {
  let text: string;
  try { text = readFileSync(path, "utf8"); } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new InputError(code === "ENOENT" ? "no such file" : `cannot read (${code ?? String(err)})`, path);
  }
  const lines = text.split("\n");
  let head: unknown;
  try { head = JSON.parse(lines[0]); } catch { head = undefined; }
  const h = head as { journal?: unknown; version?: unknown } | undefined;
  if (!h || h.journal !== HEADER) throw new InputError("not a sigmesh sweep journal (its first line is not the journal header); delete it or choose another --csv", path, "line 1");
  if (h.version !== FORMAT) throw new InputError(`sweep journal format ${String(h.version)}, this sigmesh reads ${FORMAT}; delete it to start over`, path, "line 1");
  const entries = new Map<string, JournalEntry>();
  let skipped = 0;
  for (let i = 1; i < lines.length; i++) {
    const line = lines[i];
    if (line.trim() === "") continue;
    let e: JournalEntry | undefined;
    try { e = JSON.parse(line) as JournalEntry; } catch { e = undefined; }
    const ok = e && Number.isInteger(e.point) && typeof e.key === "string" && Array.isArray(e.names) && Array.isArray(e.maxwell) && Array.isArray(e.mutual)
      && e.maxwell.length === e.names.length ** 2 && e.mutual.length === e.names.length ** 2
      && e.maxwell.every((x) => typeof x === "number") && e.mutual.every((x) => typeof x === "number");
    if (!ok) { skipped++; continue; }
    entries.set(e!.key, e!);
  }
  return { entries, skipped };
}

/** An open journal: created with its header when new, appended to one line per finished point. */
export class SweepJournal {
  readonly path: string;

  constructor(path: string, scene: string) {
    this.path = path;
    if (!existsSync(path)) writeFileAtomic(path, JSON.stringify({ journal: HEADER, version: FORMAT, scene }) + "\n");
    else {
      // A line cut short by a kill must not swallow the next one.
      const text = readFileSync(path, "utf8");
      if (text.length > 0 && !text.endsWith("\n")) appendFileSync(path, "\n");
    }
  }

  append(e: JournalEntry): void {
    appendFileSync(this.path, JSON.stringify(e) + "\n");
  }

}

/** Remove a journal once its table is written (nothing when there is none). */
export function removeJournal(path: string): void {
  try { unlinkSync(path); } catch { /* already gone */ }
}
