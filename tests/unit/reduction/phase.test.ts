import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { wrapRad } from '@/reduction/angles';
import {
  delayToPhaseRad,
  fftPhaseFit,
  fourierProjection,
  leastSquaresPhaseFit,
  resolvableHarmonics,
  wholePeriodSampling,
} from '@/reduction/phase-estimators';
import { accumulateHarmonicsKernel, createPhaseAccumulator } from '@/reduction/phase-maps';
import { expectClose } from './helpers/close';

// SCIENCE.md §6.3 (i): N = 16, A0 = 200, A1 = 50, φ0 = 2 [computed, sec6.py]
const Y16 = [
  179.192658, 198.175176, 217.435506, 234.041439, 245.464871, 249.966689, 246.861531, 236.62213, 220.807342, 201.824824,
  182.564494, 165.958561, 154.535129, 150.033311, 153.138469, 163.37787,
];
const PH16 = Y16.map((_, j) => (2 * Math.PI * j) / 16);
// the inputs carry 6 decimals: results are good to ~1e-6
const T6 = 2e-6;

describe('phase-of-phase check values (SCIENCE.md §6.3) [computed]', () => {
  it('(i) projection: A0 = 200, A1 = 50, φ0 = 2.000 000', () => {
    const f = fourierProjection(Y16, PH16, 1);
    expectClose(f.a0, 200, T6, 'A0');
    expectClose(f.amplitude[0]!, 50, T6, 'A1');
    expectClose(f.phase[0]!, 2, T6, 'φ0');
    expectClose(f.contrast, 0.25, T6, 'RPC');
  });
  it('(i) FFT (fft.js): F1 = −166.458 735 − 363.718 971i (numpy fft value), φ0 = −arg F1 = 2', () => {
    const f = fftPhaseFit(Y16, 0, 1);
    expectClose(f.f1[0], -166.458735, 5e-6, 'Re F1');
    expectClose(f.f1[1], -363.718971, 5e-6, 'Im F1');
    expectClose(f.amplitude[0]!, 50, T6, 'A1');
    expectClose(f.phase[0]!, 2, T6, 'φ0');
  });
  it('(i) with φ_s = 0.3 the samples shift and φ0 = 0.3 − arg F1 = 2; FFT and projection agree', () => {
    const Y = PH16.map((p) => 200 + 50 * Math.cos(p + 0.3 - 2));
    const f = fftPhaseFit(Y, 0.3, 1);
    expectClose(f.phase[0]!, 2, 1e-12, 'φ0 fft');
    const g = fourierProjection(
      Y,
      PH16.map((p) => p + 0.3),
      1,
    );
    expectClose(g.phase[0]!, f.phase[0]!, 1e-12, 'fft vs projection');
    expectClose(g.amplitude[0]!, f.amplitude[0]!, 1e-12, 'A1');
    // non-power-of-two N uses the direct DFT
    const Y12 = Array.from({ length: 12 }, (_, j) => 10 + 3 * Math.cos(0.7 + (2 * Math.PI * j) / 12 - 1.1));
    expectClose(fftPhaseFit(Y12, 0.7, 1).phase[0]!, 1.1, 1e-12, 'N = 12');
  });
  it('(ii) four phases: c1 = −20.807 342, s1 = 45.464 871 → A1 = 50, φ0 = 2', () => {
    const f = fourierProjection(
      [179.192658, 245.464871, 220.807342, 154.535129],
      [0, Math.PI / 2, Math.PI, (3 * Math.PI) / 2],
      1,
    );
    expectClose(f.amplitude[0]!, 50, T6, 'A1');
    expectClose(f.phase[0]!, 2, T6, 'φ0');
  });
  it('(iii) unequal phases by least squares: a = 200, b = −20.807 342, c = 45.464 871', () => {
    const f = leastSquaresPhaseFit(
      [183.835522, 222.679806, 250.0, 243.879128, 183.835522, 150.043242],
      [0.1, 0.9, 2.0, 2.5, 3.9, 5.1],
      1,
    );
    expectClose(f.a0, 200, T6, 'a');
    expectClose(f.amplitude[0]! * Math.cos(f.phase[0]!), -20.807342, T6, 'b');
    expectClose(f.amplitude[0]! * Math.sin(f.phase[0]!), 45.464871, T6, 'c');
    expectClose(f.phase[0]!, 2, T6, 'φ0');
  });
  it('(iv) fixed Poisson counts: A0 = 196.5625, A1 = 41.132 503, φ0 = 2.007 788, RPC = 0.209 259', () => {
    const counts = [186, 190, 192, 228, 249, 227, 251, 222, 211, 189, 196, 157, 153, 168, 164, 162];
    for (const f of [
      fourierProjection(counts, PH16, 1),
      fftPhaseFit(counts, 0, 1),
      leastSquaresPhaseFit(counts, PH16, 1),
    ]) {
      expect(f.a0).toBeCloseTo(196.5625, 10);
      expectClose(f.amplitude[0]!, 41.132503, 5e-7, 'A1');
      expectClose(f.phase[0]!, 2.007788, 5e-7, 'φ0');
      expectClose(f.contrast, 0.209259, 5e-7, 'RPC');
    }
  });
});

