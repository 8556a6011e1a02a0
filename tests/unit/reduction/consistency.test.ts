/**
 * Calibration consistency (reduction/consistency.ts) through the reducer, on images of the forward model
 * (reduction/synth: planScan + renderSignal, Poisson noise). The field symmetries the checks rely on are common
 * practice of the trade: an elliptically polarized multi-cycle pulse gives an inversion-symmetric momentum
 * distribution (E(t + T/2) = −E(t)); counter-rotating ω–2ω fields give a three-fold one. A detector centre off by
 * δ turns the two opposite attoclock lobes by about ±δ/R (geometry of the shift, worked out by hand) — the
 * situation of a file that gave +7.4° and −8.7° lobe offsets where the truth was 6°.
 */
import { describe, expect, it } from 'vitest';
import { angularHarmonic, calibrationConsistencyWarnings } from '@/reduction/consistency';
import { analysisSettingsSchema, type DetectorCalibration } from '@/reduction/formats';
import { reduceImage } from '@/reduction/pipeline';
import { createPrng } from '@/reduction/prng';
import { planScan, renderSignal, type SynthOptions } from '@/reduction/synth/model';
import { makeMeta } from './helpers/synth';

const settings = analysisSettingsSchema.parse({ fit_half_width_deg: 45, bootstrap: { resamples: 60, seed: 77 } });
const CHECK_WORDS = /offset angles of the lobes differ|lobe radii differ|not symmetric under inversion|three-fold/;

function reduceSynth(o: Partial<SynthOptions>, shiftPx: [number, number], stretch = 1) {
  const plan = planScan({ size: 160, steps: 1, counts: 3e5, ...o });
  const frame = renderSignal(plan, 0, new Float64Array(plan.options.size ** 2));
  const rng = createPrng(plan.options.seed);
  const counts = frame.map((v) => rng.poisson(v));
  const cal: DetectorCalibration = {
    ...plan.calibration,
    center_px: [plan.calibration.center_px[0] + shiftPx[0], plan.calibration.center_px[1] + shiftPx[1]],
    detector_ellipticity: { ratio: plan.calibration.detector_ellipticity.ratio * stretch, axis_deg: 20 },
  };
  const t = plan.steps[0]!;
  const meta = makeMeta({
    nX: plan.options.size,
    nY: plan.options.size,
    experimentKind: plan.options.kind,
    helicity: plan.options.helicity,
    fieldRatio: plan.options.kind === 'bicircular' ? plan.options.fieldRatio : null,
    relativePhaseRad: plan.options.relativePhaseRad,
    step: { quantity: 'intensity', units: 'W/cm^2', values: [t.value] },
  });
  return reduceImage({ meta, calibration: cal, settings, counts });
}

describe('a shifted detector centre does not reduce silently', () => {
  it('angular streaking, centre 4 pixels off across the lobes: offsets and inversion symmetry warn, naming the centre', () => {
    const { result, step } = reduceSynth({ kind: 'angular_streaking', seed: 3 }, [4, 0]);
    const [a, b] = step.lobes.map((l) => l.offset_deg!);
    // the two offsets really split apart around the true 6° (this is the defect the warning is about)
    expect(Math.abs(a! - b!)).toBeGreaterThan(3);
    const hits = result.warnings.filter((w) => CHECK_WORDS.test(w));
    expect(hits.length, result.warnings.join('\n')).toBeGreaterThanOrEqual(2);
    for (const w of hits) expect(w).toMatch(/detector centre/);
    expect(hits.some((w) => /offset angles of the lobes differ/.test(w))).toBe(true);
    // no internal parameter names in the sentences
    for (const w of hits) expect(w).not.toMatch(/center_px|detector_ellipticity|_deg|_au\b/);
  });

  it('angular streaking, centre 4 pixels off along the lobes: the radii differ and the centre is named', () => {
    // the synth lobes lie near ±90° (major axis 0°, h = +1, 6° offset): a shift along y moves one lobe inward
    const { result } = reduceSynth({ kind: 'angular_streaking', seed: 4 }, [0, 4]);
    const w = result.warnings.find((x) => /lobe radii differ/.test(x));
    expect(w, result.warnings.join('\n')).toBeDefined();
    expect(w).toMatch(/detector centre/);
  });

  it('bicircular, image stretched by 6 % along one axis: a warning names the detector ellipticity', () => {
    const { result } = reduceSynth({ kind: 'bicircular', seed: 5, offsetDeg: 4 }, [0, 0], 1.06);
    const hits = result.warnings.filter((x) => CHECK_WORDS.test(x));
    expect(hits.length, result.warnings.join('\n')).toBeGreaterThan(0);
    for (const w of hits) expect(w).toMatch(/detector ellipticity/);
  });

  it('bicircular, centre 1 pixel off (a tenth of the small bicircular ring): a warning names the centre', () => {
    const { result } = reduceSynth({ kind: 'bicircular', seed: 6, offsetDeg: 4 }, [1, -0.5]);
    const hits = result.warnings.filter((x) => CHECK_WORDS.test(x));
    expect(
      hits.some((w) => /centre/.test(w)),
      result.warnings.join('\n'),
    ).toBe(true);
  });

  it('no false alarm with the right calibration (several seeds, both kinds)', () => {
    for (const seed of [11, 12, 13, 14]) {
      for (const kind of ['angular_streaking', 'bicircular'] as const) {
        const { result } = reduceSynth({ kind, seed, offsetDeg: 5 }, [0, 0]);
        const hits = result.warnings.filter((w) => CHECK_WORDS.test(w));
        expect(hits, `${kind} seed ${seed}: ${hits.join(' | ')}`).toEqual([]);
      }
    }
  });
});

describe('the checks themselves', () => {
  it('harmonics of a pure cos(2θ) modulation: c₂ = a/2, c₁ = 0 (Fourier series, by hand)', () => {
    const M = 360;
    const theta = Float64Array.from({ length: M }, (_, k) => k + 0.5);
    const y = theta.map((t) => 100 * (1 + 0.4 * Math.cos((2 * t * Math.PI) / 180)));
    expect(angularHarmonic(y, theta, 2)!.magnitude).toBeCloseTo(0.2, 10);
    expect(angularHarmonic(y, theta, 1)!.magnitude).toBeLessThan(1e-12);
  });

  it('offsets that agree within errors give nothing; the same difference with small errors warns', () => {
    const theta = Float64Array.from({ length: 360 }, (_, k) => k + 0.5);
    const flat = new Float64Array(360).fill(1000);
    const lobe = (o: number, e: number) => ({ angle_deg: o, offset_deg: o, offset_err_deg: e, radius_au: 1 });
    const base = { kind: 'angular_streaking' as const, radiusErrAu: 0.001, angular: flat, thetaDeg: theta };
    expect(calibrationConsistencyWarnings({ ...base, lobes: [lobe(6, 1), lobe(8, 1)] })).toEqual([]);
    const w = calibrationConsistencyWarnings({ ...base, lobes: [lobe(7.4, 0.1), lobe(-8.7, 0.1)] });
    expect(w.map((x) => x.check)).toEqual(['offsets']);
    expect(w[0]!.detailed).toContain('7.4°');
    // other kinds have no expected symmetry
    expect(calibrationConsistencyWarnings({ ...base, kind: 'image', lobes: [lobe(7.4, 0.1)] })).toEqual([]);
  });
});
