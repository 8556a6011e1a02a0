/**
 * The displayed peak model of a lobe on the −180…180° azimuth axis. The azimuth is periodic, so a lobe within
 * fit_half_width of ±180° has its model in two pieces, one at each end of the axis; drawn as one line it would cross
 * the whole plot (the "flat line across the axis" of issue 11). Data: an exact Gaussian on a constant base, so the
 * linear least-squares height and base must come back exactly (to rounding).
 */
import { describe, expect, it } from 'vitest';
import { lobeModelCurve, lobeModelSegments } from '@/components/scans/lobe-model';

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
