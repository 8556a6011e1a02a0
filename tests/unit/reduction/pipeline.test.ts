import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { wrapDeg } from '@/reduction/angles';
import { intensityFromRadiusWcm2, simpleManDirectionsDeg } from '@/reduction/fields';
import { analysisSettingsSchema, type DetectorCalibration } from '@/reduction/formats';
import { createScanReducer, defaultCalibrationFor, reduceImage } from '@/reduction/pipeline';
import { createPrng } from '@/reduction/prng';
import { expectedImage, type ImageTruth, makeCalibration, makeMeta, poissonImage } from './helpers/synth';

// Invented truth for the tests (Harbor Point test scenario): He-like attoclock lobes 6° past the simple-man
// directions of h = +1 (−90°, 90°), ring radius 1.0 a.u.
const N = 192;
const distorted = makeCalibration({
  center_px: [97.3, 93.8],
  momentum_per_pixel_au: 0.02,
  rotation_deg: 12,
  detector_ellipticity: { ratio: 1.05, axis_deg: 30 },
});
const truth = (cal: DetectorCalibration, over: Partial<ImageTruth> = {}): ImageTruth => ({
  nX: N,
  nY: N,
  calibration: cal,
  radiusAu: 1.0,
  radialSigmaAu: 0.12,
  lobes: [
    { angleDeg: -84, sigmaDeg: 22, weight: 1 },
    { angleDeg: 96, sigmaDeg: 22, weight: 0.8 },
  ],
  signalCounts: 4e5,
  backgroundPerPixel: 0,
  ...over,
});
const settings = analysisSettingsSchema.parse({ fit_half_width_deg: 45, bootstrap: { resamples: 100, seed: 4242 } });

