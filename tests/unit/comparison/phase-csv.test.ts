/**
 * The phase-delay export of the comparison page (components/comparison/phase-panel.tsx): one CSV row per phase with
 * the curve's fit (Y = A₀ + A₁ cos(φ − φ₀), SCIENCE.md C10) and provenance; RFC 4180 layout (CRLF, quoting).
 * The curve is written by hand: Y = 100 + 40 cos(φ − 0.5) at φ = 0 and π.
 */
import { describe, expect, it } from 'vitest';
import { PHASE_CSV_COLUMNS, phaseCsv } from '@/components/comparison/phase-panel';
import type { PhaseCurve } from '@/lib/comparison/spec';

const curve: PhaseCurve = {
  campaignId: 3,
  campaignName: 'Ar 800 + 400 nm, "phase" scan',
  teamId: 2,
  teamName: 'Two-colour phase group',
  scanId: 12,
  scanTitle: 'phase 1',
  target: 'Ar',
  wavelengthNm: 800,
  ellipticity: null,
  flagged: false,
  region: 'all',
  method: 'fourier',
  phaseRad: [0, Math.PI],
  yield: [100 + 40 * Math.cos(-0.5), 100 + 40 * Math.cos(Math.PI - 0.5)],
  a0: 100,
  a1: 40,
  phaseOfMaxRad: 0.5,
  contrast: 0.4,
  provenance: {
    scanId: 12,
    resultId: 40,
    calibrationId: 7,
    calibrationVersion: 1,
    settingsId: 8,
    settingsVersion: 2,
    softwareVersion: '0.1.0',
  },
};

describe('phase-delay CSV', () => {
  it('one row per phase, yield over A₀ beside the yield, provenance at the end', () => {
    const lines = phaseCsv([curve], false).split('\r\n');
    expect(lines[1]).toBe(PHASE_CSV_COLUMNS.join(','));
    const rows = lines.slice(2, -1);
    expect(rows).toHaveLength(2);
    expect(rows[0]).toMatch(/^"Ar 800 \+ 400 nm, ""phase"" scan · phase 1",3,/);
    const cells = rows[1]!.split(',');
    const at = (name: (typeof PHASE_CSV_COLUMNS)[number]) =>
      cells[cells.length - PHASE_CSV_COLUMNS.length + PHASE_CSV_COLUMNS.indexOf(name)];
    expect(Number(at('phase_rad'))).toBe(Math.PI);
    expect(Number(at('yield_over_a0'))).toBeCloseTo(1 + 0.4 * Math.cos(Math.PI - 0.5), 14);
    expect(rows[1]!.endsWith(',0.5,0.4,fourier,40,7,1,8,2,0.1.0')).toBe(true);
  });
});
