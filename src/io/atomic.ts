/**
 * Output files written all or none.
 *
 * A set of outputs goes through four steps, so that a failure, a full disk or an interrupt at
 * any moment leaves either every earlier file as it was or every new file complete:
 *   1. check: every target is checked before anything is written (`checkOutputPaths`): its
 *      folder exists (or only that last folder is missing and its parent is writable), the
 *      folder is writable, the target is not a folder, a device or a path under a regular file,
 *      and no file is named twice (aliases through `..` or symbolic links included);
 *   2. stage: each file is written in full to a hidden temporary beside its target and synced;
 *   3. commit: each earlier file is kept under a hidden backup name (a hard link, so the target
 *      name never goes missing), then the temporary is renamed over the target; when any step
 *      fails, every target already replaced gets its backup back (a target that was new is
 *      removed), so the earlier set stands as it was;
 *   4. the backups are removed.
 * Steps 2 and 3 are one synchronous call: SIGINT, SIGTERM and SIGHUP that would end the process there
 * (no listener of their own) are held and raised again once the set is written. Temporaries are
 * removed on every failure, and by an exit hook should the process end any other way.
 *
 * Missing folders: only the target's own folder is created (`out/r.json` creates `out`); a
 * missing parent of that folder is refused rather than a whole tree made silently. A folder
 * made for a set that then fails is removed again.
 *
 * Every message names the output as the user gave it (and the option when known), never a
 * temporary; faults of the file system while writing (no space, no permission, read-only) are
 * `InputError`s, as the user can act on them.
 */
import {
  accessSync, closeSync, constants, copyFileSync, fchmodSync, fsyncSync, linkSync, lstatSync, mkdirSync, openSync,
  realpathSync, renameSync, rmdirSync, statSync, unlinkSync, writeFileSync, type Stats,
} from "node:fs";
import { randomBytes } from "node:crypto";
import { isMainThread } from "node:worker_threads";
import { basename, dirname, join, resolve, sep } from "node:path";
import { InputError } from "../errors.js";

/** An output named by the user: the path as given, and the option that gave it (`--json`), if any. */
export interface OutputPath { path: string; option?: string }

/** One file of a set: where it goes, what it holds, and the option that named it. */
export interface OutputData extends OutputPath { data: string | Uint8Array }

export interface WriteOptions {
  /**
   * Called once every temporary is written, before the first target is replaced. For tests:
   * a fault injected here (a target turned into a folder) exercises the restore of the set.
   */
  beforeCommit?: () => void;
}

/** A checked target: the file actually replaced (symbolic links followed) and the folder to make, if any. */
interface PlannedOutput extends OutputPath {
  /** Absolute path of the file replaced. */
  real: string;
  /** The folder to create before writing (the target's own folder, whose parent exists). */
  makeFolder?: string;
}

const words: Record<string, string> = {
  ENOSPC: "no space left on device", EDQUOT: "disk quota exceeded", EACCES: "permission denied", EPERM: "operation not permitted",
  EROFS: "read-only file system", EISDIR: "is a directory", ENOTDIR: "a part of the path is not a directory", ENOENT: "its directory has gone",
  EIO: "input/output error", EFBIG: "file too large", ENAMETOOLONG: "name too long", EMFILE: "too many open files", ELOOP: "too many symbolic links",
  EEXIST: "a file of the same name appeared", EXDEV: "not on the same file system",
};

/** Words for a file-system error code (`ENOSPC` -> "no space left on device"). */
export function fileFault(code: string): string {
  return words[code] ?? `file system error ${code}`;
}

function named(o: OutputPath): string {
  return o.option ? `${o.option} ${o.path}` : o.path;
}

function refuse(o: OutputPath, fault: string): InputError {
  return new InputError(`${named(o)}: ${fault}`);
}

function errCode(err: unknown): string | undefined {
  const code = (err as NodeJS.ErrnoException | undefined)?.code;
  return typeof code === "string" ? code : undefined;
}

