/**
 * What the catalogue's columns can hold of a scan file's metadata. The scan-file reader accepts strings of any
 * length, but `scans.title` is VARCHAR(255) and `scans.target` VARCHAR(32) (models/files.ts; MariaDB counts
 * characters, i.e. Unicode code points, for utf8mb4). Rather than failing the insert (an upload that answers 500
 * however often it is tried), a long title is shortened in the column with a warning (the file and the metadata
 * JSON keep it whole), and a target name longer than any gas or molecule name is a rule the file breaks (it is
 * quarantined with the sentence, so an analyst can correct it on release). Pure: no imports but types.
 */
import type { ScanMetadata } from '@/reduction/formats';

// VARIABLES //

/** Column lengths in characters (models/files.ts, scans). */
export const TITLE_MAX_CHARS = 255;
export const TARGET_MAX_CHARS = 32;

// FUNCTIONS //

/** Number of Unicode code points (what MariaDB counts in a utf8mb4 VARCHAR). */
export function charCount(s: string): number {
  let n = 0;
  for (const _ of s) n++;
  return n;
}

/** The first `max` code points of `s` (never splits a surrogate pair). */
export function clipChars(s: string, max: number): string {
  if (s.length <= max) return s;
  let out = '';
  let n = 0;
  for (const ch of s) {
    if (n++ >= max) break;
    out += ch;
  }
  return out;
}

/**
 * Problems (the file is quarantined) and warnings (the upload goes on) for metadata the catalogue cannot hold
 * as it is.
 */
export function catalogueLimits(meta: ScanMetadata | null): { problems: string[]; warnings: string[] } {
  const problems: string[] = [];
  const warnings: string[] = [];
  if (!meta) return { problems, warnings };
  if (meta.title !== null && charCount(meta.title) > TITLE_MAX_CHARS) {
    warnings.push(
      `/entry/title: ${charCount(meta.title)} characters; the catalogue shows the first ${TITLE_MAX_CHARS} (the stored file keeps the whole title).`,
    );
  }
  if (charCount(meta.target) > TARGET_MAX_CHARS) {
    problems.push(
      `/entry/sample/name: at most ${TARGET_MAX_CHARS} characters (this one has ${charCount(meta.target)}); name the target gas or molecule, e.g. He, Ar, N2.`,
    );
  }
  return { problems, warnings };
}
