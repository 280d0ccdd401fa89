/**
 * Errors a user can act on. `InputError` is bad input (exit code 2): it names the
 * file, the place in it (line for text formats, byte offset for binary) and the fault.
 * Anything else that escapes to the CLI is an internal error (exit code 1).
 *
 * In the lowest layer (with src/geometry; this file imports nothing), so every layer may
 * raise it: readers where the file and line are known, mesh primitives and the pipeline
 * for parameters a user gave.
 */
export class InputError extends Error {
  readonly file: string | undefined;
  readonly place: string | undefined;
  readonly fault: string;

  constructor(fault: string, file?: string, place?: string) {
    super([file, place, fault].filter((s) => s !== undefined && s !== "").join(": "));
    this.name = "InputError";
    this.file = file;
    this.place = place;
    this.fault = fault;
  }

  /** The same fault attributed to a file (kept if one is already named). */
  inFile(file: string): InputError {
    return this.file === undefined ? new InputError(this.fault, file, this.place) : this;
  }
}

export const atLine = (line: number): string => `line ${line}`;
export const atByte = (offset: number): string => `byte ${offset}`;

/** Warnings collected by readers and checks, shown by the CLI, kept in JSON reports. */
export interface Warning {
  file?: string;
  message: string;
}