describe('recovery of a known truth from distorted raw detector images', () => {
  it('angles, offsets, radius and intensity from radius within their stated errors (with background)', () => {
    const shots = 1e4;
    const bgShots = 5e3;
    const bgRate = 0.4 / shots; // expected background counts per pixel per shot
    const exp = expectedImage(truth(distorted));
    const rng = createPrng(11);
    const counts = exp.map((v) => rng.poisson(v + bgRate * shots));
    const background = new Float64Array(N * N).map(() => rng.poisson(bgRate * bgShots));
    const meta = makeMeta({ nX: N, nY: N, shots: [shots], background: { layout: 'single', shots: [bgShots] } });
    const { step, result } = reduceImage({ meta, calibration: distorted, settings, counts, background });
    expect(step.lobes).toHaveLength(2);
    const [l1, l2] = step.lobes as [(typeof step.lobes)[0], (typeof step.lobes)[0]];
    for (const [l, t] of [
      [l1, -84],
      [l2, 96],
    ] as const) {
      expect(l.angle_err_deg).toBeGreaterThan(0);
      expect(Math.abs(wrapDeg(l.angle_deg - t)), `angle ${l.angle_deg} ± ${l.angle_err_deg}`).toBeLessThan(
        3 * l.angle_err_deg!,
      );
      expect(Math.abs(l.offset_deg! - 6)).toBeLessThan(3 * l.offset_err_deg!);
      expect(l.expected_deg).toBe(t === -84 ? -90 : 90);
      expect(Math.abs(l.radius_au! - 1)).toBeLessThan(0.01);
      expect(l.transverse_shift_au).toBeCloseTo(l.radius_au! * Math.sin((l.offset_deg! * Math.PI) / 180), 12);
      expect(Math.abs(l.width_deg! - 22)).toBeLessThan(2);
    }
    expect(Math.abs(step.radius_au! - 1)).toBeLessThan(3 * step.radius_err_au! + 0.002);
    const iTrue = intensityFromRadiusWcm2({
      kind: 'angular_streaking',
      radiusAu: 1,
      wavelengthNm: 800,
      ellipticity: 0.87,
      fieldRatio: null,
    })!;
    expect(Math.abs(step.intensity_from_radius_Wcm2! - iTrue)).toBeLessThan(
      3 * step.intensity_from_radius_err_Wcm2! + 0.004 * iTrue,
    );
    expect(step.intensity_from_radius_err_Wcm2! / step.intensity_from_radius_Wcm2!).toBeCloseTo(
      (2 * step.radius_err_au!) / step.radius_au!,
      12,
    );
    expect(Math.abs(step.offset_deg! - 6)).toBeLessThan(3 * step.offset_err_deg!);
    // background subtracted: the total is the signal (4e5) within Poisson noise of signal + 2× background
    expect(Math.abs(step.total_counts - 4e5)).toBeLessThan(5 * Math.sqrt(4e5 + 3 * 0.4 * N * N));
    expect(result.format).toBe('lobeline.result');
    expect(result.steps[0]).toBe(step);
  });

  it('property: rotating the calibration by δ rotates every lobe angle by δ', () => {
    const exp = expectedImage(truth(distorted));
    const s0 = analysisSettingsSchema.parse({ bootstrap: { resamples: 0, seed: 1 }, fit_half_width_deg: 45 });
    const base = reduceImage({
      meta: makeMeta({ nX: N, nY: N }),
      calibration: distorted,
      settings: s0,
      counts: exp,
    }).step;
    fc.assert(
      fc.property(fc.double({ min: -170, max: 170, noNaN: true }), (delta) => {
        const cal = { ...distorted, rotation_deg: distorted.rotation_deg + delta };
        const st = reduceImage({ meta: makeMeta({ nX: N, nY: N }), calibration: cal, settings: s0, counts: exp }).step;
        // the lobes are seeded at ±90°, so a rotation can reorder them; compare as sets
        const a = base.lobes.map((l) => l.angle_deg + delta);
        return st.lobes.every((l) => a.some((x) => Math.abs(wrapDeg(l.angle_deg - x)) < 0.05));
      }),
      { numRuns: 6 },
    );
  });

  it('property: mirror + helicity flip keeps the offset sign (SCIENCE.md §4.4, C2)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 2, max: 15, noNaN: true }),
        fc.double({ min: -60, max: 60, noNaN: true }),
        (off, rot) => {
          // raw image of a lab truth with h = +1 and lobes `off` past the simple-man directions −90°, 90°
          const cal = makeCalibration({ center_px: [96.2, 95.1], momentum_per_pixel_au: 0.02, rotation_deg: rot });
          const exp = expectedImage(
            truth(cal, {
              lobes: [
                { angleDeg: -90 + off, sigmaDeg: 22, weight: 1 },
                { angleDeg: 90 + off, sigmaDeg: 22, weight: 1 },
              ],
            }),
          );
          const s0 = analysisSettingsSchema.parse({ bootstrap: { resamples: 0, seed: 1 }, fit_half_width_deg: 45 });
          const read = (mirror: boolean, helicity: 1 | -1, majorAxisAngleDeg: number) =>
            reduceImage({
              meta: makeMeta({ nX: N, nY: N, helicity, majorAxisAngleDeg }),
              calibration: { ...cal, mirror },
              settings: s0,
              counts: exp,
            }).step;
          const a = read(false, 1, 0);
          // mirrored reading: the frame is reflected about the axis at 90° + rot, which sends the major axis 0° to 2·rot
          // and flips the helicity; with both flipped the offsets keep sign and size
          const b = read(true, -1, 2 * rot);
          // mirrored but helicity not flipped: the red flag of §4.4, offsets turn negative
          const c = read(true, 1, 2 * rot);
          return (
            a.lobes.every((l) => Math.abs(l.offset_deg! - off) < 0.05) &&
            b.lobes.every((l, i) => Math.abs(l.offset_deg! - a.lobes[i]!.offset_deg!) < 0.05) &&
            c.lobes.every((l) => Math.abs(l.offset_deg! + off) < 0.05)
          );
        },
      ),
      { numRuns: 4 },
    );
  });
});

