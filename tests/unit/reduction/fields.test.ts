import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { wrapDeg } from '@/reduction/angles';
import { HARTREE_EV, I_AU_LIN_WCM2, ionizationEnergyEv, omegaAu } from '@/reduction/constants';
import {
  bicircularFieldAmplitudes,
  bicircularMaximaTimesAu,
  electricFieldBicircularAu,
  electricFieldEllipticalAu,
  ellipticalFieldAmplitudes,
  intensityFromRadiusWcm2,
  keldyshParameter,
  offsetSense,
  ponderomotiveEnergyAu,
  simpleManDirectionsDeg,
  simpleManMomentumAu,
  vectorPotentialBicircularAu,
  vectorPotentialEllipticalAu,
} from '@/reduction/fields';
import { expectClose, expectRel } from './helpers/close';

const W800 = omegaAu(800);

describe('field amplitudes from intensity (SCIENCE.md §1.2) [computed]', () => {
  it('linear F0 at 1e14 W/cm² = 0.053 380 27 a.u.; circular |E| = 0.037 745 55', () => {
    expectClose(ellipticalFieldAmplitudes(1e14, 0).fMajorAu, 0.05338027, 5e-9, 'linear');
    expectClose(ellipticalFieldAmplitudes(1e14, 1).fMajorAu, 0.03774555, 5e-9, 'circular');
  });
  it('elliptical 4e14, ε = 0.87: F_a = 0.080 545, F_b = 0.070 074 (SCIENCE.md §4.3)', () => {
    const f = ellipticalFieldAmplitudes(4e14, 0.87);
    expectClose(f.fMajorAu, 0.080545, 5e-7, 'F_a');
    expectClose(f.fMinorAu, 0.070074, 5e-7, 'F_b');
    // I = I_au,lin F_a²(1+ε²) back again
    expectRel(I_AU_LIN_WCM2 * f.fMajorAu ** 2 * (1 + 0.87 ** 2), 4e14, 1e-15, 'I');
  });
  it('rejects ε outside [0, 1] and negative intensity', () => {
    expect(() => ellipticalFieldAmplitudes(1e14, 1.2)).toThrow(/1\.2/);
    expect(() => ellipticalFieldAmplitudes(-1, 0.5)).toThrow(RangeError);
  });
});

describe('Up and Keldysh parameter (SCIENCE.md §2) [computed]', () => {
  it('Up(800 nm, 1e14) = 0.219 609 a.u. = 5.975 87 eV', () => {
    expectClose(ponderomotiveEnergyAu(1e14, 800), 0.219609, 5e-7, 'Up a.u.');
    expectClose(ponderomotiveEnergyAu(1e14, 800) * HARTREE_EV, 5.97587, 5e-6, 'Up eV');
  });
  it.each([
    [400, 1.49397],
    [1300, 15.78],
    [1800, 30.2528],
  ])('Up at %d nm, 1e14 W/cm² = %f eV', (lambda, ev) => {
    expectClose(ponderomotiveEnergyAu(1e14, lambda) * HARTREE_EV, ev, 5e-5, `Up ${lambda}`);
  });
  it('engineering form Up[eV] = 9.337 29e-14 I λ²[µm²]', () => {
    expectRel(ponderomotiveEnergyAu(3e14, 1300) * HARTREE_EV, 9.33729e-14 * 3e14 * 1.3 ** 2, 2e-6, 'Up');
  });
  it('γ He = 1.434 30, Ar = 1.148 31 (linear); circular He 2.028 41, Ar 1.623 95', () => {
    const he = ionizationEnergyEv('He')! / HARTREE_EV;
    const ar = ionizationEnergyEv('Ar')! / HARTREE_EV;
    expectClose(keldyshParameter(he, 0.05338027, W800), 1.4343, 5e-5, 'He');
    expectClose(keldyshParameter(ar, 0.05338027, W800), 1.14831, 5e-5, 'Ar');
    expectClose(keldyshParameter(he, 0.03774555, W800), 2.02841, 5e-5, 'He circ');
    expectClose(keldyshParameter(ar, 0.03774555, W800), 1.62395, 5e-5, 'Ar circ');
  });
  it('γ = √(Ip/(2Up)) with the linear Up', () => {
    const he = ionizationEnergyEv('He')! / HARTREE_EV;
    expectRel(keldyshParameter(he, 0.05338027, W800), Math.sqrt(he / (2 * 0.219609)), 3e-6, 'γ');
    expect(() => keldyshParameter(0, 0.05, W800)).toThrow(/ipAu/);
  });
});

