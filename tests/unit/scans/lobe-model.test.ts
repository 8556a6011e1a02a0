/**
 * The displayed peak model of a lobe on the −180…180° azimuth axis. The azimuth is periodic, so a lobe within
 * fit_half_width of ±180° has its model in two pieces, one at each end of the axis; drawn as one line it would cross
 * the whole plot (the "flat line across the axis" of issue 11). Data: an exact Gaussian on a constant base, so the
 * linear least-squares height and base must come back exactly (to rounding).
 */
import { describe, expect, it } from 'vitest';
import { fittedWindow, lobeModelCurve, lobeModelSegments } from '@/components/scans/lobe-model';
import { fitLobesJointly } from '@/reduction/lobe-fit';

const theta = Array.from({ length: 360 }, (_, i) => -179.5 + i);
const wrap = (d: number) => ((((d + 180) % 360) + 360) % 360) - 180;
const gaussian = (centre: number, width: number, height: number, base: number) =>
  theta.map((t) => base + height * Math.exp(-(wrap(t - centre) ** 2) / (2 * width * width)));

describe('lobeModelSegments', () => {
  it('keeps a lobe away from ±180° in one piece', () => {
    const y = gaussian(60, 8, 100, 5);
    const segs = lobeModelSegments(theta, y, 60, 8, 25, 'gaussian');
    expect(segs).toHaveLength(1);
    const xs = (segs[0] ?? []).map((p) => p.x);
    // bin centres 35.5 … 84.5 lie within 60 ± 25
    expect([Math.min(...xs), Math.max(...xs)]).toEqual([35.5, 84.5]);
  });
  it('cuts a lobe at 175° into two pieces, each contiguous, at the two ends of the axis', () => {
    const y = gaussian(175, 8, 100, 5);
    const whole = lobeModelCurve(theta, y, 175, 8, 25, 'gaussian');
    // the uncut curve jumps across the axis: this is what was drawn as one line
    const jumps = whole.slice(1).map((p, i) => Math.abs(p.x - (whole[i] as { x: number }).x));
    expect(Math.max(...jumps)).toBeGreaterThan(300);
    const segs = lobeModelSegments(theta, y, 175, 8, 25, 'gaussian');
    expect(segs).toHaveLength(2);
    for (const seg of segs) {
      for (let i = 1; i < seg.length; i++)
        expect((seg[i] as { x: number }).x - (seg[i - 1] as { x: number }).x).toBe(1);
    }
    expect(segs[0]?.[0]?.x).toBe(-179.5);
    expect(segs[1]?.[(segs[1]?.length ?? 1) - 1]?.x).toBe(179.5);
    expect(segs.flat()).toHaveLength(whole.length);
  });
  it('recovers the exact height and base of a noiseless Gaussian lobe across the wrap', () => {
    const y = gaussian(-172, 6, 80, 12);
    for (const seg of lobeModelSegments(theta, y, -172, 6, 25, 'gaussian')) {
      for (const p of seg) {
        const i = theta.indexOf(p.x);
        expect(p.y).toBeCloseTo(y[i] as number, 9);
      }
    }
  });
});

/**
 * The displayed model must cover the window the fit used (issue 10): the joint fit stores each lobe's window as
 * `fit_window_deg` (it follows the lobe's width, so it is rarely the settings' ±fit_half_width_deg). The panel used
 * to draw every lobe over ±fit_half_width_deg whatever window the fit had used.
 */
describe('fittedWindow', () => {
  const settings = { fit_half_width_deg: 25, follow_data: { grid: false, fit_window: false, peak_model: false } };
  it('takes the stored window of the lobe over the settings', () => {
    expect(fittedWindow({ fit_window_deg: [12, 108] }, settings)).toEqual([12, 108]);
  });
  it('falls back to ±fit_half_width_deg without a stored window, and to ±45° when the window follows the data', () => {
    expect(fittedWindow({ fit_window_deg: null }, settings)).toBe(25);
    expect(fittedWindow({}, settings)).toBe(25);
    expect(fittedWindow({}, { ...settings, follow_data: { ...settings.follow_data, fit_window: true } })).toBe(45);
  });
  it('refuses an empty or non-finite stored window', () => {
    expect(fittedWindow({ fit_window_deg: [30, 30] }, settings)).toBe(25);
    expect(fittedWindow({ fit_window_deg: [Number.NaN, 40] }, settings)).toBe(25);
  });
  it('draws the model over the stored window, not over ±fit_half_width_deg', () => {
    const y = gaussian(60, 16, 100, 5);
    const w = fittedWindow({ fit_window_deg: [12, 108] }, settings);
    const segs = lobeModelSegments(theta, y, 60, 16, w, 'gaussian');
    expect(segs).toHaveLength(1);
    const xs = (segs[0] ?? []).map((p) => p.x);
    // bin centres 12.5 … 107.5 lie within [12, 108]; ±25° would have given 35.5 … 84.5
    expect([Math.min(...xs), Math.max(...xs)]).toEqual([12.5, 107.5]);
    for (const p of segs[0] ?? []) expect(p.y).toBeCloseTo(y[theta.indexOf(p.x)] as number, 9);
  });
  it('cuts a stored window that reaches past +180° at the wrap', () => {
    const y = gaussian(170, 10, 100, 5);
    const segs = lobeModelSegments(theta, y, 170, 10, [140, 200], 'von_mises');
    expect(segs).toHaveLength(2);
    const xs = segs.flat().map((p) => p.x);
    // 140.5 … 179.5 and −179.5 … −160.5 (200° ≡ −160°)
    expect(xs).toHaveLength(40 + 20);
    expect(Math.min(...xs)).toBe(-179.5);
    expect(Math.max(...xs.filter((x) => x < 0))).toBe(-160.5);
    expect(Math.min(...xs.filter((x) => x > 0))).toBe(140.5);
  });
  it('follows the window of a real joint fit (reduction/lobe-fit) on a Poisson-free two-lobe distribution', () => {
    // two von Mises lobes of σ = 18° at ±90° on a base: the joint fit's window (±3σ of the fitted width) is ≈ ±54°
    const k = 1 / ((18 * Math.PI) / 180) ** 2;
    const counts = theta.map(
      (t) =>
        20 +
        400 * Math.exp(k * (Math.cos(((t - 90) * Math.PI) / 180) - 1)) +
        400 * Math.exp(k * (Math.cos(((t + 90) * Math.PI) / 180) - 1)),
    );
    const fit = fitLobesJointly(theta, counts, counts, [90, -90], { shape: 'von_mises', window: 'follow' });
    expect(fit.ok).toBe(true);
    const lobe = fit.lobes[0] as { angleDeg: number; widthDeg: number; windowDeg: [number, number] };
    const w = fittedWindow({ fit_window_deg: lobe.windowDeg }, settings);
    expect(w).toEqual(lobe.windowDeg);
    const xs = lobeModelSegments(theta, counts, lobe.angleDeg, lobe.widthDeg, w, 'von_mises')
      .flat()
      .map((p) => p.x);
    const [lo, hi] = lobe.windowDeg;
    expect(hi - lo).toBeGreaterThan(2 * 25 + 10);
    expect(Math.min(...xs)).toBeGreaterThanOrEqual(lo);
    expect(Math.min(...xs)).toBeLessThan(lo + 1);
    expect(Math.max(...xs)).toBeLessThanOrEqual(hi);
    expect(Math.max(...xs)).toBeGreaterThan(hi - 1);
  });
});