function statOrCode(path: string, follow = true): Stats | string {
  try { return follow ? statSync(path) : lstatSync(path); } catch (err) { return errCode(err) ?? "EIO"; }
}

function checkWritable(o: OutputPath, folder: string, shown: string): void {
  try { accessSync(folder, constants.W_OK | constants.X_OK); } catch (err) {
    throw refuse(o, `cannot write in directory ${shown} (${fileFault(errCode(err) ?? "EACCES")})`);
  }
}

/** The folder of a target, checked; returns its real absolute path and whether it is to be made. */
function checkFolder(o: OutputPath): { folder: string; make: boolean } {
  const folderShown = dirname(o.path);
  const folder = resolve(folderShown);
  const st = statOrCode(folder);
  if (typeof st !== "string") {
    if (!st.isDirectory()) throw refuse(o, `${folderShown} is a file, not a directory`);
    checkWritable(o, folder, folderShown);
    return { folder: realpathSync(folder), make: false };
  }
  if (st !== "ENOENT" && st !== "ENOTDIR") throw refuse(o, `cannot reach directory ${folderShown} (${fileFault(st)})`);
  // Find the deepest ancestor that exists: a file there is the fault; a folder there must be the immediate parent.
  let shown = folderShown;
  for (;;) {
    const up = dirname(shown);
    const s = statOrCode(resolve(up));
    if (typeof s === "string") {
      if (s !== "ENOENT" && s !== "ENOTDIR") throw refuse(o, `cannot reach directory ${up} (${fileFault(s)})`);
      shown = up;
      continue;
    }
    if (!s.isDirectory()) throw refuse(o, `${up} is a file, not a directory`);
    if (shown !== folderShown) throw refuse(o, `directory ${dirname(folderShown)} does not exist (only an output's own directory is created): create it first`);
    checkWritable(o, resolve(up), up);
    return { folder: join(realpathSync(resolve(up)), basename(folder)), make: true };
  }
}

function planOutput(o: OutputPath): PlannedOutput {
  if (o.path === "") throw refuse(o, "an empty path: give a file name");
  if (o.path.endsWith("/") || o.path.endsWith(sep)) throw refuse(o, "ends with a path separator: give a file name");
  const { folder, make } = checkFolder(o);
  let real = join(folder, basename(o.path));
  if (!make) {
    const l = statOrCode(real, false);
    if (typeof l !== "string" && l.isSymbolicLink()) {
      // A link is kept and the file it points to replaced, as editors do.
      try { real = realpathSync(real); } catch { throw refuse(o, "is a broken symbolic link"); }
      checkWritable(o, dirname(real), dirname(real));
    }
    const st = statOrCode(real);
    if (typeof st === "string") {
      if (st !== "ENOENT") throw refuse(o, fileFault(st));
    } else if (st.isDirectory()) {
      throw refuse(o, "is a directory, not a file: give a file name");
    } else if (!st.isFile()) {
      throw refuse(o, "is not a regular file (a device, pipe or socket)");
    }
  }
  return { path: o.path, option: o.option, real, makeFolder: make ? folder : undefined };
}

function planOutputs(outputs: readonly OutputPath[]): PlannedOutput[] {
  const planned = outputs.filter((o) => o.path !== "-").map(planOutput);
  const seen = new Map<string, PlannedOutput>();
  for (const p of planned) {
    const other = seen.get(p.real);
    if (other) {
      const a = other.option ?? other.path, b = p.option ?? p.path;
      throw new InputError(other.path === p.path
        ? `${a} and ${b} both name ${p.path}: give each output its own file`
        : `${named(other)} and ${named(p)} are the same file: give each output its own file`);
    }
    seen.set(p.real, p);
  }
  return planned;
}

/**
 * Refuse, before any work, outputs that could not all be written: see the header. `-` (standard
 * output) is skipped. Throws an `InputError` naming the option and the path as given.
 */