describe('bicircular three-lobe recovery', () => {
  it('offsets of the three lobes against φ_SM,k at φ = 1 rad (SCIENCE.md §5.4 directions)', () => {
    const sm = simpleManDirectionsDeg({
      kind: 'bicircular',
      majorAxisDeg: 0,
      helicity: 1,
      fieldRatio: 1,
      relativePhaseRad: 1,
    });
    const cal = makeCalibration({ center_px: [95.5, 96.5], momentum_per_pixel_au: 0.012, rotation_deg: -7 });
    const t = truth(cal, {
      radiusAu: 0.6,
      radialSigmaAu: 0.08,
      lobes: sm.map((d) => ({ angleDeg: d + 4, sigmaDeg: 15, weight: 1 })),
    });
    const counts = poissonImage(expectedImage(t), createPrng(5));
    const meta = makeMeta({
      nX: N,
      nY: N,
      experimentKind: 'bicircular',
      ellipticity: null,
      fieldRatio: 1,
      relativePhaseRad: 1,
    });
    const s = analysisSettingsSchema.parse({ bootstrap: { resamples: 60, seed: 3 }, fit_half_width_deg: 30 });
    const { step } = reduceImage({ meta, calibration: cal, settings: s, counts });
    expect(step.lobes).toHaveLength(3);
    step.lobes.forEach((l, k) => {
      expect(l.expected_deg).toBeCloseTo(sm[k]!, 10);
      expect(Math.abs(l.offset_deg! - 4)).toBeLessThan(3 * l.offset_err_deg!);
    });
    expect(Math.abs(step.radius_au! - 0.6)).toBeLessThan(0.01);
    const iTrue = intensityFromRadiusWcm2({
      kind: 'bicircular',
      radiusAu: 0.6,
      wavelengthNm: 800,
      ellipticity: null,
      fieldRatio: 1,
    })!;
    expect(Math.abs(step.intensity_from_radius_Wcm2! / iTrue - 1)).toBeLessThan(0.03);
  });
});

describe('two-colour phase scan through the reducer', () => {
  it('region curves and maps give the phase of maximum yield of each side (streamed step by step)', () => {
    const nStep = 8;
    const phases = Array.from({ length: nStep }, (_, j) => (2 * Math.PI * j) / nStep);
    const cal = makeCalibration({ center_px: [63.5, 63.5], momentum_per_pixel_au: 0.025 });
    const meta = makeMeta({
      nX: 128,
      nY: 128,
      nStep,
      experimentKind: 'two_color_phase',
      ellipticity: null,
      helicity: null,
      fieldRatio: 0.1,
      step: { quantity: 'relative_phase', units: 'rad', values: phases },
    });
    const s = analysisSettingsSchema.parse({ grid: { p_max_au: 2, n: 101 }, bootstrap: { resamples: 20, seed: 1 } });
    const arrays: number[] = [];
    const red = createScanReducer({
      meta,
      calibration: cal,
      settings: s,
      onStepArrays: (i, a) => arrays.push(i, a.calibrated.length),
    });
    const rng = createPrng(8);
    for (let j = nStep - 1; j >= 0; j--) {
      const phi = phases[j]!;
      const t: ImageTruth = {
        ...truth(cal),
        nX: 128,
        nY: 128,
        radiusAu: 0.8,
        lobes: [
          { angleDeg: 0, sigmaDeg: 30, weight: 1 + 0.3 * Math.cos(phi - 1) },
          { angleDeg: 180, sigmaDeg: 30, weight: 1 + 0.3 * Math.cos(phi - 1 - Math.PI) },
        ],
        signalCounts: 2e5,
      };
      // total changes with the weights: scale to the sum of the weights
      t.signalCounts = 1e5 * (t.lobes[0]!.weight + t.lobes[1]!.weight);
      red.addStep(j, poissonImage(expectedImage(t), rng), null);
    }
    const { result, phaseMaps } = red.finish();
    expect(result.phase!.method).toBe('fourier');
    expect(result.phase!.n_phases).toBe(8);
    expect(result.phase!.periods).toBe(1);
    const pos = result.phase!.regions.find((r) => r.name === 'px_positive')!;
    const neg = result.phase!.regions.find((r) => r.name === 'px_negative')!;
    expect(Math.abs(wrapDeg(pos.phase_of_max_rad - 1, 2 * Math.PI))).toBeLessThan(0.02);
    expect(Math.abs(wrapDeg(neg.phase_of_max_rad - 1 - Math.PI, 2 * Math.PI))).toBeLessThan(0.02);
    expect(pos.contrast).toBeGreaterThan(0.28);
    expect(pos.contrast).toBeLessThan(0.32);
    expect(pos.yield).toHaveLength(8);
    expect(phaseMaps!.mean.length).toBe(101 * 101);
    expect(phaseMaps!.harmonic_2_amplitude).toBeDefined();
    // the map at the centre of the +px lobe (px = 0.8, py = 0) gives φ0 ≈ 1; far corners are masked
    const ix = Math.round((0.8 + 2) / 0.04);
    const iy = 50;
    expect(Math.abs(wrapDeg(phaseMaps!.phase_of_max[iy * 101 + ix]! - 1, 2 * Math.PI))).toBeLessThan(0.15);
    expect(Number.isNaN(phaseMaps!.phase_of_max[0]!)).toBe(true);
    expect(arrays.length).toBe(16);
    expect(result.steps.map((st) => st.index)).toEqual([0, 1, 2, 3, 4, 5, 6, 7]);
    // FORMATS §4: a two-colour phase scan has no lobes (no lobe fit, simple-man direction or offset)
    expect(result.steps[0]!.lobes).toEqual([]);
    expect(result.steps[0]!.offset_deg).toBeNull();
    expect(result.steps[0]!.intensity_from_radius_Wcm2).toBeNull();
  });
});