describe('torus radius ↔ intensity (SCIENCE.md §4.3) [computed]', () => {
  it.each([
    [1.0, 2.27677e14],
    [0.8, 1.45714e14],
    [1.2, 3.27855e14],
  ])('circular 800 nm, p0 = %f → I = %d W/cm²', (p, I) => {
    const got = intensityFromRadiusWcm2({
      kind: 'angular_streaking',
      radiusAu: p,
      wavelengthNm: 800,
      ellipticity: 1,
      fieldRatio: null,
    });
    // the table quotes 6 significant digits: half a unit of the last digit is 5e8 W/cm²
    expectClose(got!, I, 5e8, `p0=${p}`);
  });
  it('inverse: I = 1e14 → p0 = 0.662 735; 4e14 → 1.325 470', () => {
    const p = (I: number) =>
      simpleManMomentumAu({
        kind: 'angular_streaking',
        intensityWcm2: I,
        wavelengthNm: 800,
        ellipticity: 1,
        fieldRatio: null,
      });
    expectClose(p(1e14), 0.662735, 5e-7, '1e14');
    expectClose(p(4e14), 1.32547, 5e-6, '4e14');
  });
  it('elliptical He example: p_minor = 1.230 356 a.u. and back to 4e14', () => {
    const p = simpleManMomentumAu({
      kind: 'angular_streaking',
      intensityWcm2: 4e14,
      wavelengthNm: 800,
      ellipticity: 0.87,
      fieldRatio: null,
    });
    expectClose(p, 1.230356, 5e-7, 'p_minor');
    const I = intensityFromRadiusWcm2({
      kind: 'angular_streaking',
      radiusAu: p,
      wavelengthNm: 800,
      ellipticity: 0.87,
      fieldRatio: null,
    });
    expectRel(I!, 4e14, 1e-14, 'round trip');
  });
  it('returns null where the radius does not give an intensity', () => {
    const base = { radiusAu: 1, wavelengthNm: 800, fieldRatio: null } as const;
    expect(intensityFromRadiusWcm2({ ...base, kind: 'angular_streaking', ellipticity: 0 })).toBeNull();
    expect(intensityFromRadiusWcm2({ ...base, kind: 'angular_streaking', ellipticity: null })).toBeNull();
    expect(intensityFromRadiusWcm2({ ...base, kind: 'image', ellipticity: 1 })).toBeNull();
    expect(intensityFromRadiusWcm2({ ...base, kind: 'bicircular', ellipticity: null, fieldRatio: 2 })).toBeNull();
  });
  it('property: intensity from radius inverts the simple-man momentum (elliptical and bicircular)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 1e12, max: 1e16, noNaN: true }),
        fc.double({ min: 0.05, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 1.9, noNaN: true }),
        (I, eps, r) => {
          const pe = simpleManMomentumAu({
            kind: 'angular_streaking',
            intensityWcm2: I,
            wavelengthNm: 1300,
            ellipticity: eps,
            fieldRatio: null,
          });
          const Ie = intensityFromRadiusWcm2({
            kind: 'angular_streaking',
            radiusAu: pe,
            wavelengthNm: 1300,
            ellipticity: eps,
            fieldRatio: null,
          })!;
          const pb = simpleManMomentumAu({
            kind: 'bicircular',
            intensityWcm2: I,
            wavelengthNm: 800,
            ellipticity: null,
            fieldRatio: r,
          });
          const Ib = intensityFromRadiusWcm2({
            kind: 'bicircular',
            radiusAu: pb,
            wavelengthNm: 800,
            ellipticity: null,
            fieldRatio: r,
          })!;
          return Math.abs(Ie / I - 1) < 1e-12 && Math.abs(Ib / I - 1) < 1e-12;
        },
      ),
    );
  });
});

