/**
 * ATI momentum scale (SCIENCE.md §7.1), background scale (§7.4), hot pixels and rotation from a reference (§7.3).
 * Sources: the §7.1 worked example, scipy.stats.linregress (tests/fixtures/bench/make_bench_reference.py), and the
 * example generator with known truth (ATI rings from κ, E₀, ħω; background frames with known shot ratios; hot pixels
 * at known positions; the distorted detector's rotation of 4°).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { atiRingRadii, fitAtiScale } from '@/reduction/bench/ati-scale';
import { fitBackgroundScale } from '@/reduction/bench/background-scale';
import { findHotPixels } from '@/reduction/bench/hot-pixels';
import { fitRotationFromReference } from '@/reduction/bench/rotation';
import { photonEnergyEv } from '@/reduction/constants';
import { renderDetectorBackground } from '@/reduction/synth/model';
import { expectClose, expectRel } from '../helpers/close';
import { expected, frameOf, generatedFile, meanSd, plan, realise, rngOf } from './helpers';

const REF = JSON.parse(
  readFileSync(path.resolve(import.meta.dirname, '../../../fixtures/bench/bench-reference.json'), 'utf8'),
);

describe('fitAtiScale', () => {
  it('SCIENCE.md §7.1 worked example (rounded radii): κ, E₀, α to 1e-9 relative of scipy.stats.linregress', () => {
    const a = REF.ati;
    const f = fitAtiScale(a.radii_px, null, a.photon_energy_ev);
    expectRel(f.value.kappaEvPerPx2, a.kappa_ev_per_px2, 1e-9, 'κ vs scipy');
    expectRel(f.value.e0Ev, a.e0_ev, 1e-9, 'E₀ vs scipy');
    expectRel(f.value.momentumPerPixelAu, a.alpha_au_per_px, 1e-9, 'α vs scipy');
    // SCIENCE.md §7.1 quotes κ = 2.000 075e-4, E₀ = 0.450 096 eV, α = 3.834 094e-3 (to its printed digits)
    expectClose(f.value.kappaEvPerPx2, 2.000075e-4, 1e-10, 'κ (SCIENCE.md)');
    expectClose(f.value.e0Ev, 0.450096, 1e-6, 'E₀ (SCIENCE.md)');
    expectClose(f.value.momentumPerPixelAu, 3.834094e-3, 1e-9, 'α (SCIENCE.md)');
    // standard errors from the scatter about the line (linregress stderr, intercept_stderr)
    expectRel(f.stdErr.kappaEvPerPx2, a.kappa_err, 1e-7, 'σκ vs scipy');
    expectRel(f.stdErr.e0Ev, a.e0_err, 1e-7, 'σE₀ vs scipy');
    expectRel(f.stdErr.momentumPerPixelAu, a.alpha_err, 1e-7, 'σα vs scipy');
    // (errors: 1e-7 relative, the rounding of r² ≈ 4×10⁴ px² in the sums; measured 3e-8)
  });

  it('exact radii return κ = 2e-4 eV/px² and E₀ = 0.45 eV (SCIENCE.md §7.1) and zero errors', () => {
    const hw = 1.549802;
    const r = [0, 1, 2, 3, 4, 5].map((n) => Math.sqrt((0.45 + hw * n) / 2e-4));
    const f = fitAtiScale(r, null, hw);
    expectRel(f.value.kappaEvPerPx2, 2e-4, 1e-12, 'κ');
    expectRel(f.value.e0Ev, 0.45, 1e-11, 'E₀');
    expect(f.stdErr.kappaEvPerPx2).toBeLessThan(1e-15);
  });

  it('rings of a generated image: κ within 2σ of the truth and the reported σκ honest over 30 realisations', () => {
    const kappa = 2e-3;
    const p = plan({
      kind: 'image',
      size: 160,
      counts: 2e4,
      atiRings: { e0Ev: 0.45, orders: [1, 2, 3, 4, 5], widthAu: 0.012, amplitude: 2, kappaEvPerPx2: kappa },
    });
    const t = p.atiRings!;
    expectRel(t.kappaEvPerPx2, kappa, 1e-12, 'generator κ');
    const hw = photonEnergyEv(800);
    const mean = expected(p);
    const rng = rngOf(31);
    const ks: number[] = [];
    const es: number[] = [];
    for (let k = 0; k < 30; k++) {
      const radii = atiRingRadii(frameOf(p, realise(mean, rng)), {
        centrePx: p.calibration.center_px,
        guessesPx: t.radiiPx.map((r) => r + 0.5),
        halfWidthPx: 3,
        binPx: 0.5,
      });
      const f = fitAtiScale(
        radii.map((r) => r.radiusPx),
        radii.map((r) => r.radiusErrPx),
        hw,
        { firstOrder: 1 },
      );
      ks.push(f.value.kappaEvPerPx2);
      es.push(f.stdErr.kappaEvPerPx2);
    }
    const s = meanSd(ks);
    const e = meanSd(es).mean;
    // measured bias −1.2e-3 relative (the ring-radius estimator); bound 2e-3
    expect(Math.abs(s.mean - kappa)).toBeLessThan(2e-3 * kappa);
    expect(s.sd / e).toBeGreaterThan(0.7);
    expect(s.sd / e).toBeLessThan(1.3);
  });
});

describe('fitBackgroundScale', () => {
  it('recovers the shot ratio of a generated per-step background from the corners; errors honest (100 realisations)', () => {
    const p = plan({ kind: 'angular_streaking', size: 128, steps: 1, counts: 2e5, background: 'per_step' });
    const n = 128;
    const shots = p.shots[0]!;
    const bgShots = p.backgroundShots[0]!;
    const sig = expected(p);
    const bgSig = renderDetectorBackground(p, shots, new Float64Array(n * n));
    const bgRef = renderDetectorBackground(p, bgShots, new Float64Array(n * n));
    for (let i = 0; i < sig.length; i++) sig[i] = sig[i]! + bgSig[i]!;
    // region outside the lobes: farther than 58 px from the centre (lobes at ≤ 1.4 a.u. ≈ 36 px)
    const region = new Uint8Array(n * n);
    const [cx, cy] = p.calibration.center_px;
    for (let iy = 0; iy < n; iy++)
      for (let ix = 0; ix < n; ix++) region[iy * n + ix] = Math.hypot(ix - cx, iy - cy) > 58 ? 1 : 0;
    const rng = rngOf(41);
    const ks: number[] = [];
    const es: number[] = [];
    for (let k = 0; k < 100; k++) {
      const f = fitBackgroundScale(frameOf(p, realise(sig, rng)), frameOf(p, realise(bgRef, rng)), region, {
        shotRatio: shots / bgShots,
      });
      ks.push(f.value.scale);
      es.push(f.stdErr.scale);
    }
    const s = meanSd(ks);
    const e = meanSd(es).mean;
    // truth: shots / background shots = 1000 / 500 (generator)
    expect(Math.abs(s.mean - 2)).toBeLessThan(3 * (e / 10));
    expect(s.sd / e).toBeGreaterThan(0.75);
    expect(s.sd / e).toBeLessThan(1.25);
  });

  it('warns when the marked region holds signal', () => {
    const p = plan({ kind: 'angular_streaking', size: 64, steps: 1, counts: 2e5, background: 'single' });
    const sig = expected(p);
    const bg = renderDetectorBackground(p, p.shots[0]!, new Float64Array(64 * 64));
    const region = new Uint8Array(64 * 64).fill(1); // the whole frame, lobes included
    const f = fitBackgroundScale(frameOf(p, sig), frameOf(p, bg), region, { shotRatio: 1 });
    expect(f.warnings.join(' ')).toMatch(/standard errors/);
    expect(() => fitBackgroundScale(frameOf(p, sig), frameOf(p, bg), new Uint8Array(64 * 64))).toThrow(/usable pixels/);
  });
});

describe('findHotPixels', () => {
  const hot: [number, number, number][] = [
    [10, 12, 40],
    [70, 33, 25],
    [64, 64, 200],
    [100, 90, 60],
    [5, 120, 15],
  ];
  it('finds exactly the generator’s hot pixels in a written scan file (signal + background)', async () => {
    const p = plan({
      kind: 'angular_streaking',
      size: 128,
      steps: 1,
      counts: 2e5,
      background: 'single',
      hotPixels: hot,
    });
    const { counts } = await generatedFile(p, 'hot-pixels');
    const f = findHotPixels(frameOf(p, counts));
    expect(f.value.pixels.map(([x, y]) => `${x},${y}`).sort()).toEqual(hot.map(([x, y]) => `${x},${y}`).sort());
    expect(f.value.count).toBe(5);
  });

  it('no false alarms in 20 realisations without hot pixels; all found in 20 realisations with them', () => {
    const p = plan({ kind: 'angular_streaking', size: 128, steps: 1, counts: 2e5, hotPixels: hot });
    const mean = expected(p);
    const rng = rngOf(51);
    let falseAlarms = 0;
    let missed = 0;
    for (let k = 0; k < 20; k++) {
      const clean = realise(mean, rng);
      falseAlarms += findHotPixels(frameOf(p, clean)).value.count;
      const withHot = realise(mean, rng);
      for (const [x, y, c] of hot) withHot[y * 128 + x] = withHot[y * 128 + x]! + c;
      const f = findHotPixels(frameOf(p, withHot));
      const set = new Set(f.value.indices);
      for (const [x, y] of hot) if (!set.has(y * 128 + x)) missed++;
      const hotSet = new Set(hot.map(([x, y]) => y * 128 + x));
      falseAlarms += f.value.indices.filter((i) => !hotSet.has(i)).length;
    }
    // α = 1e-3 per frame would give 0.04 false alarms over 40 frames if λ were exact; the neighbour estimate of λ
    // is low on the crest of the 2.6 px wide lobes, so some crest pixels are flagged (measured: 9 in 40 frames of
    // 16 384 pixels). Bound: at most one per two frames on average; every hot pixel of ≥ 15 extra counts found.
    expect(falseAlarms).toBeLessThanOrEqual(20);
    expect(missed).toBe(0);
  });
});

describe('fitRotationFromReference', () => {
  it('the distorted detector’s rotation of 4° from a two-lobe reference (ε = 0.3, offset 0); errors honest', () => {
    const p = plan({
      kind: 'angular_streaking',
      size: 128,
      distort: true,
      steps: 1,
      counts: 5e4,
      ellipticity: 0.3,
      offsetDeg: 0,
    });
    const labAxis = p.steps[0]!.lobes[0]!.angle_deg;
    const mean = expected(p);
    const rng = rngOf(61);
    const b: number[] = [];
    const e: number[] = [];
    for (let k = 0; k < 60; k++) {
      const f = fitRotationFromReference(frameOf(p, realise(mean, rng)), p.calibration.center_px, {
        calibration: p.calibration,
        labAxisDeg: labAxis,
        rMinPx: 10,
        rMaxPx: 60,
      });
      b.push(f.value.rotationDeg);
      e.push(f.stdErr.rotationDeg);
    }
    const s = meanSd(b);
    const err = meanSd(e).mean;
    // generator truth: rotation_deg = 4 (planScan distort)
    expect(Math.abs(s.mean - p.calibration.rotation_deg)).toBeLessThan(Math.max(3 * (err / Math.sqrt(60)), 0.02));
    expect(s.sd / err).toBeGreaterThan(0.75);
    expect(s.sd / err).toBeLessThan(1.25);
  });
});