describe('delay → phase (SCIENCE.md §6.1) [computed]', () => {
  it('2ω = 4.709 13 rad/fs at 800 nm; T/2 = 1.334 256 fs gives 2π; the sign follows delay_sign', () => {
    expectClose(delayToPhaseRad(1, 800, 1), 4.70913, 5e-6, '2ω');
    expectClose(delayToPhaseRad(1.334256, 800, -1), -2 * Math.PI, 5e-6, 'T/2');
    expect(() => delayToPhaseRad(1, 800, 0 as 1)).toThrow(/±1/);
  });
  it('sampling rules: whole periods → projection; resolvable harmonics', () => {
    expect(wholePeriodSampling(PH16)).toEqual({ equal: true, periods: 1 });
    expect(wholePeriodSampling([0, 1, 2]).equal).toBe(false);
    expect(wholePeriodSampling(Array.from({ length: 8 }, (_, j) => (4 * Math.PI * j) / 8)).periods).toBeCloseTo(2, 12);
    expect(resolvableHarmonics(PH16, 8)).toBe(7);
    expect(resolvableHarmonics([0, Math.PI / 2, Math.PI, (3 * Math.PI) / 2], 2)).toBe(1);
    expect(resolvableHarmonics([0.1, 0.9, 2.0, 2.5, 3.9, 5.1], 3)).toBe(2);
  });
});

interface PhaseCase {
  phases: number[];
  frames: number[][];
  A0: number[];
  A1: number[];
  phi0: number[];
  A2: number[];
  psi2: number[];
}
const fx: { ny: number; nx: number; fourier: PhaseCase; least_squares: PhaseCase } = JSON.parse(
  readFileSync(path.join(import.meta.dirname, '../../fixtures/numpy/phase_maps.json'), 'utf8'),
);

