// Writers for sift's output files (CSV, JSON, CIF) and atomic replacement of a set of files: every file is
// first written whole to a temporary name in the output folder, then all are renamed into place, so an
// interrupted run (Ctrl-C) never leaves a half-written output file. Numbers in tables are rounded by
// src/io/tables.ts, the same way every time, so two runs on the same inputs give byte-identical files.
import { mkdirSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';

/** One CSV field (RFC 4180): quoted when it holds a comma, quote, line break or outer spaces. */
export function csvField(value: string | number | null): string {
  if (value === null) return '';
  const s = String(value);
  if (/[",\r\n]/.test(s) || s !== s.trim()) return `"${s.replace(/"/g, '""')}"`;
  return s;
}

export function csvLine(fields: Array<string | number | null>): string {
  return fields.map(csvField).join(',');
}

/** Temporary files being written right now, removed if the process is interrupted. */
const pending = new Set<string>();

/** Remove the temporary files of an interrupted write (called from the SIGINT handler). */
export function removePendingFiles(): void {
  for (const f of pending) rmSync(f, { force: true });
  pending.clear();
}

/**
 * Write `files` (name -> content) into `dir` atomically as a set: all are written to temporary names first,
 * then renamed over the final names. A failure removes the temporary files and rethrows.
 */
export function writeFilesAtomically(dir: string, files: ReadonlyArray<[string, string | Uint8Array]>): string[] {
  mkdirSync(dir, { recursive: true });
  const staged: Array<[string, string]> = [];
  try {
    for (const [name, content] of files) {
      const tmp = join(dir, `.${name}.${process.pid}.partial`);
      pending.add(tmp);
      writeFileSync(tmp, content);
      staged.push([tmp, join(dir, name)]);
    }
    for (const [tmp, final] of staged) {
      renameSync(tmp, final);
      pending.delete(tmp);
    }
  } catch (err) {
    removePendingFiles();
    throw err;
  }
  return staged.map(([, final]) => final);
}

/** JSON text of already rounded data; refuses non-finite numbers (JSON would write them as null). */
export function stableJson(value: unknown): string {
  return JSON.stringify(value, (_key, v) => {
    if (typeof v === 'number' && !Number.isFinite(v)) throw new Error(`cannot write the non-finite number ${v} to JSON`);
    return v;
  });
}
