/**
 * Calibrations for event campaigns (reduction/formats.ts eventCalibrationSchema, an optional extension of FORMATS
 * §2): a version holding only spectrometer values (FORMATS §1.1 names and units) is accepted for event files, needs
 * none of the detector-image fields, and is refused for image scans with a sentence saying why; an image calibration
 * is parsed exactly as before (FORMATS §2 unchanged). The form writes such a version when the centre and the scale
 * are left blank. Source of the rules: FORMATS §1.1 (the calibration may override every spectrometer value) and §2.
 */
import { describe, expect, it } from 'vitest';
import { calibrationToForm, formToCalibration } from '@/components/calibration/version-forms';
import { ReductionRefusedError } from '@/lib/jobs/failure';
import { preflight, preflightEvents } from '@/lib/jobs/preflight';
import { isEventOnlyCalibration, parseAnyCalibration, parseCalibration } from '@/reduction/formats';

const labels = { calibration: 'calibration v3', settings: 'settings v1' };

describe('a calibration for event files only', () => {
  it('needs no detector-image fields and keeps its spectrometer values', () => {
    const body = { spectrometer: { t0: 14.2, magnetic_field: 0.001 } };
    expect(isEventOnlyCalibration(body)).toBe(true);
    const r = parseAnyCalibration(body);
    if (!r.ok) throw new Error(r.problems.join('; '));
    expect(r.value.center_px).toBeUndefined();
    expect(r.value.momentum_per_pixel_au).toBeUndefined();
    expect(r.value.spectrometer).toEqual({ t0: 14.2, magnetic_field: 0.001 });
    // an empty spectrometer object: every value from the files
    expect(parseAnyCalibration({ spectrometer: {} }).ok).toBe(true);
    // the spectrometer values are still checked (FORMATS §1.1: E accelerates electrons toward the detector)
    const bad = parseAnyCalibration({ spectrometer: { electric_field: -5 } });
    expect(bad.ok).toBe(false);
    if (!bad.ok) expect(bad.problems.join(' ')).toContain('calibration.spectrometer.electric_field');
    // unknown fields stay refused, as in every calibration
    expect(parseAnyCalibration({ spectrometer: {}, centre: [1, 2] }).ok).toBe(false);
  });

  it('is not an image calibration: FORMATS §2 still requires the centre and the scale', () => {
    expect(parseCalibration({ spectrometer: { t0: 14.2 } }).ok).toBe(false);
    // one image field given: it is an image calibration, and the missing one is named
    const half = parseAnyCalibration({ center_px: [10, 10], spectrometer: { t0: 14.2 } });
    expect(half.ok).toBe(false);
    if (!half.ok) expect(half.problems.join(' ')).toContain('calibration.momentum_per_pixel_au');
    const image = parseAnyCalibration({ center_px: [10, 10], momentum_per_pixel_au: 0.01 });
    expect(image.ok && image.value.center_px).toEqual([10, 10]);
  });

  it('reduces event scans and is refused for image scans with a plain sentence', () => {
    const body = { spectrometer: { t0: 14.2 } };
    const { calibration } = preflightEvents(body, {}, labels);
    expect(calibration.spectrometer?.t0).toBe(14.2);
    const imageMeta = { shape: { nStep: 1, nY: 64, nX: 64 } } as unknown as Parameters<typeof preflight>[0];
    expect(() => preflight(imageMeta, body, {}, labels)).toThrow(ReductionRefusedError);
    expect(() => preflight(imageMeta, body, {}, labels)).toThrow(/calibration v3 is a calibration for event files/);
  });

  it('is what the form writes when centre and scale are left blank', () => {
    const f = calibrationToForm(null);
    f.sp_t0 = '14.2';
    const body = formToCalibration(f, null) as Record<string, unknown>;
    expect(isEventOnlyCalibration(body)).toBe(true);
    expect(body.spectrometer).toEqual({ t0: 14.2 });
    expect(parseAnyCalibration(body).ok).toBe(true);
    // and the form shows such a version with blank centre and scale again
    const back = calibrationToForm(body);
    expect(back.center_x).toBe('');
    expect(back.momentum_per_pixel_au).toBe('');
    expect(back.sp_t0).toBe('14.2');
    // all blank, no spectrometer value: still an event calibration (every value from the files)
    const none = formToCalibration(calibrationToForm(null), null) as Record<string, unknown>;
    expect(none.spectrometer).toEqual({});
    // with a centre and a scale it is an image calibration as before
    const img = formToCalibration({ ...f, center_x: '100', center_y: '101', momentum_per_pixel_au: '0.01' }, null);
    expect(parseCalibration(img).ok).toBe(true);
  });
});
