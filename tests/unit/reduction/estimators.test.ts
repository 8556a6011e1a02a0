import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { wrapDeg } from '@/reduction/angles';
import { harmonicAngleDeg, harmonicAngleKernel } from '@/reduction/harmonic';
import { levenbergMarquardt } from '@/reduction/lm';
import { fitParabola, parabolaVertexThreePoint } from '@/reduction/parabola';
import { fitAngularPeak, PeakFitWorkspace } from '@/reduction/peak-fit';
import { smoothCircular } from '@/reduction/smoothing';
import { expectClose } from './helpers/close';

describe('wrap rules', () => {
  it('wraps into (−180, 180] and (−p/2, p/2]', () => {
    expect(wrapDeg(180)).toBe(180);
    expect(wrapDeg(-180)).toBe(180);
    expect(wrapDeg(190)).toBe(-170);
    expect(wrapDeg(-190)).toBe(170);
    expect(wrapDeg(725)).toBe(5);
    expect(wrapDeg(60, 120)).toBe(60);
    expect(wrapDeg(-60, 120)).toBe(60);
    expect(Object.is(wrapDeg(-360), 0)).toBe(true); // no signed zero
    expect(Number.isNaN(wrapDeg(Number.NaN))).toBe(true);
  });
});

describe('parabola estimators (SCIENCE.md §9.1 item 2)', () => {
  it('three-point example (8°,950),(10°,1000),(12°,990) → 10.666 667° [computed]', () => {
    expectClose(parabolaVertexThreePoint(10, 2, 950, 1000, 990), 10.666666666666666, 4 * Number.EPSILON * 10, 'vertex');
    expect(parabolaVertexThreePoint(10, 2, 1, 1, 1)).toBe(10);
  });
  it('least-squares parabola recovers an exact parabola and agrees with the three-point form', () => {
    const x = [8, 10, 12];
    const y = [950, 1000, 990];
    const f = fitParabola(3, x, y, null)!;
    expectClose(f.vertex, 10.666666666666666, 1e-12, 'vertex');
    const xs = [-3, -1, 0, 2, 5];
    const ys = xs.map((v) => 7 - 0.5 * (v - 1.25) ** 2);
    expectClose(fitParabola(5, xs, ys, null)!.vertex, 1.25, 1e-12, 'exact');
    expect(fitParabola(2, [1, 2], [1, 2], null)).toBeNull();
  });
});

describe('n-fold harmonic estimator (SCIENCE.md §9.1 item 3) [computed]', () => {
  it('n = 2: {−78, −80, −82, 100, 102, 98} → −80.000°', () => {
    expectClose(harmonicAngleDeg([-78, -80, -82, 100, 102, 98], 2), -80, 1e-12, 'n=2');
  });
  it('n = 3: {−85, 35, 155, −87, 33, 153} → 34.000° (mod 120°)', () => {
    expectClose(harmonicAngleDeg([-85, 35, 155, -87, 33, 153], 3), 34, 1e-12, 'n=3');
  });
  it('kernel with stride and offset; N ≤ 0 gives NaN', () => {
    //                 idx: 0   1    2    3    4
    const a = Float64Array.of(0, -78, 0, -82, 0);
    expectClose(harmonicAngleKernel(2, 1, a, 2, 1, null, 1, 0), -80, 1e-12, 'strided');
    expect(Number.isNaN(harmonicAngleKernel(0, 1, a, 1, 0, null, 1, 0))).toBe(true);
    expect(() => harmonicAngleDeg([1], 0)).toThrow(/0/);
  });
});

describe('circular smoothing', () => {
  it('keeps the total and wraps around', () => {
    const y = new Float64Array(36);
    y[0] = 100;
    const s = smoothCircular(y, 20);
    let t = 0;
    for (const v of s) t += v;
    expectClose(t, 100, 1e-12, 'sum');
    expectClose(s[1]!, s[35]!, 1e-12, 'symmetric across 0');
    expect(Array.from(smoothCircular(Float64Array.of(0, 0, 6, 0), 0))).toEqual([0, 0, 6, 0]);
  });
});

describe('Levenberg–Marquardt peak fits', () => {
  const thetas = Float64Array.from({ length: 360 }, (_, j) => -179.5 + j);
  const lobe = (mu: number, sig: number, A: number, B: number) =>
    thetas.map((t) => B + A * Math.exp(-0.5 * (wrapDeg(t - mu) / sig) ** 2));
  const ws = new PeakFitWorkspace(360);
  it('recovers a noise-free Gaussian + constant to 1e-8', () => {
    const y = lobe(12.3456, 14, 500, 20);
    const f = fitAngularPeak(thetas, y, y, 10, 'gaussian', 30, ws);
    expect(f.method).toBe('gaussian');
    expectClose(f.angleDeg, 12.3456, 1e-8, 'μ');
    expectClose(f.widthDeg!, 14, 1e-8, 'σ');
  });
  it('property: a lobe straddling ±180° is found on the right side (wrap-around safe)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 160, max: 200, noNaN: true }),
        fc.double({ min: 8, max: 25, noNaN: true }),
        (mu, sig) => {
          const y = lobe(mu, sig, 300, 5);
          const f = fitAngularPeak(thetas, y, y, wrapDeg(mu + 3), 'gaussian', 40, ws);
          const g = fitAngularPeak(thetas, y, y, wrapDeg(mu - 2), 'von_mises', 40, ws);
          return (
            Math.abs(wrapDeg(f.angleDeg - mu)) < 1e-6 &&
            Math.abs(wrapDeg(g.angleDeg - mu)) < 0.05 &&
            f.angleDeg > -180 &&
            f.angleDeg <= 180
          );
        },
      ),
      { numRuns: 40 },
    );
  });
  it('falls back to the parabola through the smoothed maximum when the fit cannot work', () => {
    const y = new Float64Array(360);
    y[100] = 5; // a single spike: no width to fit
    y[99] = 3;
    y[101] = 4;
    const f = fitAngularPeak(thetas, y, y, thetas[100]!, 'gaussian', 1, ws);
    expect(f.method).toBe('parabola_fallback');
    expectClose(f.angleDeg, parabolaVertexThreePoint(thetas[100]!, 1, 3, 5, 4), 1e-12, 'vertex');
    expect(f.widthDeg).toBeNull();
  });
  it('LM solves a textbook exponential fit (y = 2e^{−0.5x} + 1)', () => {
    const x = [0, 0.5, 1, 1.5, 2, 3, 4, 6];
    const y = x.map((v) => 2 * Math.exp(-0.5 * v) + 1);
    const r = levenbergMarquardt(
      {
        nParams: 3,
        evaluate(xx, t, gr) {
          const e = Math.exp(-t[1]! * xx);
          gr[0] = e;
          gr[1] = -t[0]! * xx * e;
          gr[2] = 1;
          return t[0]! * e + t[2]!;
        },
      },
      x.length,
      x,
      y,
      x.map(() => 1),
      [1, 1, 0],
    );
    expect(r.converged).toBe(true);
    expectClose(r.theta[0]!, 2, 1e-7, 'a');
    expectClose(r.theta[1]!, 0.5, 1e-7, 'k');
    expectClose(r.theta[2]!, 1, 1e-7, 'c');
  });
});
