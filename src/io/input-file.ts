/**
 * Reading an input file (a mesh, a scene, a report, a sweep table) whole, safely: only regular files, under a
 * size cap, every fault an InputError naming the file.
 *
 * readFileSync on a device (/dev/zero, /dev/urandom, or a symlink to one) reads until memory
 * runs out, and on a FIFO it blocks until a writer comes. So the path is checked with stat
 * (which follows symlinks) before it is opened, opened non-blocking, checked again on the open
 * descriptor (the file may have been swapped in between), and read in chunks that stop at the
 * cap even when the file grows while it is read.
 */
import { closeSync, constants, fstatSync, openSync, readSync, statSync, type Stats } from "node:fs";
import { InputError } from "../errors.js";

/** What the file is meant to be, for messages ("not a mesh file"). */
export type InputKind = "mesh" | "scene" | "report" | "table";

/** Largest mesh file read: readFileSync's own limit (2 GiB), kept as it was. */
export const MAX_MESH_BYTES = 2 ** 31 - 1;
/** Largest scene file read: a scene describes a job, its meshes are files of their own. */
export const MAX_SCENE_BYTES = 256 * 2 ** 20;
/** Largest report read by `sigmesh view`: V8's longest string (a report is read as one text). */
export const MAX_REPORT_BYTES = 0x1fffffe8;

/** Largest sweep table read by `sigmesh sweep --merge` (CSV text of a shard). */
export const MAX_TABLE_BYTES = MAX_REPORT_BYTES;

const CAPS: Record<InputKind, number> = { mesh: MAX_MESH_BYTES, scene: MAX_SCENE_BYTES, report: MAX_REPORT_BYTES, table: MAX_TABLE_BYTES };

function notRegular(st: Stats, kind: InputKind): string | undefined {
  if (st.isFile()) return undefined;
  if (st.isDirectory()) return `is a directory, not a ${kind} file`;
  const what = st.isCharacterDevice() ? "a character device" : st.isBlockDevice() ? "a block device"
    : st.isFIFO() ? "a named pipe" : st.isSocket() ? "a socket" : "not a file";
  return `not a regular file (${what}); give a ${kind} file`;
}

function size(bytes: number): string {
  return bytes >= 2 ** 30 - 1 ? `${Math.round(bytes / 2 ** 30)} GiB` : bytes >= 2 ** 20 ? `${Math.round(bytes / 2 ** 20)} MiB` : `${bytes} bytes`;
}

/** The bytes of an input file; `maxBytes` defaults to the cap of its kind. */
export function readInputBytes(path: string, kind: InputKind, maxBytes = CAPS[kind]): Uint8Array {
  let fd: number | undefined;
  try {
    const refused = notRegular(statSync(path), kind);
    if (refused) throw new InputError(refused, path);
    fd = openSync(path, constants.O_RDONLY | (constants.O_NONBLOCK ?? 0));
    const st = fstatSync(fd);
    const again = notRegular(st, kind);
    if (again) throw new InputError(again, path);
    const tooLarge = (): never => { throw new InputError(`file too large to read (over ${size(maxBytes)}; a ${kind} file is read whole)`, path); };
    if (st.size > maxBytes) tooLarge();
    // The size stat gives, plus room to see the end (files in /proc report 0; a file may grow).
    let buf = Buffer.allocUnsafe(Math.min(maxBytes + 1, Math.max(st.size + 1, 1 << 16)));
    let n = 0;
    for (;;) {
      if (n === buf.length) {
        if (buf.length > maxBytes) tooLarge();
        const grown = Buffer.allocUnsafe(Math.min(maxBytes + 1, buf.length * 2));
        buf.copy(grown, 0, 0, n);
        buf = grown;
      }
      const got = readSync(fd, buf, n, buf.length - n, null);
      if (got === 0) break;
      n += got;
    }
    if (n > maxBytes) tooLarge();
    return n === buf.length ? buf : buf.subarray(0, n);
  } catch (err) {
    if (err instanceof InputError) throw err;
    const code = (err as NodeJS.ErrnoException).code;
    const why = code === "ENOENT" ? "no such file" : code === "EACCES" || code === "EPERM" ? "permission denied"
      : code === "EISDIR" ? `is a directory, not a ${kind} file` : code === "ELOOP" ? "too many levels of symbolic links"
      : code === "ENOTDIR" ? "a part of the path is not a folder" : code === "EAGAIN" ? `not a regular file; give a ${kind} file`
      : `cannot read the file (${code ?? (err as Error).message})`;
    throw new InputError(why, path);
  } finally {
    if (fd !== undefined) closeSync(fd);
  }
}

/** The text of an input file, decoded as UTF-8 (a byte-order mark is kept for the parser to skip). */
export function readInputText(path: string, kind: InputKind, maxBytes = CAPS[kind]): string {
  const bytes = readInputBytes(path, kind, maxBytes);
  return Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString("utf8");
}
