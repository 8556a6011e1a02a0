/**
 * Ring (circle) and detector-ellipse fits (SCIENCE.md §7.2, §7.3): the worked examples, scipy.optimize.least_squares
 * on the same points (tests/fixtures/bench/make_bench_reference.py → bench-reference.json), and images from the
 * example generator with ATI rings at known radii and its known distorted detector (centre offset, ellipticity 1.04
 * at 30°).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { fitDetectorEllipse } from '@/reduction/bench/ellipse-fit';
import { fitRing } from '@/reduction/bench/ring-fit';
import { ellipseMatrix } from '@/reduction/ellipse-matrix';
import { expectClose, expectRel } from '../helpers/close';
import { expected, frameOf, meanSd, plan, realise, rngOf } from './helpers';

const REF = JSON.parse(
  readFileSync(path.resolve(import.meta.dirname, '../../../fixtures/bench/bench-reference.json'), 'utf8'),
);

describe('fitRing', () => {
  it('SCIENCE.md §7.2 worked example: six points → centre (512.3, 498.7), R = 150 [computed, sec7.py]', () => {
    const f = fitRing({
      x: [662.3, 627.206666, 486.252773, 364.578837, 415.881859, 587.3],
      y: [498.7, 595.118141, 646.421163, 524.747227, 383.793334, 368.796189],
    });
    // the points are given to 1e-6 px, so the fit returns the circle to about that
    expectClose(f.value.x, 512.3, 2e-6, 'x');
    expectClose(f.value.y, 498.7, 2e-6, 'y');
    expectClose(f.value.r, 150, 2e-6, 'R');
    expect(f.residual.rms).toBeLessThan(1e-6);
  });

  it('scipy.optimize.least_squares on a noisy 150° arc: same centre, radius (1e-7 px) and errors (1e-4 rel.)', () => {
    const c = REF.circle;
    const f = fitRing({ x: c.x, y: c.y });
    expectClose(f.value.x, c.centre[0], 1e-7, 'x vs scipy');
    expectClose(f.value.y, c.centre[1], 1e-7, 'y vs scipy');
    expectClose(f.value.r, c.r, 1e-7, 'R vs scipy');
    expectRel(f.stdErr.x, c.err[0], 1e-4, 'σx vs scipy');
    expectRel(f.stdErr.y, c.err[1], 1e-4, 'σy vs scipy');
    expectRel(f.stdErr.r, c.err[2], 1e-4, 'σR vs scipy');
    expectRel(f.residual.rms, c.rms, 1e-6, 'rms');
    expect(f.warnings.some((w) => w.includes('150°'))).toBe(true);
  });

  it('an ATI ring in a generated image (no distortion): centre within 3σ and 0.05 px, radius within 0.3 px', () => {
    const p = plan({
      kind: 'angular_streaking',
      size: 128,
      steps: 1,
      counts: 1e5,
      atiRings: { e0Ev: 0.45, orders: [0, 1, 2, 3], widthAu: 0.012, amplitude: 0.5, kappaEvPerPx2: 2e-3 },
    });
    const truth = p.atiRings!;
    const [cx, cy] = p.calibration.center_px;
    const r2 = truth.radiiPx[2]!;
    const f = fitRing({
      frame: frameOf(p, realise(expected(p), rngOf(3))),
      annulus: { centrePx: [cx + 1.5, cy - 1], rMinPx: r2 - 2.5, rMaxPx: r2 + 2.5 },
    });
    expect(Math.abs(f.value.x - cx)).toBeLessThan(Math.max(3 * f.stdErr.x, 0.05));
    expect(Math.abs(f.value.y - cy)).toBeLessThan(Math.max(3 * f.stdErr.y, 0.05));
    // the count-weighted sector mean sits σ²/R outside the density peak (+0.1 px here)
    expect(Math.abs(f.value.r - r2)).toBeLessThan(0.3);
  });
});

describe('fitDetectorEllipse', () => {
  it('SCIENCE.md §7.3 worked example: a round ring through M(q = 1.05, ψ = 30°) → q = 1.05, ψ = 30° (1e-9)', () => {
    const M = ellipseMatrix(1.05, 30);
    // M itself (SCIENCE.md §7.3: [[1.0375, 0.021651], [0.021651, 1.0125]])
    expectClose(M[0]!, 1.0375, 1e-12, 'M00');
    expectClose(M[1]!, 0.021651, 5e-7, 'M01');
    expectClose(M[3]!, 1.0125, 1e-12, 'M11');
    const x: number[] = [];
    const y: number[] = [];
    for (let k = 0; k < 36; k++) {
      const t = (2 * Math.PI * k) / 36;
      x.push(300 + 100 * (M[0]! * Math.cos(t) + M[1]! * Math.sin(t)));
      y.push(200 + 100 * (M[2]! * Math.cos(t) + M[3]! * Math.sin(t)));
    }
    const f = fitDetectorEllipse({ x, y });
    expectRel(f.value.ratio, 1.05, 1e-9, 'q');
    expectClose(f.value.axisDeg, 30, 1e-7, 'ψ');
    expectRel(f.value.minorPx, 100, 1e-9, 'b');
    expectClose(f.value.x, 300, 1e-8, 'x');
    expectClose(f.value.y, 200, 1e-8, 'y');
  });

  it('scipy.optimize.least_squares with the same residual on noisy points: same parameters and errors', () => {
    const e = REF.ellipse;
    const f = fitDetectorEllipse({ x: e.x, y: e.y });
    expectClose(f.value.x, e.centre[0], 1e-6, 'x vs scipy');
    expectClose(f.value.y, e.centre[1], 1e-6, 'y vs scipy');
    expectClose(f.value.minorPx, e.minor_px, 1e-6, 'b vs scipy');
    expectClose(f.value.ratio, e.ratio, 1e-8, 'q vs scipy');
    expectClose(f.value.axisDeg, e.axis_deg, 1e-5, 'ψ vs scipy');
    const errs = [f.stdErr.x, f.stdErr.y, f.stdErr.minorPx, f.stdErr.ratio, f.stdErr.axisDeg];
    // scipy's Jacobian is finite-difference too: errors agree to 1e-3 relative
    for (const [i, v] of errs.entries()) expectRel(v, e.err[i], 1e-3, `σ${i} vs scipy`);
  });

  it('the generator’s distorted detector: q = 1.04 and ψ = 30° from an ATI ring; 40 realisations, honest errors', () => {
    const p = plan({
      kind: 'image',
      size: 160,
      distort: true,
      counts: 2e4,
      atiRings: { e0Ev: 0.45, orders: [0, 1, 2, 3, 4], widthAu: 0.012, amplitude: 2, kappaEvPerPx2: 2e-3 },
    });
    const truth = p.atiRings!;
    const mean = expected(p);
    const [cx, cy] = p.calibration.center_px;
    const r = truth.radiiPx[4]!; // minor semi-axis in px = momentum / momentum_per_pixel
    const rng = rngOf(21);
    const q: number[] = [];
    const qe: number[] = [];
    const psi: number[] = [];
    const pe: number[] = [];
    for (let k = 0; k < 40; k++) {
      const f = fitDetectorEllipse(
        {
          frame: frameOf(p, realise(mean, rng)),
          annulus: { centrePx: [cx, cy], rMinPx: r - 3, rMaxPx: r * 1.04 + 3 },
          sectors: 90,
        },
        { kind: 'image' },
      );
      q.push(f.value.ratio);
      qe.push(f.stdErr.ratio);
      psi.push(f.value.axisDeg);
      pe.push(f.stdErr.axisDeg);
    }
    const sq = meanSd(q);
    const sp = meanSd(psi);
    expect(Math.abs(sq.mean - 1.04)).toBeLessThan(0.002);
    expect(Math.abs(sp.mean - 30)).toBeLessThan(1);
    const rq = sq.sd / meanSd(qe).mean;
    const rp = sp.sd / meanSd(pe).mean;
    expect(rq).toBeGreaterThan(0.7);
    expect(rq).toBeLessThan(1.3);
    expect(rp).toBeGreaterThan(0.7);
    expect(rp).toBeLessThan(1.3);
  });

  it('warns that the torus of circular light is not a round feature (SCIENCE.md §7.3)', () => {
    const e = REF.ellipse;
    const f = fitDetectorEllipse({ x: e.x, y: e.y }, { kind: 'angular_streaking', ellipticity: 1 });
    expect(f.warnings.join(' ')).toMatch(/torus of circular light is not a round feature/);
    expect(() => fitDetectorEllipse({ x: [1, 2, 3], y: [1, 2, 3] })).toThrow(/at least 6 points/);
  });
});
