import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { buildPixelMask, calibrationMatrix } from '@/reduction/calibration';
import { analysisSettingsSchema, detectorCalibrationSchema } from '@/reduction/formats';
import { cartesianGrid, polarGrid } from '@/reduction/grids';
import { buildPixelBinMaps, defaultSubsamples, resampleFrame } from '@/reduction/resample';
import { expectClose } from './helpers/close';

interface Fixture {
  ny: number;
  nx: number;
  counts: number[];
  calibration: object;
  subsamples: number;
  settings: object;
  polar: number[];
  cartesian: number[];
  total: number;
  polar_off_grid: number;
  cartesian_off_grid: number;
}
const fx: Fixture = JSON.parse(
  readFileSync(path.join(import.meta.dirname, '../../fixtures/numpy/polar_resample.json'), 'utf8'),
);

describe('flux-conserving resampling against numpy.histogram2d (tests/fixtures/numpy/polar_resample.py)', () => {
  const cal = detectorCalibrationSchema.parse(fx.calibration);
  const settings = analysisSettingsSchema.parse(fx.settings);
  const maps = buildPixelBinMaps({
    nX: fx.nx,
    nY: fx.ny,
    map: calibrationMatrix(cal),
    cartesian: cartesianGrid(settings),
    polar: polarGrid(settings),
    mask: null,
    subsamples: fx.subsamples,
  });
  it('polar histogram [p][θ] matches bin by bin', () => {
    const { bins, offGrid } = resampleFrame(maps.polar, fx.counts);
    expect(bins.length - 1).toBe(fx.polar.length);
    // sums of up to ~10 fractions of integer counts: 1e-12 absolute covers the summation order difference
    fx.polar.forEach((v, i) => {
      expectClose(bins[i]!, v, 1e-12, `polar bin ${i}`);
    });
    expectClose(offGrid, fx.polar_off_grid, 1e-9, 'off grid');
  });
  it('Cartesian image [py][px] matches cell by cell', () => {
    const { bins, offGrid } = resampleFrame(maps.cartesian, fx.counts);
    fx.cartesian.forEach((v, i) => {
      expectClose(bins[i]!, v, 1e-12, `cell ${i}`);
    });
    expectClose(offGrid, fx.cartesian_off_grid, 1e-9, 'off grid');
  });
  it('conserves the total exactly up to rounding (Σ bins + off-grid = Σ counts)', () => {
    for (const m of [maps.polar, maps.cartesian]) {
      const { bins } = resampleFrame(m, fx.counts);
      let s = 0;
      for (const v of bins) s += v;
      expectClose(s, fx.total, 64 * fx.total * Number.EPSILON, 'total');
    }
  });
});

describe('masks and sub-pixel choice', () => {
  const settings = analysisSettingsSchema.parse({ grid: { p_max_au: 1, n: 21 }, radial_bins: 10, angular_bins: 12 });
  const cal = detectorCalibrationSchema.parse({
    center_px: [4.5, 4.5],
    momentum_per_pixel_au: 0.1,
    bad_pixels: [[2, 3]],
  });
  it('bad pixels are excluded from every bin, not zeroed elsewhere', () => {
    const { mask } = buildPixelMask(cal, 10, 10);
    const maps = buildPixelBinMaps({
      nX: 10,
      nY: 10,
      map: calibrationMatrix(cal),
      cartesian: cartesianGrid(settings),
      polar: polarGrid(settings),
      mask,
    });
    expect(maps.usedPixels).toBe(99);
    const counts = new Float64Array(100).fill(1);
    counts[3 * 10 + 2] = 1e6;
    const { bins } = resampleFrame(maps.polar, counts);
    let s = 0;
    for (const v of bins) s += v;
    expectClose(s, 99, 1e-12, 'total without the bad pixel');
  });
  it('default S = clamp(⌈4h/Δ⌉, 2, 8)', () => {
    const cg = cartesianGrid(settings); // Δ = 0.1
    const pg = polarGrid(settings); // Δp = 0.1
    expect(defaultSubsamples(calibrationMatrix(cal), cg, pg)).toBe(4);
    expect(defaultSubsamples(calibrationMatrix({ ...cal, momentum_per_pixel_au: 0.01 }), cg, pg)).toBe(2);
    expect(defaultSubsamples(calibrationMatrix({ ...cal, momentum_per_pixel_au: 1 }), cg, pg)).toBe(8);
  });
  it('rejects wrong lengths with the numbers', () => {
    expect(() =>
      buildPixelBinMaps({
        nX: 10,
        nY: 10,
        map: calibrationMatrix(cal),
        cartesian: cartesianGrid(settings),
        polar: polarGrid(settings),
        mask: new Uint8Array(5),
      }),
    ).toThrow(/100/);
    const maps = buildPixelBinMaps({
      nX: 2,
      nY: 2,
      map: calibrationMatrix(cal),
      cartesian: cartesianGrid(settings),
      polar: polarGrid(settings),
      mask: null,
    });
    expect(() => resampleFrame(maps.polar, [1, 2, 3])).toThrow(/4 elements/);
  });
  it('grid conventions: cell centres linspace(−p_max, p_max, n) with an exact zero; sectors from −180°', () => {
    const cg = cartesianGrid(analysisSettingsSchema.parse({}));
    expect(cg.centresAu[0]).toBe(-2);
    expect(cg.centresAu[200]).toBe(0);
    expectClose(cg.stepAu, 0.01, 1e-17, 'step');
    const pg = polarGrid(analysisSettingsSchema.parse({}));
    expect(pg.thetaCentresDeg[0]).toBe(-179.5);
    expect(pg.pCentresAu[0]).toBe(0.005);
  });
});