describe('inputs, warnings and errors', () => {
  const small = 64;
  const cal = makeCalibration({ center_px: [31.5, 31.5], momentum_per_pixel_au: 0.05 });
  const exp = expectedImage({ ...truth(cal), nX: small, nY: small, signalCounts: 500 });
  const s0 = analysisSettingsSchema.parse({ bootstrap: { resamples: 0, seed: 1 } });
  it('no helicity: offsets left empty with a warning; low counts warned', () => {
    const { step, result } = reduceImage({
      meta: makeMeta({ nX: small, nY: small, helicity: null }),
      calibration: cal,
      settings: s0,
      counts: exp,
    });
    expect(step.lobes.every((l) => l.offset_deg === null && l.expected_deg !== null)).toBe(true);
    expect(step.offset_deg).toBeNull();
    expect(step.lobes[0]!.angle_err_deg).toBeNull();
    expect(result.warnings.some((w) => /no helicity/.test(w))).toBe(true);
    expect(result.warnings.some((w) => /^Low counts/.test(w) && /\(step 0\)\.$/.test(w))).toBe(true);
  });
  it('bad input gets a clear error naming the value', () => {
    const red = createScanReducer({ meta: makeMeta({ nX: small, nY: small }), calibration: cal, settings: s0 });
    expect(() => red.addStep(0, new Float64Array(10), null)).toThrow(/4096 values, got 10/);
    const bad = Float64Array.from(exp);
    bad[65] = Number.NaN;
    expect(() => red.addStep(0, bad, null)).toThrow(/x=1, y=1\) is NaN/);
    expect(() => red.addStep(3, exp, null)).toThrow(/index/);
    red.addStep(0, exp, null);
    expect(() => red.addStep(0, exp, null)).toThrow(/already/);
    expect(() =>
      createScanReducer({
        meta: makeMeta({ nX: small, nY: small }),
        calibration: cal,
        settings: { ...s0, angular_bins: 3 },
      }),
    ).toThrow(/settings\.angular_bins/);
    expect(() =>
      createScanReducer({ meta: makeMeta({ nX: 9000, nY: small }), calibration: cal, settings: s0 }),
    ).toThrow(/nX/);
  });
  it('defaultCalibrationFor: image centre and nominal scale, or a clear error', () => {
    expect(() => defaultCalibrationFor(makeMeta({ nX: 10, nY: 20 }))).toThrow(/momentum_per_pixel/);
    const c = defaultCalibrationFor(makeMeta({ nX: 10, nY: 20, nominalMomentumPerPixelAu: 0.004 }));
    expect(c.center_px).toEqual([4.5, 9.5]);
    expect(c.momentum_per_pixel_au).toBe(0.004);
    expect(c.rotation_deg).toBe(0);
  });
  it('axes: grid centres, angular and radial bin centres', () => {
    const red = createScanReducer({ meta: makeMeta({ nX: small, nY: small }), calibration: cal, settings: s0 });
    expect(red.axes.pxAu.length).toBe(401);
    expect(red.axes.thetaDeg.length).toBe(360);
    expect(red.axes.pAu.length).toBe(200);
    const { result } = red.finish();
    expect(result.warnings.some((w) => /step 0 missing/.test(w))).toBe(true);
  });
});
