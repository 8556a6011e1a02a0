/**
 * Model overlays of the comparison page against SCIENCE.md: the single-trajectory table of §10.5 (`sec10b.py`,
 * triangular exit, 8-cycle cos² pulse, birth at the field maximum), the Keldysh–Rutherford column Θ of the same table
 * (§10.6; A. W. Bray, S. Eckart, A. S. Kheifets, PRL 121, 123201 (2018)) and the simple-man momentum of §4.3
 * (|p_SM| = 1.230 36 a.u. at 4×10¹⁴ W/cm², 800 nm, ε = 0.87).
 */
import { describe, expect, it } from 'vitest';
import { logSpaced, MODEL_TEXT, modelCurve } from '@/lib/comparison/models';

const at = (
  model: 'simple_man' | 'trajectory' | 'keldysh_rutherford',
  target: string,
  nm: number,
  eps: number,
  i: number,
) => modelCurve({ model, target, wavelengthNm: nm, ellipticity: eps, intensitiesWcm2: [i] }).points[0]!;

describe('single Coulomb-corrected trajectory (SCIENCE.md §10.5, triangular exit)', () => {
  it.each([
    ['He', 800, 2e14, 0.87, 5.523, 0.972],
    ['He', 800, 4e14, 0.87, 5.286, 0.988],
    ['He', 1300, 4e14, 0.87, 3.157, 0.997],
    ['He', 800, 4e14, 1.0, 4.526, 0.988],
    ['Ar', 800, 1e14, 0.87, 11.589, 0.931],
  ] as const)('%s, %d nm, %d W/cm², ε = %d: θ_off = %d°, p/p_SM = %d', (target, nm, i, eps, off, ratio) => {
    const traj = at('trajectory', target, nm, eps, i);
    const sm = at('simple_man', target, nm, eps, i);
    expect(traj.offsetDeg!).toBeCloseTo(off, 2);
    expect(traj.radiusAu! / sm.radiusAu!).toBeCloseTo(ratio, 2);
  });
});

describe('Keldysh–Rutherford Θ (SCIENCE.md §10.5 table, §10.6)', () => {
  it.each([
    ['He', 800, 2e14, 0.87, 7.213],
    ['He', 800, 8e14, 0.87, 3.61],
    ['Ar', 1300, 1e14, 0.87, 6.03],
  ] as const)('%s, %d nm, %d W/cm², ε = %d: Θ = %d°', (target, nm, i, eps, theta) => {
    expect(at('keldysh_rutherford', target, nm, eps, i).offsetDeg!).toBeCloseTo(theta, 2);
  });
});

describe('simple-man and the curve around it', () => {
  it('offset 0 and |p_SM| = 1.230 36 a.u. at 4×10¹⁴ W/cm², 800 nm, ε = 0.87 (SCIENCE.md §4.3)', () => {
    const p = at('simple_man', 'He', 800, 0.87, 4e14);
    expect(p.offsetDeg).toBe(0);
    expect(p.radiusAu!).toBeCloseTo(1.23036, 5);
  });
  it('a target without a bound state gets a sentence, not numbers', () => {
    const c = modelCurve({
      model: 'trajectory',
      target: 'N2',
      wavelengthNm: 800,
      ellipticity: 0.9,
      intensitiesWcm2: [1e14],
    });
    expect(c.points[0]!.offsetDeg).toBeNull();
    expect(c.note).toMatch(/N2/);
  });
  it('every model says its assumptions in one line', () => {
    for (const t of Object.values(MODEL_TEXT)) {
      expect(t.assumptions).not.toMatch(/\n/);
      expect(t.assumptions.length).toBeGreaterThan(40);
    }
  });
  it('log-spaced intensities span the range, ends included', () => {
    const v = logSpaced(1e14, 1e15, 3);
    expect(v[0]).toBeCloseTo(1e14, -8);
    expect(v[1]! / 3.16228e14).toBeCloseTo(1, 5);
    expect(v[2]).toBeCloseTo(1e15, -9);
  });
});
