// The colour maps of components/plots/colormaps.ts against published values and colour science.
// Sources: the ColorBrewer 9-class "YlGnBu" scheme, end colours #ffffd9 and #081d58 (C. A. Brewer, colorbrewer2.org;
// values from memory of the published table, also the first and last entries of d3-scale-chromatic's
// schemeYlGnBu[9], checked below); CIELAB lightness L* from d3-color's `lab` (CIE 15, D65 white, sRGB of
// IEC 61966-2-1). "Equal lightness around a cyclic map" and "monotone lightness in a sequential map" are common
// practice for scientific colour maps.
import { hcl, lab, rgb } from 'd3-color';
import { schemeYlGnBu } from 'd3-scale-chromatic';
import { describe, expect, it } from 'vitest';
import { compass, PHASE_CIRCLE, phaseCircle, tidepool, ylGnBu } from '@/components/plots/colormaps';

const entry = (lut: Uint8ClampedArray, i: number) => rgb(lut[i * 3]!, lut[i * 3 + 1]!, lut[i * 3 + 2]!);

describe('YlGnBu (momentum images)', () => {
  it('is the published ColorBrewer scheme: its ends are the 9-class table’s first and last colours', () => {
    expect(schemeYlGnBu[9]?.[0]).toBe('#ffffd9');
    expect(schemeYlGnBu[9]?.[8]).toBe('#081d58');
    expect(entry(ylGnBu.lut, 0).formatHex()).toBe('#ffffd9');
    expect(entry(ylGnBu.lut, 255).formatHex()).toBe('#081d58');
    expect(ylGnBu.name).toMatch(/YlGnBu/);
  });

  it('passes near every colour of the 9-class table (within ΔE*ab 8: d3 draws a smoothing B-spline near them, measured up to 6.2)', () => {
    const labs = Array.from({ length: 256 }, (_, i) => lab(entry(ylGnBu.lut, i)));
    for (const hex of schemeYlGnBu[9] ?? []) {
      const c = lab(hex);
      const best = Math.min(...labs.map((q) => Math.hypot(q.l - c.l, q.a - c.a, q.b - c.b)));
      expect(best, hex).toBeLessThan(8);
    }
  });

  it('gets darker with every step, so more counts always read as darker', () => {
    let last = Number.POSITIVE_INFINITY;
    for (let i = 0; i < 256; i++) {
      const l = lab(entry(ylGnBu.lut, i)).l;
      expect(l, `entry ${i}`).toBeLessThanOrEqual(last + 0.3); // 8-bit rounding
      last = l;
    }
    expect(lab(entry(ylGnBu.lut, 0)).l - lab(entry(ylGnBu.lut, 255)).l).toBeGreaterThan(80);
  });

  it('is what the old export name gives', () => {
    expect(tidepool).toBe(ylGnBu);
  });
});

describe('phase circle (phase of maximum yield)', () => {
  it('has the same lightness at every phase (L* within ±1.5 of the design value)', () => {
    for (let i = 0; i < 256; i++) {
      expect(Math.abs(lab(entry(phaseCircle.lut, i)).l - PHASE_CIRCLE.lightness), `entry ${i}`).toBeLessThan(1.5);
    }
  });

  it('stays inside the sRGB gamut, so no colour is clipped', () => {
    for (let i = 0; i < 256; i++) {
      const c = hcl(PHASE_CIRCLE.startHueDeg + (360 * i) / 256, PHASE_CIRCLE.chroma, PHASE_CIRCLE.lightness).rgb();
      expect(c.displayable(), `entry ${i}`).toBe(true);
    }
  });

  it('closes without a seam: the step from the last entry to the first is like any other step', () => {
    const d = (i: number, j: number) => {
      const p = lab(entry(phaseCircle.lut, i));
      const q = lab(entry(phaseCircle.lut, j));
      return Math.hypot(p.l - q.l, p.a - q.a, p.b - q.b);
    };
    const steps = Array.from({ length: 255 }, (_, i) => d(i, i + 1));
    expect(d(255, 0)).toBeLessThan(Math.max(...steps) * 1.5);
    // and it really goes round: opposite phases are far apart
    expect(d(0, 128)).toBeGreaterThan(2 * PHASE_CIRCLE.chroma * 0.9);
    expect(compass).toBe(phaseCircle);
  });
});
