import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  backgroundScale,
  backgroundSubtractedRate,
  buildInverseGain,
  buildPixelMask,
  calibrationMatrix,
  correctCounts,
  correctCountsKernel,
  momentumToPixel,
  pixelToMomentumAu,
} from '@/reduction/calibration';
import { ellipseMatrix } from '@/reduction/ellipse-matrix';
import { detectorCalibrationSchema } from '@/reduction/formats';
import { expectClose } from './helpers/close';

const cal = (o: object) => detectorCalibrationSchema.parse({ center_px: [100, 50], momentum_per_pixel_au: 0.01, ...o });

describe('detector → lab map (FORMATS §2 order)', () => {
  it('centre and scale only', () => {
    const m = calibrationMatrix(cal({}));
    expect(Array.from(pixelToMomentumAu(m, 110, 45))).toEqual([0.1, -0.05]);
  });
  it('rotation is counter-clockwise', () => {
    const m = calibrationMatrix(cal({ rotation_deg: 90 }));
    const p = pixelToMomentumAu(m, 110, 50); // u = (10, 0) → rotated to +y
    expectClose(p[0]!, 0, 1e-17, 'px');
    expectClose(p[1]!, 0.1, 1e-16, 'py');
  });
  it('mirror acts first (before the rotation): u_x → −u_x, then rotate', () => {
    const m = calibrationMatrix(cal({ mirror: true, rotation_deg: 90 }));
    const p = pixelToMomentumAu(m, 110, 50); // u = (10,0) → (−10,0) → rotated 90° → (0, −10)
    expectClose(p[0]!, 0, 1e-17, 'px');
    expectClose(p[1]!, -0.1, 1e-16, 'py');
    expect(m.a[0]! * m.a[3]! - m.a[1]! * m.a[2]!).toBeLessThan(0);
  });
  it('undoes the detector ellipticity: M⁻¹ of SCIENCE.md §7.3 applied before the rotation', () => {
    // a lab vector p stretched by M (q = 1.05 along 30°) lands on the detector; the calibration must return p
    const M = ellipseMatrix(1.05, 30);
    const m = calibrationMatrix(cal({ detector_ellipticity: { ratio: 1.05, axis_deg: 30 }, momentum_per_pixel_au: 1 }));
    const d = [M[0]! * 1 + M[1]! * 0, M[2]! * 1 + M[3]! * 0]; // (1.0375, 0.021651)
    const p = pixelToMomentumAu(m, 100 + d[0]!, 50 + d[1]!);
    // pixel coordinates near 100 carry an absolute rounding of ~100·EPS: allow 64·100·EPS
    expectClose(p[0]!, 1, 64 * 100 * Number.EPSILON, 'px');
    expectClose(p[1]!, 0, 64 * 100 * Number.EPSILON, 'py');
    // along the axis the scale is 1/q, across it 1
    const a = pixelToMomentumAu(m, 100 + Math.cos(Math.PI / 6), 50 + Math.sin(Math.PI / 6));
    expectClose(Math.hypot(a[0]!, a[1]!), 1 / 1.05, 64 * 100 * Number.EPSILON, 'along');
  });
  it('property: momentumToPixel inverts pixelToMomentumAu for any calibration (round trip)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: -500, max: 500, noNaN: true }),
        fc.double({ min: -500, max: 500, noNaN: true }),
        fc.double({ min: -180, max: 180, noNaN: true }),
        fc.boolean(),
        fc.double({ min: 0.7, max: 1.4, noNaN: true }),
        fc.double({ min: -90, max: 90, noNaN: true }),
        fc.double({ min: 1e-4, max: 0.1, noNaN: true }),
        (x, y, rot, mirror, ratio, axis, scale) => {
          const m = calibrationMatrix(
            cal({
              rotation_deg: rot,
              mirror,
              detector_ellipticity: { ratio, axis_deg: axis },
              momentum_per_pixel_au: scale,
              center_px: [12.5, -3],
            }),
          );
          const p = pixelToMomentumAu(m, x, y);
          const back = momentumToPixel(m, p[0]!, p[1]!);
          return Math.abs(back[0]! - x) < 1e-9 && Math.abs(back[1]! - y) < 1e-9;
        },
      ),
    );
  });
  it('rejects non-positive scale and ratio with the value', () => {
    expect(() => calibrationMatrix({ ...cal({}), momentum_per_pixel_au: -1 })).toThrow(/-1/);
    expect(() => calibrationMatrix({ ...cal({}), detector_ellipticity: { ratio: 0, axis_deg: 0 } })).toThrow(
      RangeError,
    );
  });
});

describe('bad pixels, flat field, background', () => {
  it('bad pixels are excluded; entries outside the image are counted', () => {
    const { mask, outside } = buildPixelMask(
      cal({
        bad_pixels: [
          [1, 0],
          [9, 9],
        ],
      }),
      3,
      2,
    );
    expect(Array.from(mask)).toEqual([1, 0, 1, 1, 1, 1]);
    expect(outside).toBe(1);
  });
  it('flat field: divide by G, exclude G below min_gain (SCIENCE.md §7.5)', () => {
    const c = cal({ flat_field: { gain: [[1, 0.5, 0.01]], min_gain: 0.1 } });
    const { mask, lowGain } = buildPixelMask(c, 3, 1);
    expect(Array.from(mask)).toEqual([1, 1, 0]);
    expect(lowGain).toBe(1);
    const g = buildInverseGain(c, 3, 1)!;
    expect(Array.from(correctCounts([10, 10, 10], null, 0, g))).toEqual([10, 20, 0]);
    expect(() => buildPixelMask(c, 2, 1)).toThrow(/n_x/);
  });
  it('background scaled by shots, negatives kept (FORMATS §2, SCIENCE.md §7.4)', () => {
    expect(backgroundScale(cal({}), 1e5, 5e4)).toBe(2);
    expect(backgroundScale(cal({ background: { subtract: true, scale_by: 'none' } }), 1e5, 5e4)).toBe(0);
    expect(backgroundScale(cal({ background: { subtract: false, scale_by: 'shots' } }), 1e5, 5e4)).toBe(0);
    expect(Array.from(correctCounts([5, 1], [1, 2], 2, null))).toEqual([3, -3]);
    expect(() => backgroundScale(cal({}), 0, 1)).toThrow(/shots/);
  });
  it('SCIENCE.md §7.4 worked example: S = 6.000e-3, σ_S = 4.899e-4 counts/shot [computed]', () => {
    const r = backgroundSubtractedRate(1200, 1e5, 300, 5e4);
    expectClose(r.signal, 6e-3, 1e-17, 'S');
    expectClose(r.sigma, 4.899e-4, 5e-8, 'σ_S');
  });
  it('kernel: strides and offsets (stdlib-style), N ≤ 0 leaves out untouched', () => {
    //            idx: 0  1  2  3  4  5
    const c = Float64Array.of(9, 1, 9, 2, 9, 3);
    const b = Float64Array.of(0, 1, 0, 1, 0, 1);
    const out = new Float64Array(3).fill(-7);
    correctCountsKernel(3, c, 2, 1, b, 0.5, null, out, -1, 2); // reads 1, 2, 3 minus 0.5; writes backwards
    expect(Array.from(out)).toEqual([2.5, 1.5, 0.5]);
    const o2 = new Float64Array(2).fill(4);
    correctCountsKernel(0, c, 1, 0, null, 0, null, o2, 1, 0);
    expect(Array.from(o2)).toEqual([4, 4]);
    expect(() => correctCounts([1, 2], [1], 1, null)).toThrow(/2 elements/);
  });
});