describe('elliptical simple-man directions (SCIENCE.md §4.2)', () => {
  const base = { kind: 'angular_streaking', majorAxisDeg: 0, fieldRatio: null, relativePhaseRad: 0 } as const;
  it('φ_SM = φ_major − h·90° and +180°', () => {
    expect(simpleManDirectionsDeg({ ...base, helicity: 1 })).toEqual([-90, 90]);
    expect(simpleManDirectionsDeg({ ...base, helicity: -1 })).toEqual([90, -90]);
    expect(simpleManDirectionsDeg({ ...base, helicity: 1, majorAxisDeg: 30 })).toEqual([-60, 120]);
    expect(offsetSense({ ...base, helicity: -1 })).toBe(-1);
    expect(offsetSense({ ...base, helicity: null })).toBe(1);
  });
  it('−A(0) = (0, −1.230 356) for h = +1 (He example, SCIENCE.md §4.2) [computed]', () => {
    const { fMajorAu } = ellipticalFieldAmplitudes(4e14, 0.87);
    const a = vectorPotentialEllipticalAu(0, { fMajorAu, ellipticity: 0.87, helicity: 1, omegaAu: W800 });
    expectClose(-a[0]!, 0, 1e-15, 'px');
    expectClose(-a[1]!, -1.230356, 5e-7, 'py');
  });
  it('p_final = −A(t0) is ⊥ E(t0) and lags E by h·90° at every birth time [derived]', () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 110, noNaN: true }), fc.constantFrom(1 as const, -1 as const), (t, h) => {
        const p = { fMajorAu: 0.06, ellipticity: 1, helicity: h, omegaAu: W800, majorAxisDeg: 20 };
        const a = vectorPotentialEllipticalAu(t, p);
        const e = electricFieldEllipticalAu(t, p);
        const angP = (Math.atan2(-a[1]!, -a[0]!) * 180) / Math.PI;
        const angE = (Math.atan2(e[1]!, e[0]!) * 180) / Math.PI;
        return Math.abs(wrapDeg(angP - (angE - h * 90))) < 1e-9;
      }),
    );
  });
  it('E = −dA/dt including the cos² envelope (central differences) [derived]', () => {
    const p = {
      fMajorAu: 0.08,
      ellipticity: 0.7,
      helicity: -1 as const,
      omegaAu: W800,
      cepRad: 0.4,
      envelopeDurationAu: 882.56,
      majorAxisDeg: 15,
    };
    for (const t of [-300, -40, 0, 13.7, 250]) {
      const d = 1e-4;
      const ap = vectorPotentialEllipticalAu(t + d, p);
      const am = vectorPotentialEllipticalAu(t - d, p);
      const e = electricFieldEllipticalAu(t, p);
      for (const k of [0, 1]) expectClose(e[k]!, -(ap[k]! - am[k]!) / (2 * d), 1e-9, `t=${t} k=${k}`);
    }
  });
});

