/**
 * Intensity conventions (SCIENCE.md C5, §1.2): the factors that carry a stated intensity from one convention to
 * another, checked against the field check values of §1.2 (I = 1×10¹⁴ W/cm² → linear F₀ = 0.053 380 27 a.u.,
 * circular |E| = 0.037 745 55 a.u., `sec1_2.py`) and the bicircular worked example of §5.4 (I₁ = I₂ = 1×10¹⁴ W/cm² per
 * colour → F₁ = F₂ = 0.037 745 55 a.u., `sec4_5.py`). The definitions I_au,lin = ½ε₀cF_au², I_au,circ = ε₀cF_au² are
 * those of §1.2 (CODATA 2018).
 */
import { describe, expect, it } from 'vitest';
import { I_AU_CIRC_WCM2, I_AU_LIN_WCM2 } from '@/reduction/constants';
import { ellipticalFieldAmplitudes } from '@/reduction/fields';
import { CONVENTION_NAMES, conventionFactor } from '@/reduction/intensity-conventions';

const elliptical = (ellipticity: number | null) => ({ kind: 'angular_streaking', ellipticity, fieldRatio: null });
const bicircular = (fieldRatio: number | null) => ({ kind: 'bicircular', ellipticity: 1, fieldRatio });

function factor(...args: Parameters<typeof conventionFactor>): number {
  const r = conventionFactor(...args);
  if (!r.ok) throw new Error(r.reason);
  return r.factor;
}

describe('elliptical light (SCIENCE.md §1.2: I = I_au,lin F_a²(1 + ε²))', () => {
  it('2×10¹⁴ W/cm² total, circular, is 1×10¹⁴ linear-equivalent: the field of §1.2’s linear check, 0.053 380 27 a.u.', () => {
    const lin = 2e14 * factor('cycle_averaged_total', 'linear_equivalent', elliptical(1));
    expect(lin).toBeCloseTo(1e14, -2);
    // the linear-equivalent intensity is I_au,lin F_a²: its field is §1.2's check value …
    expect(Math.sqrt(lin / I_AU_LIN_WCM2)).toBeCloseTo(0.05338027, 8);
    // … and the same major-axis amplitude as the total intensity gives through reduction/fields.ts
    expect(ellipticalFieldAmplitudes(2e14, 1).fMajorAu).toBeCloseTo(0.05338027, 8);
  });
  it('1×10¹⁴ W/cm² total, circular: |E| = 0.037 745 55 a.u. (§1.2) from the linear-equivalent 5×10¹³', () => {
    const lin = 1e14 * factor('cycle_averaged_total', 'linear_equivalent', elliptical(1));
    expect(Math.sqrt(lin / I_AU_LIN_WCM2)).toBeCloseTo(0.03774555, 8);
  });
  it('ε = 0.87 (SCIENCE.md §10.5): 4×10¹⁴ total ↔ I_au,lin F_a² with F_a = 0.080 545 a.u.', () => {
    const lin = 4e14 * factor('cycle_averaged_total', 'linear_equivalent', elliptical(0.87));
    expect(Math.sqrt(lin / I_AU_LIN_WCM2)).toBeCloseTo(0.080545, 6);
    expect(factor('linear_equivalent', 'cycle_averaged_total', elliptical(0.87))).toBeCloseTo(1 + 0.87 ** 2, 12);
  });
  it('linear light (ε = 0): the two conventions agree; one colour: per colour is the total', () => {
    expect(factor('cycle_averaged_total', 'linear_equivalent', elliptical(0))).toBe(1);
    expect(factor('per_colour', 'cycle_averaged_total', elliptical(0.5))).toBe(1);
  });
  it('refuses with a reason when the ellipticity is unknown', () => {
    const r = conventionFactor('linear_equivalent', 'cycle_averaged_total', elliptical(null));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.reason).toMatch(/ellipticity is not known/);
  });
});

describe('counter-rotating bicircular ω + 2ω (SCIENCE.md §5.1, §5.4: I = I_au,circ F₁²(1 + r²))', () => {
  it('I₁ = I₂ = 1×10¹⁴ per colour (r = 1) is 2×10¹⁴ total, and F₁ = 0.037 745 55 a.u.', () => {
    expect(1e14 * factor('per_colour', 'cycle_averaged_total', bicircular(1))).toBeCloseTo(2e14, -2);
    const perColour = 2e14 * factor('cycle_averaged_total', 'per_colour', bicircular(1));
    expect(Math.sqrt(perColour / I_AU_CIRC_WCM2)).toBeCloseTo(0.03774555, 8);
  });
  it('linear-equivalent of the ω colour is I_au,lin F₁² = half its circular intensity', () => {
    const f = factor('per_colour', 'linear_equivalent', bicircular(0.5));
    expect(f).toBeCloseTo(0.5, 12);
  });
  it('refuses with a reason when the field ratio is unknown', () => {
    const r = conventionFactor('per_colour', 'cycle_averaged_total', bicircular(null));
    expect(r.ok).toBe(false);
  });
});

describe('every pair of conventions', () => {
  it('round trips to 1 and the same convention is always factor 1, even without a field model', () => {
    for (const a of CONVENTION_NAMES) {
      expect(factor(a, a, { kind: 'two_color_phase', ellipticity: null, fieldRatio: null })).toBe(1);
      for (const b of CONVENTION_NAMES) {
        for (const ctx of [elliptical(0.6), bicircular(0.7)]) {
          expect(factor(a, b, ctx) * factor(b, a, ctx)).toBeCloseTo(1, 14);
        }
      }
    }
  });
  it('a two-colour phase scan cannot be converted (no field model)', () => {
    const r = conventionFactor('per_colour', 'cycle_averaged_total', {
      kind: 'two_color_phase',
      ellipticity: null,
      fieldRatio: 0.1,
    });
    expect(r.ok).toBe(false);
  });
});
