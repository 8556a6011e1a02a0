/**
 * Ring suggestions of the bench's momentum-scale tool (components/bench/radial-peaks.ts) on frames from the example
 * generator with known ATI rings (reduction/synth: E_n = E₀ + nħω, κ given, SCIENCE.md §7.1), and the whole path the
 * page runs — suggested rings → atiRingRadii → fitAtiScale — recovering the generator's κ within the error the tool
 * states. The false-alarm check uses a flat Poisson frame (no rings at all).
 */
import { describe, expect, it } from 'vitest';
import { radialDensity, ringWindowPx, suggestRingPeaks } from '@/components/bench/radial-peaks';
import { atiRingRadii, fitAtiScale } from '@/reduction/bench/ati-scale';
import { photonEnergyEv } from '@/reduction/constants';
import { expected, frameOf, plan, realise, rngOf } from '../reduction/bench/helpers';

const KAPPA = 2e-3; // eV/px², the generator's truth

function atiPlan() {
  return plan({
    kind: 'image',
    size: 160,
    counts: 4e4,
    atiRings: { e0Ev: 0.45, orders: [1, 2, 3, 4, 5], widthAu: 0.012, amplitude: 2, kappaEvPerPx2: KAPPA },
  });
}

describe('suggestRingPeaks', () => {
  it('finds every generated ATI ring within 1.5 px of its true radius', () => {
    const p = atiPlan();
    const truth = p.atiRings!.radiiPx;
    const f = frameOf(p, realise(expected(p), rngOf(5)));
    const d = radialDensity(f, p.calibration.center_px, p.calibration, 0.5);
    const s = suggestRingPeaks(d, { rMinPx: 5 });
    for (const r of truth) {
      const near = s.filter((q) => Math.abs(q.radiusPx - r) < 1.5);
      expect(near.length, `ring at ${r.toFixed(2)} px among ${s.map((q) => q.radiusPx.toFixed(1)).join(', ')}`).toBe(1);
    }
    // suggestions are sorted by radius
    for (let i = 1; i < s.length; i++) expect(s[i]!.radiusPx).toBeGreaterThan(s[i - 1]!.radiusPx);
  });

  it('suggests nothing at 5σ on a flat Poisson frame (20 realisations)', () => {
    const n = 128;
    const mean = new Float64Array(n * n).fill(30);
    const rng = rngOf(9);
    let total = 0;
    for (let k = 0; k < 20; k++) {
      const f = { nX: n, nY: n, counts: realise(mean, rng) };
      total += suggestRingPeaks(radialDensity(f, [63.5, 63.5], null, 0.5)).length;
    }
    // a 5σ excess happens with p ≈ 3e-7 per bin for a Gaussian; a few hundred bins × 20 frames ⇒ expect 0
    expect(total).toBe(0);
  });

  it('suggested rings → ring fit → r² vs n line: κ within 2 stated σ of the truth (10 realisations)', () => {
    const p = atiPlan();
    const hw = photonEnergyEv(800);
    const mean = expected(p);
    const rng = rngOf(17);
    const truth = p.atiRings!.radiiPx;
    for (let k = 0; k < 10; k++) {
      const f = frameOf(p, realise(mean, rng));
      const d = radialDensity(f, p.calibration.center_px, p.calibration, 0.5);
      // the analyst keeps the suggestions that are ATI rings (orders 1…5): here, those near the truth
      const chosen = suggestRingPeaks(d, { rMinPx: 5 })
        .map((q) => q.radiusPx)
        .filter((r) => truth.some((t) => Math.abs(t - r) < 1.5));
      expect(chosen.length).toBe(5);
      const radii = atiRingRadii(f, {
        centrePx: p.calibration.center_px,
        guessesPx: chosen,
        halfWidthPx: ringWindowPx(chosen, 0.5),
        binPx: 0.5,
      });
      const fit = fitAtiScale(
        radii.map((r) => r.radiusPx),
        radii.map((r) => r.radiusErrPx),
        hw,
        { firstOrder: 1 },
      );
      expect(fit.stdErr.kappaEvPerPx2).toBeGreaterThan(0);
      expect(Math.abs(fit.value.kappaEvPerPx2 - KAPPA)).toBeLessThan(2 * fit.stdErr.kappaEvPerPx2 + 2e-3 * KAPPA);
    }
  });
});

describe('ringWindowPx', () => {
  it('stays below half the closest ring spacing and within 3 bins … 12 px', () => {
    expect(ringWindowPx([20, 30, 36], 0.5)).toBeCloseTo(0.45 * 6, 12);
    expect(ringWindowPx([50], 0.5)).toBe(12);
    expect(ringWindowPx([20, 21], 0.5)).toBeCloseTo(1.505, 12);
  });
});
