// Problems a user sees name the field with the form's own label and say what to do (issue: messages such as
// "calibration.detector_ellipticity.ratio: … received NaN"). The problems come from the real schemas of
// reduction/formats.ts; the labels are those of components/calibration/version-editor.tsx.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { formToCalibration, formToSettings, settingsToForm } from '@/components/calibration/version-forms';
import { FIELD_LABELS, problemForUser } from '@/lib/field-labels';
import { parseCalibration, parseSettings } from '@/reduction/formats';

describe('problemForUser', () => {
  it('an empty ellipticity ratio reads as the form label and asks for a number', () => {
    const body = formToCalibration(
      {
        center_x: '255.5',
        center_y: '255.5',
        momentum_per_pixel_au: '0.01',
        rotation_deg: '0',
        mirror: false,
        ellipticity_ratio: '',
        ellipticity_axis_deg: '0',
        bad_pixels: '',
        background_subtract: true,
        background_scale_by: 'shots',
      },
      null,
    );
    const r = parseCalibration(body);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.problems.join(' ')).toMatch(/detector_ellipticity\.ratio/); // the raw wording this replaces
    const shown = r.problems.map((p) => problemForUser(p));
    expect(shown).toContain('Detector ellipticity ratio: enter a number (the field is empty or not a number).');
    for (const s of shown) expect(s).not.toMatch(/[a-z]+_[a-z_]+|\.\w+\./);
  });

  it('a grid too small names “Grid cells per side” and the smallest allowed value', () => {
    const form = { ...settingsToForm(null), grid_n: '4' };
    const r = parseSettings(formToSettings(form, null));
    expect(r.ok).toBe(false);
    if (r.ok) return;
    const shown = r.problems.map((p) => problemForUser(p));
    expect(shown.some((s) => /^Grid cells per side: enter a number of at least \d+\.$/.test(s))).toBe(true);
  });

  it('knows a label for every label the editor shows', () => {
    const editor = readFileSync('components/calibration/version-editor.tsx', 'utf8');
    const shownLabels = [...editor.matchAll(/<Row label="([^"]+)"/g)].map((m) => m[1]);
    const known = new Set(Object.values(FIELD_LABELS));
    for (const l of shownLabels) if (l !== 'Note') expect(known, l).toContain(l);
  });
});
