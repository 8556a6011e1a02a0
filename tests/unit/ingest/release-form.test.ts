// The release form's fields (components/ingest/release-fields.ts): typed values become the API's metadataOverride,
// and every problem is a sentence that uses the label the form shows. The reasons are the reader's own sentences
// (reduction/hdf5/reader.ts, as a quarantined file lists them), so the form offers the field each reason names.
import { describe, expect, it } from 'vitest';
import { fieldsNamedBy, parseReleaseForm } from '@/components/ingest/release-fields';
import { metadataOverrideSchema } from '@/lib/ingest/schemas';

const MISSING_WAVELENGTH =
  '/entry/instrument/source/wavelength: required for every scan (fundamental wavelength in nm) but missing';

describe('release form', () => {
  it('offers the field a quarantine reason names', () => {
    expect(fieldsNamedBy([MISSING_WAVELENGTH])).toEqual(['wavelengthNm']);
    expect(fieldsNamedBy(['/entry/instrument/source/helicity: must be +1 or -1, not 0'])).toEqual(['helicity']);
    expect(fieldsNamedBy(['(file): not an HDF5 file'])).toEqual([]);
  });

  it('turns typed values into the API override, which the API schema accepts', () => {
    const r = parseReleaseForm({ wavelengthNm: ' 800 ', helicity: '-1', target: 'He', ellipticity: '' });
    expect(r).toEqual({ ok: true, override: { wavelengthNm: 800, helicity: -1, target: 'He' } });
    if (r.ok) expect(metadataOverrideSchema.safeParse(r.override).success).toBe(true);
  });

  it('names the field by its label, with its unit, and says what to write', () => {
    const words = parseReleaseForm({ wavelengthNm: 'eight hundred' });
    expect(words.ok).toBe(false);
    if (!words.ok)
      expect(words.problems[0]).toEqual({
        key: 'wavelengthNm',
        message: expect.stringMatching(/^Wavelength \(nm\): write a number/),
      });
    // one sentence for the one wrong field (no "fill in at least one value" beside it)
    if (!words.ok) expect(words.problems).toHaveLength(1);
    const negative = parseReleaseForm({ wavelengthNm: '-5' });
    if (!negative.ok) expect(negative.problems[0]?.message).toBe('Wavelength (nm) must be more than 0 nm.');
    else throw new Error('a negative wavelength was accepted');
    const ell = parseReleaseForm({ ellipticity: '1.3' });
    if (!ell.ok) expect(ell.problems[0]?.message).toBe('Ellipticity must be from 0 to 1.');
    else throw new Error('an ellipticity of 1.3 was accepted');
    const time = parseReleaseForm({ startTime: '30.11.2026 21:05' });
    if (!time.ok) expect(time.problems[0]?.message).toMatch(/^Start time: write the date and time with its offset/);
    else throw new Error('a start time without offset was accepted');
    for (const p of [...(words.ok ? [] : words.problems), ...(negative.ok ? [] : negative.problems)]) {
      expect(p.message).not.toMatch(/wavelengthNm|metadataOverride/);
    }
  });

  it('asks for at least one value', () => {
    const r = parseReleaseForm({ wavelengthNm: '', target: '  ' });
    expect(r).toEqual({ ok: false, problems: [{ key: '', message: 'Fill in at least one corrected value.' }] });
  });
});
