import { describe, expect, expectTypeOf, it } from 'vitest';
import * as C from '@/reduction/constants';
import { EPS, expectClose, expectRel } from './helpers/close';

describe('CODATA 2018 constants', () => {
  it('stores the table values of SCIENCE.md §1.1 exactly [CODATA18]', () => {
    expect(C.HARTREE_EV).toBe(27.211386245988);
    expect(C.BOHR_M).toBe(5.29177210903e-11);
    expect(C.AU_TIME_S).toBe(2.4188843265857e-17);
    expect(C.AU_FIELD_V_PER_M).toBe(5.14220674763e11);
    expect(C.AU_MOMENTUM_SI).toBe(1.9928519141e-24);
    expect(C.SPEED_OF_LIGHT_M_S).toBe(299792458);
  });

  it('derived units reproduce the CODATA table (SCIENCE.md §1.1 consistency check) [CODATA18]', () => {
    // E_h/e in eV from the J value, ħ/E_h, E_h/(e a0), ħ/a0 — to the 9–12 digits quoted
    expectRel(C.HARTREE_J / C.ELEMENTARY_CHARGE_C, C.HARTREE_EV, 1e-11, 'E_h/e');
    const hbar = C.PLANCK_J_S / (2 * Math.PI);
    expectRel(hbar / C.HARTREE_J, C.AU_TIME_S, 1e-11, 'ħ/E_h');
    expectRel(C.HARTREE_J / (C.ELEMENTARY_CHARGE_C * C.BOHR_M), C.AU_FIELD_V_PER_M, 1e-10, 'E_h/(e a0)');
    expectRel(hbar / C.BOHR_M, C.AU_MOMENTUM_SI, 1e-10, 'ħ/a0');
  });

  it('hc = 1239.841 984 eV nm (exact from exact h, c, e) [CODATA18]', () => {
    expectClose(C.HC_EV_NM, 1239.841984332, 1e-9, 'hc');
  });

  it('intensity units of SCIENCE.md §1.2 [computed, CODATA18]', () => {
    expectRel(C.I_AU_LIN_WCM2, 3.5094455e16, 2e-8, 'I_au,lin');
    expectRel(C.I_AU_CIRC_WCM2, 7.018891e16, 2e-8, 'I_au,circ');
    expectRel(C.I_AU_FLUX_WCM2, 6.4364099e15, 2e-8, 'I_au,flux');
    expect(C.I_AU_CIRC_WCM2).toBe(2 * C.I_AU_LIN_WCM2);
  });
});

describe('photon energy, ω and period (SCIENCE.md §1.3 table) [computed]', () => {
  const rows: [number, number, number, number, number][] = [
    // λ nm, ħω eV, ω a.u., T fs, T a.u.
    [400, 3.099605, 0.1139084, 1.33426, 55.16],
    [800, 1.549802, 0.0569542, 2.66851, 110.32],
    [1300, 0.953725, 0.0350487, 4.33633, 179.27],
    [1800, 0.688801, 0.025313, 6.00415, 248.22],
  ];
  it.each(rows)('λ = %d nm', (lambda, ev, w, tfs, tau) => {
    expectClose(C.photonEnergyEv(lambda), ev, 5e-7, 'ħω');
    expectClose(C.omegaAu(lambda), w, 5e-8, 'ω');
    expectClose(C.periodFs(lambda), tfs, 5e-6, 'T fs');
    expectClose(C.periodAu(lambda), tau, 5e-3, 'T a.u.');
  });
  it('Appendix C: ω(800 nm) = 0.056 954 19 a.u.', () => {
    expectClose(C.omegaAu(800), 0.05695419, 5e-9, 'ω');
  });
  it('rejects bad wavelengths with the value in the message', () => {
    expect(() => C.photonEnergyEv(0)).toThrow(RangeError);
    expect(() => C.photonEnergyEv(-800)).toThrow(/-800/);
    expect(() => C.omegaAu(Number.NaN)).toThrow(RangeError);
    // @ts-expect-error wrong type on purpose
    expect(() => C.periodFs('800')).toThrow(TypeError);
  });
});

describe('momentum–energy conversions (SCIENCE.md §1.2) [computed]', () => {
  it('1 eV ↔ 0.271 106 a.u., 10 eV ↔ 0.857 314 a.u., 1 a.u. ↔ 13.605 693 eV', () => {
    expectClose(C.energyEvToMomentumAu(1), 0.271106, 5e-7, '1 eV');
    expectClose(C.energyEvToMomentumAu(10), 0.857314, 5e-7, '10 eV');
    expectClose(C.momentumAuToEnergyEv(1), 13.605693, 5e-7, '1 a.u.');
  });
  it('round trip to a few EPS', () => {
    for (const e of [1e-6, 0.5, 3, 150]) {
      expectRel(C.momentumAuToEnergyEv(C.energyEvToMomentumAu(e)), e, 4 * EPS, `E=${e}`);
    }
    expect(C.momentumAuToEnergyEv(-2)).toBe(C.momentumAuToEnergyEv(2));
    expect(Number.isNaN(C.energyEvToMomentumAu(-1))).toBe(true);
  });
});

describe('ionization energies (SCIENCE.md §3)', () => {
  it('table values with their source labels [ASD], [WebBook]', () => {
    expect(C.ionizationEnergyEv('He')).toBe(24.587389011);
    expect(C.ionizationEnergyEv('H')).toBe(13.598434599702);
    expect(C.ionizationEnergyEv('Ar')).toBe(15.7596119);
    expect(C.ionizationEnergyEv('N2')).toBe(15.581);
    expect(C.IONIZATION_ENERGIES_EV.O2!.source).toBe('[WebBook]');
    expect(C.IONIZATION_ENERGIES_EV.Xe!.source).toBe('[ASD]');
  });
  it('Ip in a.u. (SCIENCE.md §3 column) [computed]', () => {
    expectClose(C.ionizationEnergyEv('He')! / C.HARTREE_EV, 0.9035699, 5e-8, 'He');
    expectClose(C.ionizationEnergyEv('Ar')! / C.HARTREE_EV, 0.5791551, 5e-8, 'Ar');
    expectClose(C.ionizationEnergyEv('Kr')! / C.HARTREE_EV, 0.514476, 5e-7, 'Kr');
  });
  it('matches names case-insensitively and returns null for unknown targets', () => {
    expect(C.ionizationEnergyEv(' he ')).toBe(24.587389011);
    expect(C.ionizationEnergyEv('n2')).toBe(15.581);
    expect(C.ionizationEnergyEv('CO2')).toBeNull();
  });
  it('pins the public signatures', () => {
    expectTypeOf(C.ionizationEnergyEv).toEqualTypeOf<(target: string) => number | null>();
    expectTypeOf(C.omegaAu).parameters.toEqualTypeOf<[number]>();
  });
});
