/**
 * Atomic file output: write to a temporary file beside the target, then rename.
 * A failed or interrupted run never leaves a half-written file under the target name.
 */
import { writeFileSync, renameSync, unlinkSync, mkdirSync } from "node:fs";
import { dirname, basename, join } from "node:path";

export function writeFileAtomic(path: string, data: string | Uint8Array): void {
  const dir = dirname(path);
  mkdirSync(dir, { recursive: true });
  const tmp = join(dir, `.${basename(path)}.${process.pid}.${Date.now().toString(36)}.tmp`);
  try {
    writeFileSync(tmp, data);
    renameSync(tmp, path);
  } catch (err) {
    try { unlinkSync(tmp); } catch { /* already gone */ }
    throw err;
  }
}

/** Several outputs, all or nothing: every file is written to its temporary first, then all are renamed. */
export function writeFilesAtomic(files: Array<{ path: string; data: string | Uint8Array }>): void {
  const tmps: string[] = [];
  try {
    for (const f of files) {
      const dir = dirname(f.path);
      mkdirSync(dir, { recursive: true });
      const tmp = join(dir, `.${basename(f.path)}.${process.pid}.${Date.now().toString(36)}.tmp`);
      writeFileSync(tmp, f.data);
      tmps.push(tmp);
    }
    files.forEach((f, i) => renameSync(tmps[i], f.path));
  } catch (err) {
    for (const t of tmps) { try { unlinkSync(t); } catch { /* renamed or gone */ } }
    throw err;
  }
}
