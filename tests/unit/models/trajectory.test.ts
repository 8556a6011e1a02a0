/**
 * Classical trajectories against SCIENCE.md §10.4 (Kepler asymptote, three cases checked there by integrating the
 * Kepler motion to t = 2×10⁶ a.u., `sec10a.py`), §10.5 (single-trajectory reference, `sec10b.py`: He, 800 nm,
 * ε = 0.87, cos² pulse of 8 cycles, DOP853) and §10.6 (Keldysh–Rutherford estimate, Bray, Eckart & Kheifets,
 * PRL 121, 123201 (2018)). Field amplitudes from the total intensity (C5) as reduction/fields.ts computes them.
 */
import { describe, expect, it } from 'vitest';
import { IONIZATION_ENERGIES_EV, omegaAu } from '@/reduction/constants';
import { ellipticalFieldAmplitudes } from '@/reduction/fields';
import { integrateDopri5, keldyshRutherfordDeg, keplerAsymptote, runTrajectory } from '@/reduction/models/trajectory';
import { type BoundState, boundStateOf } from '@/reduction/models/tunnelling';

describe('Kepler asymptote (SCIENCE.md §10.4: the order L × a)', () => {
  it.each([
    [[5, -3, 1], [0.2, 0.9, -0.1], 1, [-0.090802, 0.70855, -0.107935]],
    [[-12, 4, 0], [0.1, -0.6, 0], 1, [0.266426, -0.375371, 0]],
    [[8, 0, 0], [0, 0.8, 0], 2, [-0.23985, 0.287179, 0]],
  ] as const)('r = %j, v = %j, Z = %d → p∞ = %j', (r, v, z, p) => {
    const got = keplerAsymptote([...r], [...v], z)!;
    for (let i = 0; i < 3; i++) expect(got[i]).toBeCloseTo(p[i]!, 6);
  });
  it('a bound electron (E ≤ 0) has no asymptote', () => {
    expect(keplerAsymptote([2, 0, 0], [0, 0.5, 0], 1)).toBeNull();
  });
  it('agrees with integrating the Kepler motion itself (Dormand–Prince, to t = 2×10⁵ a.u.)', () => {
    const z = 1;
    const rhs = (_t: number, y: Float64Array, out: Float64Array) => {
      const r2 = y[0]! ** 2 + y[1]! ** 2 + y[2]! ** 2;
      const k = -z / (r2 * Math.sqrt(r2));
      out.set([y[3]!, y[4]!, y[5]!, k * y[0]!, k * y[1]!, k * y[2]!]);
    };
    const { y } = integrateDopri5(rhs, 0, [5, -3, 1, 0.2, 0.9, -0.1], 2e5, 1e-12);
    const far = keplerAsymptote([y[0]!, y[1]!, y[2]!], [y[3]!, y[4]!, y[5]!], z)!;
    const near = keplerAsymptote([5, -3, 1], [0.2, 0.9, -0.1], z)!;
    for (let i = 0; i < 3; i++) expect(far[i]).toBeCloseTo(near[i]!, 8); // the asymptote is a constant of the motion
  });
});

function heliumCase(intensity: number, wavelengthNm: number, eps: number, target = 'He') {
  const w = omegaAu(wavelengthNm);
  const { fMajorAu } = ellipticalFieldAmplitudes(intensity, eps);
  const state =
    target === 'H'
      ? ({ ipAu: 0.5, z: 1, l: 0, m: 0 } as BoundState)
      : boundStateOf(target, IONIZATION_ENERGIES_EV[target]!.ev)!;
  const field = {
    fMajorAu,
    ellipticity: eps,
    helicity: 1 as const,
    omegaAu: w,
    envelopeDurationAu: (8 * 2 * Math.PI) / w,
  };
  return { field, state, fMajorAu, w };
}

