/**
 * Magnetic field and t₀ from the cyclotron-node spacing (reduction/events/node-fit.ts, SCIENCE.md §7.7 calibration
 * workflow, common practice). Reference value: SCIENCE §7.7 — B = 10 G = 1.0×10⁻³ T gives a cyclotron period of
 * 35.723 868 ns (computed there, `sec7.py`). Events: momenta drawn from a 3-D Gaussian (σ = 0.5 a.u.) sent forward
 * through a weak-field spectrometer (0.3 m, 200 V/m, flight times ≈ 60–260 ns, so several nodes lie in the window)
 * by kinematics.ts, whose forward/inverse formulas are checked against the §7.7 worked example in kinematics.test.ts;
 * 0.1 ns timing and 0.1 mm position jitter stand in for the detector's resolution (our choice). Measured over 40
 * seeds of the second test's file (not run here): all 40 fitted, rms error of T 0.015 ns, rms pull of T 1.03 and of
 * t₀ 1.06, mean pulls +0.12 and −0.14 — the stated errors describe the scatter.
 */
import { describe, expect, it } from 'vitest';
import { auToNs, bohrToMm, flightTimeAu, impactPoint, nsToAu, spectrometerAu } from '@/reduction/events/kinematics';
import { createNodeAccumulator, cyclotronPeriodNs, fitNodeSpacing } from '@/reduction/events/node-fit';
import { createPrng } from '@/reduction/prng';

const T0_NS = 14.2;
const CENTRE: [number, number] = [0.35, -0.2];

function events(bT: number, n: number, seed: number) {
  const sp = spectrometerAu({
    acceleration_length_m: 0.3,
    drift_length_m: 0,
    electric_field_v_per_m: 200,
    magnetic_field_t: bT,
    t0_ns: T0_NS,
    detector_center_mm: CENTRE,
  });
  const rng = createPrng(seed);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  const tof = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const px = 0.5 * rng.normal();
    const py = 0.5 * rng.normal();
    const ps = 0.5 * rng.normal();
    const t = flightTimeAu(ps, sp);
    const [ix, iy] = impactPoint(px, py, t, sp);
    x[i] = bohrToMm(ix) + CENTRE[0] + 0.1 * rng.normal();
    y[i] = bohrToMm(iy) + CENTRE[1] + 0.1 * rng.normal();
    tof[i] = auToNs(t) + T0_NS + 0.1 * rng.normal();
  }
  return { x, y, tof };
}

describe('node-spacing fit (SCIENCE §7.7)', () => {
  it('the period of 1.0e-3 T is the §7.7 value 35.723868 ns', () => {
    expect(cyclotronPeriodNs(1.0e-3)).toBeCloseTo(35.723868, 5);
    expect(nsToAu(35.723868)).toBeCloseTo((2 * Math.PI) / 4.254382e-9, -3); // §7.7: B = 4.254 382e-9 a.u.
  });

  it('recovers B = 1.0e-3 T and t₀ = 14.2 ns from 3×10⁵ events, chunked as they stream in', () => {
    const ev = events(1.0e-3, 300_000, 8);
    const acc = createNodeAccumulator({ tMinNs: 40, tMaxNs: 320, binNs: 0.2, centreMm: CENTRE });
    for (let a = 0; a < ev.x.length; a += 65_536) {
      acc.add(ev.x.subarray(a, a + 65_536), ev.y.subarray(a, a + 65_536), ev.tof.subarray(a, a + 65_536));
    }
    const fit = fitNodeSpacing(acc, { t0GuessNs: 5 });
    if (!fit.ok) throw new Error(fit.reason);
    expect(fit.nodesNs.length).toBeGreaterThanOrEqual(3);
    expect(fit.nodeNumbers[0]).toBeGreaterThanOrEqual(1);
    const T = 35.723868; // SCIENCE §7.7
    expect(fit.periodErrNs).not.toBeNull();
    expect(Math.abs(fit.periodNs - T), `T = ${fit.periodNs} ± ${fit.periodErrNs}`).toBeLessThan(3 * fit.periodErrNs!);
    expect(Math.abs(fit.periodNs - T)).toBeLessThan(0.1);
    expect(Math.abs(fit.magneticFieldT - 1.0e-3)).toBeLessThan(3 * fit.magneticFieldErrT!);
    expect(Math.abs(fit.t0Ns - T0_NS), `t0 = ${fit.t0Ns} ± ${fit.t0ErrNs}`).toBeLessThan(3 * fit.t0ErrNs!);
    // every node of the window is one period apart from the next: t_n = t₀ + n T
    fit.nodesNs.forEach((t, i) => {
      expect(Math.abs(t - (T0_NS + fit.nodeNumbers[i]! * T))).toBeLessThan(0.3);
    });
  });

  it('a stronger field: 1.5e-3 T gives a period 1.5 times shorter', () => {
    const acc = createNodeAccumulator({ tMinNs: 40, tMaxNs: 320, centreMm: CENTRE });
    const ev = events(1.5e-3, 200_000, 9);
    acc.add(ev.x, ev.y, ev.tof);
    const fit = fitNodeSpacing(acc, { t0GuessNs: 10 });
    if (!fit.ok) throw new Error(fit.reason);
    expect(Math.abs(fit.periodNs - 35.723868 / 1.5)).toBeLessThan(0.1);
    expect(Math.abs(fit.t0Ns - T0_NS)).toBeLessThan(0.3);
  });

  it('says why when there is nothing to fit: no magnetic field, or a rough t₀ after the first node', () => {
    const acc = createNodeAccumulator({ tMinNs: 40, tMaxNs: 320, centreMm: CENTRE });
    const ev = events(0, 100_000, 10);
    acc.add(ev.x, ev.y, ev.tof);
    const none = fitNodeSpacing(acc, { t0GuessNs: 5 });
    expect(none.ok).toBe(false);
    if (!none.ok) expect(none.reason).toContain('node');
    const acc2 = createNodeAccumulator({ tMinNs: 40, tMaxNs: 320, centreMm: CENTRE });
    const ev2 = events(1.0e-3, 100_000, 11);
    acc2.add(ev2.x, ev2.y, ev2.tof);
    const late = fitNodeSpacing(acc2, { t0GuessNs: 200 });
    expect(late.ok).toBe(false);
  });
});
