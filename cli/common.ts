/**
 * What every command shares at the edge: error reporting, exit codes, warnings, output.
 * Exit codes: 0 success, 2 bad input (one line naming file, place and fault), 1 internal error.
 */
import { InputError, type Warning } from "../src/errors.js";
import { writeFileAtomic } from "../src/io/atomic.js";
import { displayText } from "../src/io/display-text.js";

export const EXIT_BAD_INPUT = 2;
export const EXIT_INTERNAL = 1;

let debug = false;
export function setDebug(on: boolean): void { debug = on; }
export function isDebug(): boolean { return debug; }

/** Report a failure as one line on stderr (a stack trace only with --debug) and set the exit code. */
export function reportFailure(err: unknown): number {
  if (err instanceof InputError) {
    process.stderr.write(`sigmesh: error: ${displayText(err.message)}\n`);
    if (debug && err.stack) process.stderr.write(err.stack + "\n");
    return EXIT_BAD_INPUT;
  }
  const code = (err as NodeJS.ErrnoException)?.code;
  if (code === "ENOENT" || code === "EACCES" || code === "EISDIR" || code === "ENOSPC" || code === "EROFS") {
    const e = err as NodeJS.ErrnoException;
    const what = code === "ENOENT" ? "no such file" : code === "EACCES" ? "permission denied" : code === "EISDIR" ? "is a directory" : code === "ENOSPC" ? "no space left on device" : "read-only file system";
    process.stderr.write(`sigmesh: error: ${displayText(e.path ?? "")}: ${what}\n`);
    if (debug && e.stack) process.stderr.write(e.stack + "\n");
    return EXIT_BAD_INPUT;
  }
  const msg = err instanceof Error ? err.message : String(err);
  process.stderr.write(`sigmesh: internal error: ${displayText(msg)}${debug ? "" : " (run with --debug for details)"}\n`);
  if (debug && err instanceof Error && err.stack) process.stderr.write(err.stack + "\n");
  return EXIT_INTERNAL;
}

/** Wrap a command action so that failures become one line and an exit code. */
export function action<A extends unknown[]>(fn: (...args: A) => Promise<void> | void): (...args: A) => Promise<void> {
  return async (...args: A) => {
    try {
      await fn(...args);
    } catch (err) {
      process.exitCode = reportFailure(err);
    }
  };
}

/** Warnings on stderr, one line each: names and paths in them escaped for the terminal. */
export function printWarnings(warnings: Warning[], quiet = false): void {
  if (quiet) return;
  for (const w of warnings) process.stderr.write(`sigmesh: warning: ${displayText(`${w.file ? w.file + ": " : ""}${w.message}`)}\n`);
}

/** Write text to a path atomically, or to stdout when the path is "-". */
export function writeOutput(path: string, text: string): void {
  if (path === "-") process.stdout.write(text.endsWith("\n") ? text : text + "\n");
  else writeFileAtomic(path, text.endsWith("\n") ? text : text + "\n");
}
