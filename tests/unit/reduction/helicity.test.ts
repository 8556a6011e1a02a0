/**
 * Helicity-difference residual (SCIENCE.md §4.4 "helicity-difference method" [common practice], §9.2 "report
 * systematics separately … helicity-difference residuals"). θ_off = ½[wrap(φ₊ − φ_SM,₊) − wrap(φ₋ − φ_SM,₋)]
 * (§4.4); with offset_deg = s·wrap(φ − φ_SM), s = h for elliptical light (§4.6), that is ½(off₊ + off₋), and the
 * residual ½(off₊ − off₋) is what a detector-frame rotation β leaves: ±β.
 *
 * Known truth: the project's forward model (reduction/synth, as `npm run make-example` writes it) with a true offset
 * of 6° for both helicities, reduced once with the calibration that undoes the generated geometry and once with a
 * calibration whose rotation is wrong by β = 2°. By-hand values are computed in the comments.
 */
import { describe, expect, it } from 'vitest';
import { analysisSettingsSchema, type DetectorCalibration } from '@/reduction/formats';
import { type HelicityStepInput, helicityResidualFor, helicityResiduals } from '@/reduction/helicity';
import { createScanReducer } from '@/reduction/pipeline';
import { createPrng } from '@/reduction/prng';
import { planScan, renderSignal } from '@/reduction/synth/model';
import { makeMeta } from './helpers/synth';

const cond = {
  experimentKind: 'angular_streaking',
  target: 'He',
  wavelengthNm: 800,
  ellipticity: 0.87,
  stepQuantity: 'intensity',
};
const step = (o: Partial<HelicityStepInput>): HelicityStepInput => ({
  scanId: 1,
  stepIndex: 0,
  helicity: 1,
  conditions: cond,
  value: 2e14,
  offsetDeg: 0,
  offsetErrDeg: 0.1,
  ...o,
});

describe('helicityResiduals against a by-hand computation', () => {
  it('one scan per helicity: mean, residual, its σ and the systematic', () => {
    const r = helicityResiduals([
      step({ scanId: 1, helicity: 1, offsetDeg: 8.0, offsetErrDeg: 0.3 }),
      step({ scanId: 2, helicity: -1, offsetDeg: 5.0, offsetErrDeg: 0.4 }),
    ]);
    expect(r).toHaveLength(1);
    const g = r[0]!;
    // ½(8 + 5) = 6.5; ½(8 − 5) = 1.5; ½√(0.09 + 0.16) = ½·0.5 = 0.25
    expect(g.meanOffsetDeg).toBeCloseTo(6.5, 12);
    expect(g.residualDeg).toBeCloseTo(1.5, 12);
    expect(g.systematicDeg).toBeCloseTo(1.5, 12);
    expect(g.statErrDeg).toBeCloseTo(0.25, 12);
  });
  it('two scans of one helicity are combined with inverse-variance weights first', () => {
    const r = helicityResiduals([
      step({ scanId: 1, helicity: 1, offsetDeg: 7.0, offsetErrDeg: 0.2 }),
      step({ scanId: 3, helicity: 1, offsetDeg: 8.0, offsetErrDeg: 0.4, value: 2.01e14 }),
      step({ scanId: 2, helicity: -1, offsetDeg: 6.0, offsetErrDeg: 0.2 }),
    ]);
    expect(r).toHaveLength(1);
    const g = r[0]!;
    // weights 25 and 6.25: (25·7 + 6.25·8)/31.25 = 225/31.25 = 7.2; σ₊ = 1/√31.25 = 0.178885
    expect(g.plus.offsetDeg).toBeCloseTo(7.2, 12);
    expect(g.plus.offsetErrDeg).toBeCloseTo(0.178885438, 8);
    // residual ½(7.2 − 6) = 0.6, mean 6.6, σ = ½√(0.032 + 0.04) = ½·0.268328 = 0.134164
    expect(g.residualDeg).toBeCloseTo(0.6, 12);
    expect(g.meanOffsetDeg).toBeCloseTo(6.6, 12);
    expect(g.statErrDeg).toBeCloseTo(0.134164079, 8);
    expect(helicityResidualFor(r, 3, 0)).toBe(g);
    expect(helicityResidualFor(r, 4, 0)).toBeNull();
  });
  it('pairs only matching conditions and step values, and needs both helicities', () => {
    const r = helicityResiduals([
      step({ scanId: 1, helicity: 1, offsetDeg: 7 }),
      // other intensity (3e14 vs 2e14: beyond 1 %), other target, other wavelength, other ellipticity
      step({ scanId: 2, helicity: -1, offsetDeg: 6, value: 3e14 }),
      step({ scanId: 3, helicity: -1, offsetDeg: 6, conditions: { ...cond, target: 'Ar' } }),
      step({ scanId: 4, helicity: -1, offsetDeg: 6, conditions: { ...cond, wavelengthNm: 1300 } }),
      step({ scanId: 5, helicity: -1, offsetDeg: 6, conditions: { ...cond, ellipticity: 0.6 } }),
      // no helicity, no offset
      step({ scanId: 6, helicity: null, offsetDeg: 6 }),
      step({ scanId: 7, helicity: -1, offsetDeg: null }),
    ]);
    expect(r).toEqual([]);
    // |ε| is compared: a file that writes ε with the helicity's sign still matches
    const signed = helicityResiduals([
      step({ scanId: 1, helicity: 1, offsetDeg: 7 }),
      step({ scanId: 2, helicity: -1, offsetDeg: 6, conditions: { ...cond, ellipticity: -0.87, target: 'he' } }),
    ]);
    expect(signed).toHaveLength(1);
  });
  it('without errors the helicities are averaged plainly and the σ is null', () => {
    const r = helicityResiduals([
      step({ scanId: 1, helicity: 1, offsetDeg: 7, offsetErrDeg: null }),
      step({ scanId: 2, helicity: -1, offsetDeg: 9, offsetErrDeg: 0.2 }),
    ]);
    expect(r[0]?.residualDeg).toBeCloseTo(-1, 12);
    expect(r[0]?.systematicDeg).toBeCloseTo(1, 12);
    expect(r[0]?.statErrDeg).toBeNull();
  });
});

