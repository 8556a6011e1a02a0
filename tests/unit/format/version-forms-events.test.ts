/**
 * The calibration and settings editors for event files (FORMATS §1.1, §2, §3): spectrometer values round-trip through
 * the form, blank fields keep the file's value (no key written), and the settings' `events` object is written only
 * when the version had one or the form changed it from the defaults of FORMATS §3.
 */
import { describe, expect, it } from 'vitest';
import {
  calibrationToForm,
  formToCalibration,
  formToSettings,
  settingsToForm,
} from '@/components/calibration/version-forms';
import { parseCalibration, parseSettings } from '@/reduction/formats';

const CAL = { center_px: [255.5, 255.5], momentum_per_pixel_au: 0.0082 };

describe('calibration form: spectrometer values', () => {
  it('round-trip the values given and write none for blank fields', () => {
    const stored = parseCalibration({
      ...CAL,
      spectrometer: { t0: 14.2, magnetic_field: 0.001, detector_center: [0.35, -0.2] },
    });
    if (!stored.ok) throw new Error(stored.problems.join('; '));
    const f = calibrationToForm(stored.value as unknown as Record<string, unknown>);
    expect(f.sp_t0).toBe('14.2');
    expect(f.sp_electric_field).toBe('');
    const back = parseCalibration(formToCalibration(f, stored.value as unknown as Record<string, unknown>));
    if (!back.ok) throw new Error(back.problems.join('; '));
    expect(back.value.spectrometer).toEqual({ t0: 14.2, magnetic_field: 0.001, detector_center: [0.35, -0.2] });
    // a calibration without spectrometer values keeps having none
    const plain = parseCalibration(CAL);
    if (!plain.ok) throw new Error('plain');
    const f2 = calibrationToForm(plain.value as unknown as Record<string, unknown>);
    expect(formToCalibration(f2, null)).not.toHaveProperty('spectrometer');
  });

  it('a negative electric field is refused by the schema, naming the field', () => {
    const f = calibrationToForm(CAL);
    f.sp_electric_field = '-5';
    const r = parseCalibration(formToCalibration(f, null));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.problems.join(' ')).toContain('electric_field');
  });
});

describe('settings form: event settings', () => {
  it('are not written for a version that never had them and were not changed', () => {
    const base = parseSettings({});
    if (!base.ok) throw new Error('base');
    const body = base.value as unknown as Record<string, unknown>;
    expect(formToSettings(settingsToForm(body), body)).not.toHaveProperty('events');
  });

  it('are written when changed, and read back', () => {
    const base = parseSettings({});
    if (!base.ok) throw new Error('base');
    const body = base.value as unknown as Record<string, unknown>;
    const f = settingsToForm(body);
    f.ev_laser_axis = '-x';
    f.ev_gate = false;
    f.ev_chunk = '250000';
    const r = parseSettings(formToSettings(f, body));
    if (!r.ok) throw new Error(r.problems.join('; '));
    expect(r.value.events).toEqual({ laser_axis: '-x', gate_au: null, chunk_events: 250000 });
    const again = settingsToForm(r.value as unknown as Record<string, unknown>);
    expect(again.ev_laser_axis).toBe('-x');
    expect(again.ev_gate).toBe(false);
  });
});
