/**
 * The settings editor shows the peak model and the fit-window rule a stored version really reduces with (issue 10).
 * A settings object that does not give `peak_model` / `fit_half_width_deg` is completed by the schema with the fixed
 * defaults (gaussian, 25°) *and* `follow_data` flags that make the reduction use the von Mises shape and a window of
 * ±3σ per lobe instead (FORMATS §3 extension; reduction/pipeline.ts `effectiveSettings`). The editor used to show
 * the completed defaults — "Gaussian", "25" — for such a version.
 */
import { describe, expect, it } from 'vitest';
import { fitWindowWords, formToSettings, peakModelWords, settingsToForm } from '@/components/calibration/version-forms';
import { parseSettings } from '@/reduction/formats';
import { effectiveSettings } from '@/reduction/pipeline';

function stored(raw: unknown): Record<string, unknown> {
  // what the server stores: the parsed body (lib/db/queries/calibrations.ts parseVersionBody)
  const r = parseSettings(raw);
  if (!r.ok) throw new Error(r.problems.join('; '));
  return r.value as unknown as Record<string, unknown>;
}

describe('settingsToForm on a stored version', () => {
  it('shows the von Mises model and the following window of a version whose settings follow the data', () => {
    const body = stored({ bootstrap: { resamples: 100, seed: 7 } });
    // the stored body carries the defaults beside the flags that override them
    expect(body.peak_model).toBe('gaussian');
    expect(body.fit_half_width_deg).toBe(25);
    const f = settingsToForm(body);
    expect(f.peak_model).toBe('follow');
    expect(f.fit_window_rule).toBe('follow');
    // and the reduction indeed uses von Mises for it
    expect(effectiveSettings(body as never, 0.01).peak_model).toBe('von_mises');
  });
  it('shows an explicit model and half-width as stored', () => {
    const f = settingsToForm(stored({ peak_model: 'parabola', fit_half_width_deg: 40 }));
    expect(f.peak_model).toBe('parabola');
    expect(f.fit_window_rule).toBe('fixed');
    expect(f.fit_half_width_deg).toBe('40');
  });
  it('shows an explicit von Mises with a following window (flags set apart)', () => {
    const f = settingsToForm(stored({ peak_model: 'von_mises' }));
    expect(f.peak_model).toBe('von_mises');
    expect(f.fit_window_rule).toBe('follow');
  });
  it('starts a first version from the fixed defaults', () => {
    const f = settingsToForm(null);
    expect(f.peak_model).toBe('gaussian');
    expect(f.fit_window_rule).toBe('fixed');
    expect(f.fit_half_width_deg).toBe('25');
  });
});

describe('formToSettings keeps what the form shows', () => {
  it('an unchanged edit of a following version saves the same model and window rule', () => {
    const base = stored({});
    const saved = stored(formToSettings(settingsToForm(base), base));
    expect(saved.follow_data).toEqual(base.follow_data);
    expect(effectiveSettings(saved as never, 0.01).peak_model).toBe('von_mises');
  });
  it('choosing a Gaussian and a fixed 30° window ends the following', () => {
    const base = stored({});
    const f = { ...settingsToForm(base), peak_model: 'gaussian', fit_window_rule: 'fixed', fit_half_width_deg: '30' };
    const saved = stored(formToSettings(f, base));
    expect(saved.follow_data).toMatchObject({ fit_window: false, peak_model: false });
    expect(saved.peak_model).toBe('gaussian');
    expect(saved.fit_half_width_deg).toBe(30);
    expect(effectiveSettings(saved as never, 0.01).peak_model).toBe('gaussian');
  });
  it('choosing "following the data" on a fixed version turns the flags on', () => {
    const base = stored({ peak_model: 'gaussian', fit_half_width_deg: 25 });
    const f = { ...settingsToForm(base), peak_model: 'follow', fit_window_rule: 'follow' };
    const saved = stored(formToSettings(f, base));
    expect(saved.follow_data).toMatchObject({ fit_window: true, peak_model: true });
    expect(saved.peak_model).toBe('von_mises');
  });
});

describe('version summary words', () => {
  it('names the model and the window rule the version reduces with', () => {
    const follow = stored({}) as never;
    expect(peakModelWords(follow)).toBe('von Mises + constant (follows the data)');
    expect(fitWindowWords(follow)).toMatch(/^±3σ of each lobe/);
    const fixed = stored({ peak_model: 'gaussian', fit_half_width_deg: 35 }) as never;
    expect(peakModelWords(fixed)).toBe('Gaussian + constant');
    expect(fitWindowWords(fixed)).toBe('±35°');
  });
});