describe('streaming per-pixel maps against numpy (tests/fixtures/numpy/phase_maps.py)', () => {
  it.each(['fourier', 'least_squares'] as const)('%s case: A0, A1, φ0, A2, ψ2 per pixel', (name) => {
    const c = fx[name];
    const n = fx.nx * fx.ny;
    const acc = createPhaseAccumulator(n, 2);
    c.frames.forEach((f, j) => {
      acc.addFrame(Float32Array.from(f), c.phases[j]!);
    });
    const r = acc.finish({ minCounts: 0 });
    expect(r.method).toBe(name);
    for (let i = 0; i < n; i++) {
      // float32 maps: 2e-7 relative (plus the float32 rounding of the angle)
      expectClose(r.maps.mean[i]!, c.A0[i]!, 2e-7 * c.A0[i]!, `A0 ${i}`);
      expectClose(r.maps.amplitude[i]!, c.A1[i]!, 2e-7 * c.A0[i]!, `A1 ${i}`);
      expectClose(wrapRad(r.maps.phase_of_max[i]! - c.phi0[i]!), 0, 3e-6 * (c.A0[i]! / c.A1[i]!), `φ0 ${i}`);
      expectClose(r.maps.harmonic_2_amplitude![i]!, c.A2[i]!, 2e-7 * c.A0[i]!, `A2 ${i}`);
      if (c.A2[i]! > 1)
        expectClose(wrapRad(r.maps.harmonic_2_phase![i]! - c.psi2[i]!), 0, 3e-6 * (c.A0[i]! / c.A2[i]!), `ψ2 ${i}`);
    }
  });
  it('fourier case with H = 1 and Float64Array frames: A0, A1, φ0 per pixel (projection is per harmonic)', () => {
    // reference: numpy.fft (tests/fixtures/numpy/phase_maps.py); whole-period equal sampling makes the first-harmonic
    // projection independent of H, so the same values hold for H = 1
    const c = fx.fourier;
    const n = fx.nx * fx.ny;
    const acc = createPhaseAccumulator(n, 1);
    c.frames.forEach((f, j) => {
      acc.addFrame(Float64Array.from(f), c.phases[j]!);
    });
    const r = acc.finish({ minCounts: 0 });
    expect(r.method).toBe('fourier');
    expect(r.maps.harmonic_2_amplitude).toBeUndefined();
    for (let i = 0; i < n; i++) {
      expectClose(r.maps.mean[i]!, c.A0[i]!, 2e-7 * c.A0[i]!, `A0 ${i}`);
      expectClose(r.maps.amplitude[i]!, c.A1[i]!, 2e-7 * c.A0[i]!, `A1 ${i}`);
      expectClose(wrapRad(r.maps.phase_of_max[i]! - c.phi0[i]!), 0, 3e-6 * (c.A0[i]! / c.A1[i]!), `φ0 ${i}`);
      expectClose(r.maps.contrast[i]!, c.A1[i]! / c.A0[i]!, 4e-7 * (c.A1[i]! / c.A0[i]!) + 1e-9, `contrast ${i}`);
    }
  });
  it('pixels below min_counts are NaN except in the mean map', () => {
    const c = fx.fourier;
    const acc = createPhaseAccumulator(fx.nx * fx.ny, 1);
    c.frames.forEach((f, j) => {
      acc.addFrame(f, c.phases[j]!);
    });
    const thr = 150;
    const r = acc.finish({ minCounts: thr });
    let masked = 0;
    for (let i = 0; i < fx.nx * fx.ny; i++) {
      if (c.A0[i]! < thr) {
        masked++;
        expect(Number.isNaN(r.maps.amplitude[i]!) && Number.isNaN(r.maps.phase_of_max[i]!)).toBe(true);
        expect(Number.isNaN(r.maps.mean[i]!)).toBe(false);
      } else {
        expect(Number.isFinite(r.maps.contrast[i]!)).toBe(true);
      }
    }
    expect(r.masked).toBe(masked);
    expect(r.maps.harmonic_2_amplitude).toBeUndefined();
  });
  it('kernel: stride and offset of the frame; errors name the bad value', () => {
    const acc = new Float64Array(3);
    //                    idx: 0  1  2
    accumulateHarmonicsKernel(1, Float64Array.of(0, 0, 5), 1, 2, 1, [0.5], [0.25], acc);
    expect(Array.from(acc)).toEqual([5, 2.5, 1.25]);
    const a = createPhaseAccumulator(4, 1);
    expect(() => a.addFrame([1, 2], 0)).toThrow(/4 elements/);
    expect(() => a.addFrame([1, 2, 3, 4], Number.NaN)).toThrow(/NaN/);
    a.addFrame([1, 2, 3, 4], 0);
    expect(() => a.finish({ minCounts: 0 })).toThrow(/3 distinct phases/);
  });
});