function reduce(helicity: 1 | -1, rotationErrorDeg: number, seed: number) {
  const plan = planScan({ helicity, size: 128, steps: 2, counts: 3e5, seed, offsetDeg: 6, lobeWidthDeg: 20 });
  const n = plan.options.size;
  const meta = makeMeta({
    nX: n,
    nY: n,
    nStep: 2,
    helicity,
    ellipticity: plan.options.ellipticity,
    step: { quantity: 'intensity', units: 'W/cm^2', values: plan.stepValues },
    shots: plan.shots,
  });
  const calibration: DetectorCalibration = {
    ...plan.calibration,
    rotation_deg: plan.calibration.rotation_deg + rotationErrorDeg,
  };
  const settings = analysisSettingsSchema.parse({ bootstrap: { resamples: 40, seed: 5 } });
  const red = createScanReducer({ meta, calibration, settings });
  const rng = createPrng(seed);
  const frame = new Float64Array(n * n);
  for (let k = 0; k < 2; k++) {
    renderSignal(plan, k, frame);
    red.addStep(
      k,
      frame.map((v) => rng.poisson(v)),
      null,
    );
  }
  return red.finish().result;
}

function inputs(results: { scanId: number; helicity: 1 | -1; result: ReturnType<typeof reduce> }[]) {
  return results.flatMap(({ scanId, helicity, result }) =>
    result.steps.map((s) => ({
      scanId,
      stepIndex: s.index,
      helicity,
      conditions: { ...cond, ellipticity: result.input.ellipticity },
      value: s.value,
      offsetDeg: s.offset_deg,
      offsetErrDeg: s.offset_err_deg,
    })),
  );
}

describe('helicity residual on generated scans of both helicities (known truth)', () => {
  it('a 2° frame rotation the calibration misses shows as a 2° residual; the mean keeps the true 6°', () => {
    const beta = 2;
    const plus = reduce(1, beta, 21);
    const minus = reduce(-1, beta, 22);
    const r = helicityResiduals(
      inputs([
        { scanId: 1, helicity: 1, result: plus },
        { scanId: 2, helicity: -1, result: minus },
      ]),
    );
    expect(r).toHaveLength(2); // both steps pair up
    for (const g of r) {
      expect(g.statErrDeg).toBeGreaterThan(0);
      const tol = 4 * (g.statErrDeg as number);
      expect(Math.abs(g.systematicDeg - beta), `residual ${g.residualDeg} ± ${g.statErrDeg}`).toBeLessThan(tol);
      expect(Math.abs(g.meanOffsetDeg - 6), `mean ${g.meanOffsetDeg} ± ${g.statErrDeg}`).toBeLessThan(tol);
      // each helicity alone is off by about β, in opposite directions
      expect(Math.abs(Math.abs(g.plus.offsetDeg - 6) - beta)).toBeLessThan(tol * 2);
      expect(Math.sign(g.plus.offsetDeg - 6)).toBe(-Math.sign(g.minus.offsetDeg - 6));
      // by hand from the two step results
      const sp = plus.steps.find((s) => Math.abs(s.value - (g.value as number)) < 1e-3 * s.value)!;
      const sm = minus.steps.find((s) => Math.abs(s.value - (g.value as number)) < 1e-3 * s.value)!;
      expect(g.residualDeg).toBeCloseTo(0.5 * (sp.offset_deg! - sm.offset_deg!), 12);
      expect(g.statErrDeg!).toBeCloseTo(0.5 * Math.hypot(sp.offset_err_deg!, sm.offset_err_deg!), 12);
    }
  });
  it('with the calibration that undoes the geometry the residual is within the noise', () => {
    const r = helicityResiduals(
      inputs([
        { scanId: 1, helicity: 1, result: reduce(1, 0, 31) },
        { scanId: 2, helicity: -1, result: reduce(-1, 0, 32) },
      ]),
    );
    expect(r).toHaveLength(2);
    for (const g of r) {
      expect(Math.abs(g.residualDeg), `residual ${g.residualDeg} ± ${g.statErrDeg}`).toBeLessThan(
        4 * (g.statErrDeg as number),
      );
      expect(Math.abs(g.meanOffsetDeg - 6)).toBeLessThan(4 * (g.statErrDeg as number));
    }
  });
});
