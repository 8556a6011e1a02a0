/**
 * Poisson-weighted phase fit (SCIENCE.md §6.2 (b)) and the geometrically refined circle fit (SCIENCE.md §7.2)
 * against numpy/scipy references made by tests/fixtures/numpy/weighted_fits.py (Debian's /usr/bin/python3):
 * numpy.linalg.lstsq for the weighted least squares, scipy.optimize.minimize of the Poisson negative
 * log-likelihood for its fixed point, scipy.optimize.least_squares (Levenberg–Marquardt) for the geometric circle.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { wrapRad } from '@/reduction/angles';
import { fitCircleGeometric, fitCircleKasa } from '@/reduction/circle-fit';
import { leastSquaresPhaseFit, poissonWeightedPhaseFit } from '@/reduction/phase-estimators';
import { createPhaseAccumulator } from '@/reduction/phase-maps';
import { createPrng } from '@/reduction/prng';
import { ROOT } from '../scanfile/helpers';

interface PhaseRef {
  a0: number;
  a1: number;
  phi0: number;
  coef: number[];
}
const ref = JSON.parse(readFileSync(path.join(ROOT, 'tests/fixtures/numpy/weighted_fits.json'), 'utf8')) as {
  phase: { name: string; phases: number[]; y: number[]; one_pass: PhaseRef; mle: PhaseRef }[];
  circle: { name: string; x: number[]; y: number[]; truth: number[]; kasa: number[]; geometric: number[] }[];
  maps: {
    ny: number;
    nx: number;
    phases: number[];
    frames: number[][];
    pixels: { coef: number[]; kappa: number; unweighted: number[] }[];
  };
};

describe('Poisson-weighted least squares of a phase series (SCIENCE.md §6.2 (b))', () => {
  it.each(ref.phase.map((c) => [c.name, c] as const))('%s: one model pass equals numpy’s weighted lstsq', (_n, c) => {
    const f = poissonWeightedPhaseFit(c.y, c.phases, 1, 1);
    expect(f.a0).toBeCloseTo(c.one_pass.a0, 9);
    expect(f.amplitude[0]!).toBeCloseTo(c.one_pass.a1, 9);
    expect(Math.abs(wrapRad(f.phase[0]! - c.one_pass.phi0))).toBeLessThan(1e-9);
  });

  it.each(ref.phase.map((c) => [c.name, c] as const))(
    '%s: iterated reweighting reaches the Poisson maximum likelihood of scipy',
    (_n, c) => {
      const f = poissonWeightedPhaseFit(c.y, c.phases, 1, 30);
      // scipy's optimizer stops at ~1e-7 relative; the fixed point of the reweighting is exact
      expect(Math.abs(f.a0 - c.mle.a0)).toBeLessThan(1e-5 * Math.max(1, c.mle.a0));
      expect(Math.abs(f.amplitude[0]! - c.mle.a1)).toBeLessThan(1e-5 * Math.max(1, c.mle.a0));
      expect(Math.abs(wrapRad(f.phase[0]! - c.mle.phi0))).toBeLessThan(1e-4);
    },
  );

  it('differs from the unweighted fit where counts are low (so the weighting does something)', () => {
    const c = ref.phase.find((p) => p.name === 'low_counts')!;
    const w = poissonWeightedPhaseFit(c.y, c.phases, 1, 30);
    const u = leastSquaresPhaseFit(c.y, c.phases, 1);
    expect(Math.abs(w.amplitude[0]! - u.amplitude[0]!) + Math.abs(w.a0 - u.a0)).toBeGreaterThan(1e-3);
  });

  it('is exact on noise-free data (SCIENCE.md §6.3 (iii): A₀ = 200, A₁ = 50, φ₀ = 2)', () => {
    const phases = [0.1, 0.9, 2.0, 2.5, 3.9, 5.1];
    const y = phases.map((p) => 200 + 50 * Math.cos(p - 2));
    const f = poissonWeightedPhaseFit(y, phases, 1);
    expect(f.a0).toBeCloseTo(200, 9);
    expect(f.amplitude[0]!).toBeCloseTo(50, 9);
    expect(f.phase[0]!).toBeCloseTo(2, 9);
    expect(() => poissonWeightedPhaseFit([1, 2], [0, 1], 1)).toThrow(RangeError);
  });
});

describe('streamed phase maps with Poisson weights for low-count pixels (SCIENCE.md §6.2 (b))', () => {
  const m = ref.maps;
  const run = (poissonHarmonics?: number) => {
    const acc = createPhaseAccumulator(m.nx * m.ny, 1, poissonHarmonics ? { poissonHarmonics } : {});
    m.frames.forEach((f, j) => {
      acc.addFrame(Float64Array.from(f), m.phases[j]!);
    });
    return acc.finish({ minCounts: 0.5 });
  };

  it('each pixel equals scipy’s Poisson maximum likelihood (model contrast below 0.8; frames never stored)', () => {
    const r = run(12);
    expect(r.method).toBe('least_squares');
    let checked = 0;
    m.pixels.forEach((px, i) => {
      if (px.kappa >= 0.8) return;
      const [a, b, c] = px.coef as [number, number, number];
      // Float32 maps: compare at float32 precision plus the series cut ρ^13 (≤ 4e-4 at κ = 0.8)
      expect(Math.abs(r.maps.mean[i]! - a) / a, `pixel ${i} A0`).toBeLessThan(2e-4);
      expect(Math.abs(r.maps.amplitude[i]! - Math.hypot(b, c)) / a, `pixel ${i} A1`).toBeLessThan(2e-4);
      expect(Math.abs(wrapRad(r.maps.phase_of_max[i]! - Math.atan2(c, b))), `pixel ${i} φ0`).toBeLessThan(1e-3);
      checked++;
    });
    expect(checked).toBeGreaterThan(12);
    expect(r.poissonWeighted).toBeGreaterThanOrEqual(checked);
  });

  it('without the option the maps stay the unweighted least squares of numpy (and differ from the weighted ones)', () => {
    const u = run();
    const w = run(12);
    expect(u.poissonWeighted).toBe(0);
    let differs = 0;
    m.pixels.forEach((px, i) => {
      const [a] = px.unweighted as [number, number, number];
      expect(Math.abs(u.maps.mean[i]! - a) / a).toBeLessThan(1e-6);
      if (Math.abs(w.maps.mean[i]! - u.maps.mean[i]!) > 1e-3 * a) differs++;
    });
    expect(differs).toBeGreaterThan(5);
  });

  it('a pixel whose model nearly touches zero keeps the unweighted fit', () => {
    const w = run(12);
    const i = m.pixels.findIndex((px) => px.kappa > 1);
    expect(i).toBeGreaterThanOrEqual(0);
    const [a] = m.pixels[i]!.unweighted as [number, number, number];
    expect(Math.abs(w.maps.mean[i]! - a) / a).toBeLessThan(1e-6);
  });
});

describe('circle fit refined geometrically (SCIENCE.md §7.2)', () => {
  it('Kåsa start equals numpy’s algebraic lstsq; the refinement equals scipy’s least_squares', () => {
    for (const c of ref.circle) {
      const k = fitCircleKasa(c.x, c.y);
      expect(k.cx).toBeCloseTo(c.kasa[0]!, 7);
      expect(k.cy).toBeCloseTo(c.kasa[1]!, 7);
      expect(k.r).toBeCloseTo(c.kasa[2]!, 7);
      const g = fitCircleGeometric(c.x, c.y);
      expect(g.converged).toBe(true);
      expect(g.cx, c.name).toBeCloseTo(c.geometric[0]!, 6);
      expect(g.cy, c.name).toBeCloseTo(c.geometric[1]!, 6);
      expect(g.r, c.name).toBeCloseTo(c.geometric[2]!, 6);
    }
  });

  it('reproduces the worked example of SCIENCE.md §7.2 (centre (512.3, 498.7), R = 150)', () => {
    const g = fitCircleGeometric(
      [662.3, 627.206666, 486.252773, 364.578837, 415.881859, 587.3],
      [498.7, 595.118141, 646.421163, 524.747227, 383.793334, 368.796189],
    );
    expect(g.cx).toBeCloseTo(512.3, 4);
    expect(g.cy).toBeCloseTo(498.7, 4);
    expect(g.r).toBeCloseTo(150, 4);
  });

  it('on short arcs the geometric radius is less biased than the algebraic one (20 noisy arcs)', () => {
    // Kåsa's algebraic fit shrinks circles fitted to short noisy arcs (SCIENCE.md §7.2 "biased for short arcs")
    const rng = createPrng(91);
    let biasK = 0;
    let biasG = 0;
    for (let s = 0; s < 20; s++) {
      const x: number[] = [];
      const y: number[] = [];
      for (let i = 0; i < 30; i++) {
        const t = ((20 + (60 * i) / 29) * Math.PI) / 180;
        x.push(100 + 80 * Math.cos(t) + rng.normal() * 1.5);
        y.push(50 + 80 * Math.sin(t) + rng.normal() * 1.5);
      }
      biasK += fitCircleKasa(x, y).r - 80;
      biasG += fitCircleGeometric(x, y).r - 80;
    }
    expect(Math.abs(biasG / 20)).toBeLessThan(Math.abs(biasK / 20));
  });
});
