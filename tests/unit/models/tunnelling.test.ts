/**
 * Static tunnelling rate and tunnel exits against the check values of SCIENCE.md §10.1 and §10.2 (computed there by
 * `sec10a.py` from the ADK formula of Ammosov, Delone & Krainov, Sov. Phys. JETP 64, 1191 (1986), in the form of
 * Tong, Zhao & Lin, PRA 66, 033402 (2002)), and the exact hydrogen identity w = (4/F) exp(−2/3F) the section names.
 * Ionization energies from Lobeline's table (NIST ASD values, SCIENCE.md §3).
 */
import { describe, expect, it } from 'vitest';
import { IONIZATION_ENERGIES_EV } from '@/reduction/constants';
import {
  adkRate,
  type BoundState,
  barrierSuppressionField,
  boundStateOf,
  effectiveQuantumNumbers,
  gamma,
  parabolicBeta2,
  transverseSigmaAu,
  tunnelExitRadius,
} from '@/reduction/models/tunnelling';

const H: BoundState = { ipAu: 0.5, z: 1, l: 0, m: 0 }; // infinite-mass hydrogen, as §10.1's first rows
const He = boundStateOf('He', IONIZATION_ENERGIES_EV.He!.ev)!;
const Ar = boundStateOf('Ar', IONIZATION_ENERGIES_EV.Ar!.ev)!;

const STATES: Record<string, BoundState> = { H, He, Ar };
const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('Γ (Lanczos)', () => {
  it('Γ(½) = √π, Γ(5) = 24, Γ(1.5) = √π/2 (handbook values)', () => {
    expect(rel(gamma(0.5), Math.sqrt(Math.PI))).toBeLessThan(1e-13);
    expect(rel(gamma(5), 24)).toBeLessThan(1e-13);
    expect(rel(gamma(1.5), Math.sqrt(Math.PI) / 2)).toBeLessThan(1e-13);
  });
});

describe('ADK rate (SCIENCE.md §10.1 check values)', () => {
  it('effective quantum numbers of He and Ar as the table gives them', () => {
    expect(effectiveQuantumNumbers(He).nStar).toBeCloseTo(0.743882, 6);
    expect(effectiveQuantumNumbers(Ar).nStar).toBeCloseTo(0.929154, 6);
  });
  it.each([
    ['H', 0.05, 1.295677e-4],
    ['H', 0.1, 5.090535e-2],
    ['He', 0.05, 3.069696e-13],
    ['He', 0.08, 4.600122e-8],
    ['He', 0.1, 2.365442e-6],
    ['Ar', 0.05, 1.238405e-5],
    ['Ar', 0.08, 4.213915e-3],
    ['Ar', 0.1, 2.778737e-2],
  ])('%s at F = %s a.u.: w = %s a.u.', (name, f, w) => {
    const s = STATES[name]!;
    expect(rel(adkRate(f, s), w)).toBeLessThan(2e-6); // the table's 7 significant digits
  });
  it('hydrogen is the exact (4/F) exp(−2/3F)', () => {
    for (const f of [0.02, 0.05, 0.1]) expect(rel(adkRate(f, H), (4 / f) * Math.exp(-2 / (3 * f)))).toBeLessThan(1e-12);
  });
  it('He at 0.10 a.u. is 9.78×10¹⁰ s⁻¹ (a.u. of time 2.418 884×10⁻¹⁷ s, CODATA 2018)', () => {
    expect(adkRate(0.1, He) / 2.4188843265857e-17).toBeCloseTo(9.78e10, -8);
  });
  it('the barrier-suppression correction only lowers the rate, more at higher field', () => {
    const r1 = adkRate(0.05, Ar, 9) / adkRate(0.05, Ar);
    const r2 = adkRate(0.1, Ar, 9) / adkRate(0.1, Ar);
    expect(r1).toBeLessThan(1);
    expect(r2).toBeLessThan(r1);
  });
  it('barrier-suppression fields: He 0.204, Ar 0.0839, H 0.0625 a.u. (§10.1)', () => {
    expect(barrierSuppressionField(He)).toBeCloseTo(0.204, 3);
    expect(barrierSuppressionField(Ar)).toBeCloseTo(0.0839, 4);
    expect(barrierSuppressionField(H)).toBeCloseTo(0.0625, 10);
  });
  it('transverse width √(F/2κ) (Delone & Krainov 1991)', () => {
    expect(transverseSigmaAu(0.08, H)).toBeCloseTo(Math.sqrt(0.04), 12);
  });
});

describe('tunnel exits (SCIENCE.md §10.2 table, m = 0)', () => {
  it('β₂ of He and Ar', () => {
    expect(parabolicBeta2(He)).toBeCloseTo(0.32785, 5);
    expect(parabolicBeta2(Ar)).toBeCloseTo(0.46188, 5);
  });
  it.each([
    ['He', 0.05, 18.0714, 16.8871, 17.6928],
    ['He', 0.08, 11.2946, 10.051, 10.9057],
    ['He', 0.1, 9.0357, 7.7445, 8.6395],
    ['Ar', 0.05, 11.5831, 9.4715, 10.6978],
    ['Ar', 0.08, 7.2394, 4.3958, 6.2806],
    ['Ar', 0.1, 5.7916, null, 4.7678],
  ])('%s at F = %s: Ip/F %s, field direction %s, parabolic %s', (name, f, tri, dir, par) => {
    const s = STATES[name]!;
    expect(tunnelExitRadius(f, s, 'triangular')).toBeCloseTo(tri, 4);
    const d = tunnelExitRadius(f, s, 'field_direction');
    if (dir === null)
      expect(d).toBeNull(); // "no real root" above Ip²/4Z
    else expect(d).toBeCloseTo(dir, 4);
    expect(tunnelExitRadius(f, s, 'parabolic')).toBeCloseTo(par, 4);
  });
});