export function checkOutputPaths(outputs: readonly OutputPath[]): void {
  planOutputs(outputs);
}

// ---- temporaries, backups and the exit hook ----

/** Hidden files of sets being written in this process, removed by the exit hook should they outlive the write. */
const pending = new Set<string>();
let hooked = false;

function track(path: string): string {
  if (!hooked) {
    hooked = true;
    process.on("exit", () => { for (const p of pending) { try { unlinkSync(p); } catch { /* gone */ } } });
  }
  pending.add(path);
  return path;
}

function remove(path: string | undefined): void {
  if (path === undefined) return;
  try { unlinkSync(path); } catch { /* already gone */ }
  pending.delete(path);
}

const HIDDEN = /^\.(.+)\.sigmesh-\d+-[0-9a-f]+\.(tmp|old)$/;

/** A hidden name beside `real` (`.<name>.sigmesh-<pid>-<random>.<kind>`), short enough for any file system. */
function hiddenBeside(real: string, kind: "tmp" | "old"): string {
  const name = basename(real);
  const stem = name.length > 120 ? name.slice(0, 120) : name;
  return join(dirname(real), `.${stem}.sigmesh-${process.pid}-${randomBytes(4).toString("hex")}.${kind}`);
}

/** The output a temporary or backup of this module stands for (its file name), or undefined for any other path. */
export function outputOfHidden(path: string): string | undefined {
  const m = HIDDEN.exec(basename(path));
  return m ? m[1] : undefined;
}

// ---- signals ----

const HELD_SIGNALS: NodeJS.Signals[] = ["SIGINT", "SIGTERM", "SIGHUP"];

/**
 * Hold SIGINT, SIGTERM and SIGHUP that would end the process at once (no listener of their own):
 * while a write is held, a listener notes them, and once the write is done they are raised again
 * with their default action. A signal reaches the listener only on the event loop, after the
 * synchronous write, so the release waits two turns of the loop (its poll phase runs in
 * between). The listener then stays installed and, for a signal no write holds, removes itself
 * and raises the signal again: a signal that arrives just after the release is not lost (with
 * the listener removed at release, one arriving in that very turn used to vanish, and the
 * process ended normally). Where some other listener has taken the signal since, it is left to it.
 */
let installed: NodeJS.Signals[] | undefined;
let holding = 0;
const caught: NodeJS.Signals[] = [];

function onHeldSignal(signal: NodeJS.Signals): void {
  if (holding > 0) { caught.push(signal); return; }
  const others = process.listenerCount(signal) > 1;
  uninstallSignals();
  if (!others) process.kill(process.pid, signal);
}

function uninstallSignals(): void {
  for (const s of installed ?? []) process.off(s, onHeldSignal);
  installed = undefined;
}

function holdSignals(): () => void {
  if (!isMainThread) return () => undefined;
  if (!installed) {
    installed = HELD_SIGNALS.filter((s) => process.listenerCount(s) === 0);
    for (const s of installed) process.on(s, onHeldSignal);
  }
  holding++;
  return () => {
    setImmediate(() => setImmediate(() => {
      holding--;
      if (holding > 0 || caught.length === 0) return;
      const signal = caught[0];
      caught.length = 0;
      uninstallSignals();
      process.kill(process.pid, signal);
    }));
  };
}

// ---- the write ----

interface Staged { plan: PlannedOutput; tmp?: string; backup?: string; replaced: boolean }

