/**
 * The what-would-change arithmetic of the bench (components/bench/trial.ts). The checks are worked by hand: a draft
 * equal to the current result changes nothing; the "after" step offset uses the current result's lobe weights
 * (inverse-variance weighted mean, common practice); every change is divided by the current result's σ.
 */
import { describe, expect, it } from 'vitest';
import { largestPull, offsetWithWeights, stepChange } from '@/components/bench/trial';
import type { LobeResult, StepResult } from '@/reduction/formats';

function lobe(offset: number, err: number | null): LobeResult {
  return {
    angle_deg: 90 + offset,
    angle_err_deg: err,
    expected_deg: 90,
    offset_deg: offset,
    offset_err_deg: err,
    radius_au: 1,
    transverse_shift_au: null,
    width_deg: 30,
    angle_fit_err_deg: null,
    angle_sys_err_deg: null,
    fit_window_deg: null,
  };
}

function step(
  offsets: [number, number],
  errs: [number | null, number | null],
  o: Partial<StepResult> = {},
): StepResult {
  return {
    index: 0,
    value: 0,
    total_counts: 1e5,
    radius_au: 1.2,
    radius_err_au: 0.01,
    intensity_from_radius_Wcm2: 4e14,
    intensity_from_radius_err_Wcm2: 1e12,
    lobes: [lobe(offsets[0], errs[0]), lobe(offsets[1], errs[1])],
    offset_deg: 6,
    offset_err_deg: 0.2,
    ...o,
  };
}

describe('stepChange', () => {
  it('the same numbers before and after change nothing', () => {
    const b = step([5, 7], [0.1, 0.1]);
    const c = stepChange(b, { ...b, offset_deg: 123 }); // the after step's own (unweighted) offset is not used
    expect(c.offsetDeg.delta).toBe(0);
    expect(c.radiusAu.inSigma).toBe(0);
    expect(largestPull(c)).toBe(0);
  });
  it('after-offset weights the draft lobes with the current errors: (4/0.1² + 8/0.2²)/(1/0.1² + 1/0.2²) = 4.8', () => {
    const b = step([5, 7], [0.1, 0.2]);
    const a = step([4, 8], [null, null]);
    expect(offsetWithWeights(b, a)).toBeCloseTo(4.8, 12);
    const c = stepChange(b, a);
    // before offset_deg = 6 (as stored), σ = 0.2 → (4.8 − 6)/0.2 = −6 σ
    expect(c.offsetDeg.inSigma).toBeCloseTo(-6, 12);
  });
  it('without current lobe errors the plain mean is used, and a missing σ gives no pull', () => {
    const b = step([5, 7], [null, null], { offset_err_deg: null, radius_err_au: null });
    const a = step([4, 8], [null, null], { radius_au: 1.3 });
    expect(offsetWithWeights(b, a)).toBe(6);
    const c = stepChange(b, a);
    expect(c.offsetDeg.inSigma).toBeNull();
    expect(c.radiusAu.delta).toBeCloseTo(0.1, 12);
    expect(c.radiusAu.inSigma).toBeNull();
  });
});