describe('single-trajectory reference (SCIENCE.md §10.5)', () => {
  const { field, state, fMajorAu } = heliumCase(4e14, 800, 0.87);
  it('the inputs as the section states them', () => {
    expect(fMajorAu).toBeCloseTo(0.080545, 6);
    expect(field.envelopeDurationAu).toBeCloseTo(882.56, 2);
    expect(state.ipAu).toBeCloseTo(0.9035699, 7);
  });
  it('triangular exit: θ_off = +5.286°, |p⊥| = 1.215 14, simple-man −90° with |p_SM| = 1.230 36', () => {
    const r = runTrajectory({ field, state, t0: 0, exit: 'triangular' });
    expect(Math.atan2(r.pSimpleMan[1], r.pSimpleMan[0]) * (180 / Math.PI)).toBeCloseTo(-90, 9);
    expect(Math.hypot(...r.pSimpleMan)).toBeCloseTo(1.23036, 5);
    expect(r.offsetDeg!).toBeCloseTo(5.286, 3);
    expect(r.pPlaneAu!).toBeCloseTo(1.21514, 5);
  });
  it('parabolic exit: θ_off = +5.583°, |p| = 1.215 20', () => {
    const r = runTrajectory({ field, state, t0: 0, exit: 'parabolic' });
    expect(r.offsetDeg!).toBeCloseTo(5.583, 3);
    expect(Math.hypot(...r.pFinal!)).toBeCloseTo(1.2152, 4);
  });
  it('without the Coulomb field (Z = 10⁻⁹) the electron goes the simple-man way', () => {
    const r = runTrajectory({ field, state: { ...state, z: 1e-9 }, t0: 0, exit: 'triangular' });
    expect(Math.abs(r.offsetDeg!)).toBeLessThan(1e-6);
    expect(r.pPlaneAu!).toBeCloseTo(1.23036, 5);
  });
  it.each([
    ['He', 2e14, 800, 0.87, 5.523, 5.722],
    ['He', 8e14, 800, 0.87, 5.252, 5.71],
    ['He', 4e14, 1300, 0.87, 3.157, 3.337],
    ['He', 4e14, 800, 1.0, 4.526, 4.762],
    ['Ar', 1e14, 800, 0.87, 11.589, 12.682],
    ['H', 2e14, 770, 0.85, 14.73, 18.891],
  ] as const)('%s, %s W/cm², %s nm, ε = %s: θ_off %s° (Ip/F exit), %s° (parabolic)', (t, i, wl, eps, tri, par) => {
    const c = heliumCase(i, wl, eps, t);
    expect(runTrajectory({ field: c.field, state: c.state, t0: 0, exit: 'triangular' }).offsetDeg!).toBeCloseTo(tri, 2);
    expect(runTrajectory({ field: c.field, state: c.state, t0: 0, exit: 'parabolic' }).offsetDeg!).toBeCloseTo(par, 2);
  });
});

describe('Keldysh–Rutherford estimate (SCIENCE.md §10.6 columns of the §10.5 table)', () => {
  it.each([
    ['He', 2e14, 800, 0.87, 3.607],
    ['He', 4e14, 800, 0.87, 2.552],
    ['He', 4e14, 1300, 0.87, 0.967],
    ['Ar', 1e14, 800, 0.87, 7.918],
    ['H', 2e14, 770, 0.85, 6.942],
  ] as const)('%s, %s W/cm², %s nm, ε = %s: Θ/2 = %s°', (t, i, wl, eps, half) => {
    const c = heliumCase(i, wl, eps, t);
    const kr = keldyshRutherfordDeg(c.w, c.fMajorAu, c.state);
    expect(kr.half).toBeCloseTo(half, 3);
    expect(kr.full).toBeCloseTo(2 * kr.half, 12);
  });
});

describe('ensemble (SCIENCE.md §10.7 procedure)', () => {
  it('without the Coulomb field the most-probable direction is the simple-man one, within its fit error', async () => {
    const { runEnsemble } = await import('@/reduction/models/ensemble');
    const c = heliumCase(4e14, 800, 0.87);
    const r = runEnsemble({ field: c.field, state: { ...c.state, z: 1e-9 }, trajectories: 6000, seed: 3 });
    expect(r.offsetErrDeg).not.toBeNull();
    expect(Math.abs(r.offsetDeg)).toBeLessThan(4 * r.offsetErrDeg! + 0.05);
    expect(r.boundFraction).toBe(0);
    // the lobe is spread by the birth-time window (time-to-angle mapping of §4.2, ≈ ωτ/ε): tens of degrees
    expect(r.widthDeg).toBeGreaterThan(10);
    expect(r.widthDeg).toBeLessThan(60);
  });
});