function stage(s: Staged, data: string | Uint8Array): void {
  const old = statOrCode(s.plan.real);
  s.tmp = track(hiddenBeside(s.plan.real, "tmp"));
  const fd = openSync(s.tmp, "wx", 0o666);
  try {
    // The new file keeps the permissions of the one it replaces.
    if (typeof old !== "string") fchmodSync(fd, old.mode & 0o7777);
    writeFileSync(fd, data);
    fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
}

/** Keep the earlier file under a hidden name: a second link to it, or a copy where links are not allowed. */
function keepEarlier(s: Staged): void {
  const st = statOrCode(s.plan.real, false);
  if (typeof st === "string") {
    if (st === "ENOENT") return;
    throw Object.assign(new Error(st), { code: st });
  }
  if (!st.isFile()) throw refuse(s.plan, `${st.isDirectory() ? "a directory" : "a file that is not a regular file"} took its place while writing; no earlier output was changed`);
  const backup = track(hiddenBeside(s.plan.real, "old"));
  try { linkSync(s.plan.real, backup); } catch (err) {
    const code = errCode(err);
    if (code !== "EPERM" && code !== "ENOTSUP" && code !== "EOPNOTSUPP" && code !== "EMLINK" && code !== "EXDEV") { pending.delete(backup); throw err; }
    copyFileSync(s.plan.real, backup, constants.COPYFILE_EXCL);
  }
  s.backup = backup;
}

/** Put every replaced target back as it was; returns the backups that could not be restored. */
function restore(staged: readonly Staged[]): string[] {
  const stuck: string[] = [];
  for (const s of [...staged].reverse()) {
    if (s.replaced) {
      try {
        if (s.backup) { renameSync(s.backup, s.plan.real); pending.delete(s.backup); s.backup = undefined; }
        else unlinkSync(s.plan.real);
        s.replaced = false;
      } catch {
        if (s.backup) { pending.delete(s.backup); stuck.push(`the earlier ${s.plan.path} is kept as ${s.backup}`); s.backup = undefined; }
      }
    }
    remove(s.backup);
    remove(s.tmp);
  }
  return stuck;
}

function commit(s: Staged): void {
  keepEarlier(s);
  renameSync(s.tmp!, s.plan.real);
  pending.delete(s.tmp!);
  s.tmp = undefined;
  s.replaced = true;
}

/** The fault of a failed write as one line naming the output (never a temporary), or the error itself when it is not the file system's. */
function writeFault(err: unknown, at: OutputPath | undefined, stuck: readonly string[]): unknown {
  const code = errCode(err);
  if (err instanceof InputError || code === undefined) return err;
  const kept = stuck.length > 0 ? `; ${stuck.join("; ")}` : "; no earlier output was changed";
  return new InputError(`cannot write ${at ? named(at) : "the outputs"}: ${fileFault(code)}${kept}`);
}

/**
 * Write several outputs as one set, all or none (see the header). Throws an `InputError`
 * naming the output at fault; the earlier files are then as they were and no temporary is left.
 */
export function writeFilesAtomic(files: readonly OutputData[], opts: WriteOptions = {}): void {
  const plans = planOutputs(files);
  const data = files.filter((f) => f.path !== "-").map((f) => f.data);
  const release = holdSignals();
  const made: string[] = [];
  const staged: Staged[] = [];
  let at: OutputPath | undefined;
  try {
    plans.forEach((plan, i) => {
      at = plan;
      if (plan.makeFolder && !made.includes(plan.makeFolder)) {
        try { mkdirSync(plan.makeFolder); made.push(plan.makeFolder); } catch (err) { if (errCode(err) !== "EEXIST") throw err; }
      }
      const s: Staged = { plan, replaced: false };
      staged.push(s);
      stage(s, data[i]);
    });
    at = undefined;
    opts.beforeCommit?.();
    for (const s of staged) { at = s.plan; commit(s); }
    for (const s of staged) remove(s.backup);
  } catch (err) {
    const stuck = restore(staged);
    for (const f of made.reverse()) { try { rmdirSync(f); } catch { /* not empty: kept */ } }
    throw writeFault(err, at, stuck);
  } finally {
    release();
  }
}

/** Write one output atomically (see `writeFilesAtomic`). */
export function writeFileAtomic(path: string, data: string | Uint8Array, option?: string): void {
  writeFilesAtomic([{ path, data, option }]);
}
