import { describe, expect, it } from 'vitest';
import { wrapDeg } from '@/reduction/angles';
import { poissonResampleKernel, replicateStd } from '@/reduction/bootstrap';
import { analysisSettingsSchema } from '@/reduction/formats';
import { createScanReducer } from '@/reduction/pipeline';
import { createPrng } from '@/reduction/prng';
import { expectedImage, makeCalibration, makeMeta, poissonImage } from './helpers/synth';

describe('Poisson bootstrap honesty [paper: Efron 1979; SCIENCE.md §9.2]', () => {
  it('scatter of the fitted angles and radii over independent Poisson images matches the mean bootstrap error within ×1.3', () => {
    // one known image (invented truth), K independent Poisson realisations, each reduced with its own bootstrap
    // pixels (0.016 a.u.) smaller than the rings (0.02 a.u.), as on a real detector: bins nearly independent
    const K = 80;
    const n = 160;
    const cal = makeCalibration({
      center_px: [80.2, 79.1],
      momentum_per_pixel_au: 0.016,
      rotation_deg: 5,
      detector_ellipticity: { ratio: 1.03, axis_deg: 10 },
    });
    const exp = expectedImage({
      nX: n,
      nY: n,
      calibration: cal,
      radiusAu: 1.0,
      radialSigmaAu: 0.13,
      lobes: [
        { angleDeg: -83, sigmaDeg: 25, weight: 1 },
        { angleDeg: 97, sigmaDeg: 25, weight: 1 },
      ],
      signalCounts: 3e4,
      backgroundPerPixel: 0.05,
    });
    const settings = analysisSettingsSchema.parse({
      radial_bins: 100,
      fit_half_width_deg: 45,
      bootstrap: { resamples: 100, seed: 77 },
    });
    const meta = makeMeta({ nX: n, nY: n, nStep: K });
    const red = createScanReducer({ meta, calibration: cal, settings });
    const rng = createPrng(2026);
    const angles: number[][] = [[], []];
    const errs: number[][] = [[], []];
    const radii: number[] = [];
    const rErr: number[] = [];
    for (let k = 0; k < K; k++) {
      const st = red.addStep(k, poissonImage(exp, rng), null);
      st.lobes.forEach((l, i) => {
        angles[i]!.push(l.angle_deg);
        errs[i]!.push(l.angle_err_deg!);
      });
      radii.push(st.radius_au!);
      rErr.push(st.radius_err_au!);
    }
    const sd = (v: number[], ref: number, circ: boolean) => {
      const d = v.map((x) => (circ ? wrapDeg(x - ref) : x - ref));
      const m = d.reduce((a, b) => a + b, 0) / d.length;
      return Math.sqrt(d.reduce((a, b) => a + (b - m) ** 2, 0) / (d.length - 1));
    };
    const mean = (v: number[]) => v.reduce((a, b) => a + b, 0) / v.length;
    const ratios: number[] = [];
    for (const i of [0, 1]) ratios.push(sd(angles[i]!, i === 0 ? -83 : 97, true) / mean(errs[i]!));
    ratios.push(sd(radii, 1, false) / mean(rErr));
    for (const r of ratios) {
      expect(r, `scatter / mean bootstrap error = ${ratios.map((x) => x.toFixed(3)).join(', ')}`).toBeGreaterThan(
        1 / 1.3,
      );
      expect(r).toBeLessThan(1.3);
    }
  });
});

describe('bootstrap kernels', () => {
  it('resamples sign-symmetrically, keeps zeros and NaN, honours strides', () => {
    const rng = createPrng(1);
    //                      idx: 0   1    2   3
    const src = Float64Array.of(0, 50, Number.NaN, -50);
    const dst = new Float64Array(4);
    poissonResampleKernel(4, src, 1, 0, dst, 1, 0, rng);
    expect(dst[0]).toBe(0);
    expect(dst[1]! > 0 && Number.isInteger(dst[1])).toBe(true);
    expect(Number.isNaN(dst[2])).toBe(true);
    expect(dst[3]! < 0).toBe(true);
    const d2 = new Float64Array(2).fill(-1);
    poissonResampleKernel(1, src, 2, 1, d2, 1, 1, rng);
    expect(d2[0]).toBe(-1);
  });
  it('replicate spread on the circle ignores the ±180° seam and failed (NaN) replicates', () => {
    //                            179, −179, 178, NaN → offsets −1, +1, −2 from 180
    const v = Float64Array.of(179, -179, 178, Number.NaN);
    const r = replicateStd(v, 4, 1, 0, 180, 360);
    expect(r.used).toBe(3);
    expect(r.std).toBeCloseTo(Math.sqrt(((-1 + 2 / 3) ** 2 + (1 + 2 / 3) ** 2 + (-2 + 2 / 3) ** 2) / 2), 12);
  });
});
