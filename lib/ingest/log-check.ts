/**
 * Compares what the operator wrote in the shift log with what a dropped file says about itself, before upload.
 * Pure: runs in the browser on the pre-check summary and on the server on the stored metadata.
 *
 * The entry that applies to a file is the latest one noted at or before the file's start time (else the latest
 * entry with any structured field). Tolerances (Lobeline's choice): wavelength ±1 nm or ±0.5 %, whichever is
 * larger; ellipticity ±0.02; pulse energy only when the file steps through pulse energy (the logged value must lie
 * within the stepped range ±10 %). Targets compare case-insensitively. Detector voltages are not in the file
 * format (FORMATS §1), so they are recorded but not compared.
 */
import type { LogEntryDto } from './types';

export interface FileFacts {
  target: string | null;
  wavelengthNm: number | null;
  ellipticity: number | null;
  startTime: string | null;
  stepQuantity?: string | null;
  stepValues?: number[] | null;
}

export interface LogMismatch {
  field: 'target' | 'wavelength' | 'ellipticity' | 'pulse energy';
  logged: string;
  inFile: string;
  entryId: number;
  sentence: string;
}

function hasFacts(e: LogEntryDto): boolean {
  return e.target !== null || e.wavelengthNm !== null || e.ellipticity !== null || e.pulseEnergyUj !== null;
}

/** The log entry that describes a file started at `startTime`, or null. */
export function entryForFile(entries: LogEntryDto[], startTime: string | null): LogEntryDto | null {
  const withFacts = entries.filter(hasFacts).sort((a, b) => Date.parse(a.notedAt) - Date.parse(b.notedAt));
  if (withFacts.length === 0) return null;
  const t = startTime ? Date.parse(startTime) : Number.NaN;
  if (!Number.isNaN(t)) {
    const before = withFacts.filter((e) => Date.parse(e.notedAt) <= t);
    if (before.length) return before[before.length - 1]!;
  }
  return withFacts[withFacts.length - 1]!;
}

export function checkAgainstLog(entries: LogEntryDto[], file: FileFacts): LogMismatch[] {
  const e = entryForFile(entries, file.startTime);
  if (!e) return [];
  const out: LogMismatch[] = [];
  const at = new Date(e.notedAt).toISOString().slice(11, 16);
  const add = (field: LogMismatch['field'], logged: string, inFile: string) =>
    out.push({
      field,
      logged,
      inFile,
      entryId: e.id,
      sentence: `The log (${at} UTC) says ${field} ${logged}; the file says ${inFile}.`,
    });
  if (e.target !== null && file.target !== null && e.target.trim().toLowerCase() !== file.target.trim().toLowerCase()) {
    add('target', e.target, file.target);
  }
  if (e.wavelengthNm !== null && file.wavelengthNm !== null) {
    const tol = Math.max(1, 0.005 * e.wavelengthNm);
    if (Math.abs(e.wavelengthNm - file.wavelengthNm) > tol)
      add('wavelength', `${e.wavelengthNm} nm`, `${file.wavelengthNm} nm`);
  }
  if (e.ellipticity !== null && file.ellipticity !== null && Math.abs(e.ellipticity - file.ellipticity) > 0.02) {
    add('ellipticity', String(e.ellipticity), String(file.ellipticity));
  }
  if (e.pulseEnergyUj !== null && file.stepQuantity === 'pulse_energy' && file.stepValues?.length) {
    const lo = Math.min(...file.stepValues);
    const hi = Math.max(...file.stepValues);
    if (e.pulseEnergyUj < 0.9 * lo || e.pulseEnergyUj > 1.1 * hi) {
      add('pulse energy', `${e.pulseEnergyUj} µJ`, `${lo}–${hi} µJ (stepped)`);
    }
  }
  return out;
}