describe('bicircular field (SCIENCE.md §5) [computed]', () => {
  const F = bicircularFieldAmplitudes(2e14, 1); // 1e14 per colour = 2e14 total
  it('1e14 + 1e14 W/cm² (total 2e14): F1 = F2 = 0.037 745 55', () => {
    expectClose(F.f1Au, 0.03774555, 5e-9, 'F1');
    expectClose(F.f2Au, 0.03774555, 5e-9, 'F2');
    expect(bicircularFieldAmplitudes(1e14, 1, 'per_colour').f1Au).toBeCloseTo(0.03774555, 8);
  });
  it.each([
    [0, [-90, 30, 150]],
    [Math.PI / 2, [0, 120, 240]],
    [1, [10.9014, 130.9014, 250.9014]],
  ])('lobes at φ = %f rad (h1 = +1)', (phi, expected) => {
    const got = simpleManDirectionsDeg({
      kind: 'bicircular',
      majorAxisDeg: 0,
      helicity: 1,
      fieldRatio: 1,
      relativePhaseRad: phi,
    });
    const sortedGot = got.map((g) => ((g % 360) + 360) % 360).sort((a, b) => a - b);
    const sortedExp = expected.map((g) => ((g % 360) + 360) % 360).sort((a, b) => a - b);
    sortedGot.forEach((g, i) => {
      expectClose(g, sortedExp[i]!, 5e-5, `lobe ${i}`);
    });
  });
  it('|p_SM| = 0.331 368 a.u. and −A(t_k) points along the lobe direction', () => {
    expectClose(
      simpleManMomentumAu({
        kind: 'bicircular',
        intensityWcm2: 2e14,
        wavelengthNm: 800,
        ellipticity: null,
        fieldRatio: 1,
      }),
      0.331368,
      5e-7,
      '|p|',
    );
    const params = { f1Au: F.f1Au, f2Au: F.f2Au, helicity: 1 as const, omegaAu: W800, relativePhaseRad: 1 };
    const dirs = simpleManDirectionsDeg({
      kind: 'bicircular',
      majorAxisDeg: 0,
      helicity: 1,
      fieldRatio: 1,
      relativePhaseRad: 1,
    });
    bicircularMaximaTimesAu(W800, 1).forEach((t, k) => {
      const a = vectorPotentialBicircularAu(t, params);
      expectClose(Math.hypot(a[0]!, a[1]!), 0.331368, 5e-7, `|A(t${k})|`);
      const ang = (Math.atan2(-a[1]!, -a[0]!) * 180) / Math.PI;
      expectClose(wrapDeg(ang - dirs[k]!), 0, 1e-9, `dir ${k}`);
      const e = electricFieldBicircularAu(t, params);
      expectClose(Math.hypot(e[0]!, e[1]!), 0.0754911, 5e-7, '|E|max');
    });
  });
  it('F2/F1 = 0.5: |p_SM| = 0.497 051 a.u.', () => {
    const I = 0.03774555 ** 2 * 7.018891e16 * 1.25; // total of F1 = 0.03774555 and F2 = F1/2
    expectClose(
      simpleManMomentumAu({
        kind: 'bicircular',
        intensityWcm2: I,
        wavelengthNm: 800,
        ellipticity: null,
        fieldRatio: 0.5,
      }),
      0.497051,
      1e-6,
      '|p|',
    );
  });
  it('rotation law dφ_SM/dφ = −h1·19.0986° per rad (property over φ and h1)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: -10, max: 10, noNaN: true }),
        fc.double({ min: -2, max: 2, noNaN: true }),
        fc.constantFrom(1 as const, -1 as const),
        (phi, dphi, h) => {
          const at = (x: number) =>
            simpleManDirectionsDeg({
              kind: 'bicircular',
              majorAxisDeg: 0,
              helicity: h,
              fieldRatio: 0.8,
              relativePhaseRad: x,
            })[0]!;
          const rot = wrapDeg(at(phi + dphi) - at(phi), 120);
          return Math.abs(wrapDeg(rot - -h * 19.09859317 * dphi, 120)) < 1e-6;
        },
      ),
    );
  });
  it('F2 > 2F1 flips the side (θ_k + h1·90°) and the sense s = −h1 (SCIENCE.md §4.6, §5.2)', () => {
    const dirs = simpleManDirectionsDeg({
      kind: 'bicircular',
      majorAxisDeg: 0,
      helicity: 1,
      fieldRatio: 3,
      relativePhaseRad: 0,
    });
    expect(dirs.map((d) => Math.round(d))).toEqual([90, -150, -30]);
    expect(offsetSense({ kind: 'bicircular', majorAxisDeg: 0, helicity: 1, fieldRatio: 3, relativePhaseRad: 0 })).toBe(
      -1,
    );
    expect(offsetSense({ kind: 'bicircular', majorAxisDeg: 0, helicity: -1, fieldRatio: 1, relativePhaseRad: 0 })).toBe(
      -1,
    );
    // check with the vector potential: −A(t0) for F2 = 3F1
    const a = vectorPotentialBicircularAu(0, {
      f1Au: 0.02,
      f2Au: 0.06,
      helicity: 1,
      omegaAu: W800,
      relativePhaseRad: 0,
    });
    expectClose((Math.atan2(-a[1]!, -a[0]!) * 180) / Math.PI, 90, 1e-9, 'direction');
    expect(
      simpleManDirectionsDeg({ kind: 'bicircular', majorAxisDeg: 0, helicity: 1, fieldRatio: 2, relativePhaseRad: 0 }),
    ).toEqual([]);
    expect(
      simpleManDirectionsDeg({ kind: 'image', majorAxisDeg: 0, helicity: 1, fieldRatio: 2, relativePhaseRad: 0 }),
    ).toEqual([]);
  });
  it('s = sign[ẑ·(p_SM × E(t0))] = +h1 for F2 < 2F1 from the field itself', () => {
    for (const h of [1, -1] as const) {
      const p = { f1Au: 0.04, f2Au: 0.03, helicity: h, omegaAu: W800, relativePhaseRad: 0.7 };
      const t = bicircularMaximaTimesAu(W800, 0.7)[1]!;
      const a = vectorPotentialBicircularAu(t, p);
      const e = electricFieldBicircularAu(t, p);
      const cross = -a[0]! * e[1]! - -a[1]! * e[0]!;
      expect(Math.sign(cross)).toBe(
        offsetSense({ kind: 'bicircular', majorAxisDeg: 0, helicity: h, fieldRatio: 0.75, relativePhaseRad: 0.7 }),
      );
    }
  });
});
