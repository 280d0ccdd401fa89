/**
 * A sweep that survives failed points and interruptions: each finished point is appended to a
 * journal beside the table (src/io/sweep-journal.ts) under a key of everything its result
 * depends on (`sweepPointKey`), and a resumed run reuses a journalled point only when its key
 * matches, so the table is the one an uninterrupted run writes.
 */
import { existsSync } from "node:fs";
import { InputError } from "../errors.js";
import { journalPath, readJournal, removeJournal, SweepJournal, type JournalEntry } from "../io/sweep-journal.js";
import { version } from "../version.js";
import {
  runSweepPoints, isPointFailure, sweepPointKey,
  type PointFailure, type PointMatrices, type SweepPointsOptions, type SweepRunOptions,
} from "./sweep.js";

/** What a run of the sweep has to do: the points kept from the journal and those to run. */
export interface ResumePlan {
  /** The journal beside the table (`<table>.journal`). */
  journalFile: string;
  /** Each point's key (absent for a point whose scene cannot even be written out: it runs and fails on its own). */
  keys: Map<number, string>;
  /** Points whose journalled result is reused. */
  kept: Map<number, PointMatrices>;
  /** Points to run, in order. */
  toRun: number[];
}

/**
 * Plan the run of points `indices` of the table `table`: an existing journal is refused unless
 * `resume` (InputError naming it), else its points with matching keys are kept.
 */
export function planResume(scene: string, points: ReadonlyArray<Record<string, number>>, indices: readonly number[],
  opts: SweepRunOptions, table: string, resume: boolean): ResumePlan {
  const journalFile = journalPath(table);
  let prior = new Map<string, JournalEntry>();
  if (existsSync(journalFile)) {
    const read = readJournal(journalFile);
    if (!resume) {
      const n = read.entries.size;
      throw new InputError(`holds ${n} point${n === 1 ? "" : "s"} of an earlier run of this table that did not finish: add --resume to keep them (only the other points run), or delete it to start over`, journalFile);
    }
    prior = read.entries;
  }
  const digests = new Map<string, string>();
  const keys = new Map<number, string>();
  for (const k of indices) {
    try { keys.set(k, sweepPointKey(scene, points[k], opts, version(), digests)); } catch { /* no key: it runs and fails with its own message */ }
  }
  const kept = new Map<number, PointMatrices>();
  for (const k of indices) {
    const e = keys.has(k) ? prior.get(keys.get(k)!) : undefined;
    if (e) kept.set(k, { names: e.names, maxwell: e.maxwell, mutual: e.mutual });
  }
  return { journalFile, keys, kept, toRun: indices.filter((k) => !kept.has(k)) };
}

/**
 * Run the plan's points, journalling each as it finishes; resolves with every point's result
 * (kept and run) and the failures. Rejects only when `opts.signal` aborts (the journal then
 * holds every point finished so far).
 */
export async function runResumable(scene: string, points: ReadonlyArray<Record<string, number>>, plan: ResumePlan,
  opts: SweepPointsOptions = {}): Promise<{ results: Map<number, PointMatrices>; failures: PointFailure[] }> {
  const results = new Map(plan.kept);
  if (plan.toRun.length === 0) return { results, failures: [] };
  const journal = new SweepJournal(plan.journalFile, scene);
  const outcome = await runSweepPoints(scene, points, plan.toRun, {
    ...opts,
    onResult: (k, r) => {
      journal.append({ point: k, key: plan.keys.get(k) ?? "", parameters: points[k], names: r.names, maxwell: Array.from(r.maxwell), mutual: Array.from(r.mutual) });
      opts.onResult?.(k, r);
    },
  });
  const failures = outcome.filter(isPointFailure);
  outcome.forEach((r, q) => { if (!isPointFailure(r)) results.set(plan.toRun[q], r); });
  return { results, failures };
}

/** The table is written: the journal has served its purpose. */
export function finishResumable(plan: ResumePlan): void {
  removeJournal(plan.journalFile);
}
