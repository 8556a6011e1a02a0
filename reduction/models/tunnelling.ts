/**
 * Static tunnelling and the tunnel exit (SCIENCE.md §10.1–§10.2), the first stage of the classical
 * Coulomb-corrected model of the offset angle. Atomic units throughout; single active electron, residual charge Z.
 *
 * - ADK rate [M. V. Ammosov, N. B. Delone, V. P. Krainov, Sov. Phys. JETP 64, 1191 (1986); form of X. M. Tong,
 *   Z. X. Zhao, C. D. Lin, Phys. Rev. A 66, 033402 (2002)]:
 *   w(F) = |C_{n*l*}|² G_{lm} Ip (2κ³/F)^{2n*−|m|−1} exp(−2κ³/(3F)), κ = √(2Ip), n* = Z/κ, l* = n* − 1,
 *   |C|² = 2^{2n*} / [n* Γ(n*+l*+1) Γ(n*−l*)], G_{lm} = (2l+1)(l+|m|)! / [2^{|m|} |m|! (l−|m|)!].
 *   Optional barrier-suppression correction w·exp[−α (Z²/Ip)(F/κ³)] [X. M. Tong, C. D. Lin, J. Phys. B 38, 2593
 *   (2005)], α atom-dependent (of order 6–9).
 * - Transverse momentum at the exit [Delone & Krainov, JOSA B 8, 1207 (1991)]: σ⊥ = √(F/2κ) per component.
 * - Tunnel exits: triangular barrier Ip/F; field direction (1-D Coulomb + field) [Ip + √(Ip² − 4ZF)]/(2F), real
 *   only below F = Ip²/(4Z); parabolic coordinates: the outer real root η of Fη³ − 2Ipη² + 4β₂η + (1 − m²) = 0 with
 *   β₂ = Z − (1 + |m|)κ/2, exit r ≈ η/2 [Landau & Lifshitz §§37, 77; SCIENCE.md notes the β₂ choice as recalled
 *   from A. N. Pfeiffer et al., Nature Phys. 8, 76 (2012)].
 */
import { HARTREE_EV } from '../constants';

// TYPES //

/** The bound state the electron tunnels from. */
export interface BoundState {
  /** Ionization potential, hartree. */
  ipAu: number;
  /** Charge of the residual ion (1 for single ionization). */
  z: number;
  l: number;
  m: number;
}

export type ExitModel = 'triangular' | 'field_direction' | 'parabolic';

// CONSTANTS //

/** Orbital quantum numbers of the outermost electron of the noble gases (common practice). */
const NOBLE_GAS_L: Readonly<Record<string, number>> = { H: 0, He: 0, Ne: 1, Ar: 1, Kr: 1, Xe: 1 };

// FUNCTIONS //

/** Γ(x) for x > 0 by the Lanczos approximation (g = 7, 9 terms; relative error ≈ 1e-15). */
export function gamma(x: number): number {
  if (!(x > 0)) throw new RangeError(`gamma needs x > 0, got ${x}`);
  if (x < 0.5) return Math.PI / (Math.sin(Math.PI * x) * gamma(1 - x));
  const c = [
    0.999_999_999_999_809_9, 676.520_368_121_885_1, -1259.139_216_722_402_8, 771.323_428_777_653_1,
    -176.615_029_162_140_6, 12.507_343_278_686_905, -0.138_571_095_265_720_12, 9.984_369_578_019_572e-6,
    1.505_632_735_149_311_6e-7,
  ];
  const y = x - 1;
  let a = c[0]!;
  const t = y + 7.5;
  for (let i = 1; i < 9; i++) a += c[i]! / (y + i);
  return Math.sqrt(2 * Math.PI) * t ** (y + 0.5) * Math.exp(-t) * a;
}

function factorial(n: number): number {
  let f = 1;
  for (let i = 2; i <= n; i++) f *= i;
  return f;
}

/**
 * The bound state of a named noble-gas target (or H) from Lobeline's ionization-energy table, m = 0.
 *
 * @returns the state, or null for a target without a known l (molecules)
 */
export function boundStateOf(target: string, ipEv: number, m = 0): BoundState | null {
  const l = NOBLE_GAS_L[target];
  if (l === undefined) return null;
  return { ipAu: ipEv / HARTREE_EV, z: 1, l, m };
}

/** κ = √(2Ip) and n* = Z/κ. */
export function effectiveQuantumNumbers(s: BoundState): { kappa: number; nStar: number } {
  const kappa = Math.sqrt(2 * s.ipAu);
  return { kappa, nStar: s.z / kappa };
}

/**
 * Static ADK tunnelling rate (a.u., per atomic unit of time) in a field of magnitude F (a.u.).
 *
 * @param tongLinAlpha - α of the barrier-suppression correction, or null for plain ADK
 * @example
 * adkRate(0.05, { ipAu: 0.5, z: 1, l: 0, m: 0 }); // returns 1.295677e-4 (= (4/F) exp(−2/3F), SCIENCE §10.1)
 */
export function adkRate(f: number, s: BoundState, tongLinAlpha: number | null = null): number {
  if (!(f > 0)) return 0;
  const { kappa, nStar } = effectiveQuantumNumbers(s);
  const lStar = nStar - 1;
  const m = Math.abs(s.m);
  const c2 = 2 ** (2 * nStar) / (nStar * gamma(nStar + lStar + 1) * gamma(nStar - lStar));
  const g = ((2 * s.l + 1) * factorial(s.l + m)) / (2 ** m * factorial(m) * factorial(s.l - m));
  const k3 = kappa ** 3;
  let w = c2 * g * s.ipAu * ((2 * k3) / f) ** (2 * nStar - m - 1) * Math.exp((-2 * k3) / (3 * f));
  if (tongLinAlpha !== null) w *= Math.exp(-tongLinAlpha * ((s.z * s.z) / s.ipAu) * (f / k3));
  return w;
}

/** Barrier-suppression field κ⁴/(16 Z), a.u. */
export function barrierSuppressionField(s: BoundState): number {
  return effectiveQuantumNumbers(s).kappa ** 4 / (16 * s.z);
}

/** σ of each Cartesian component of the transverse momentum at the exit, √(F/2κ) (a.u.). */
export function transverseSigmaAu(f: number, s: BoundState): number {
  return Math.sqrt(f / (2 * effectiveQuantumNumbers(s).kappa));
}

/** β₂ = Z − (1 + |m|)κ/2 of the parabolic-coordinate exit. */
export function parabolicBeta2(s: BoundState): number {
  return s.z - ((1 + Math.abs(s.m)) * effectiveQuantumNumbers(s).kappa) / 2;
}

/**
 * Tunnel-exit radius (bohr) in a field F (a.u.) by the chosen model.
 *
 * @returns the radius, or null when the model has no real exit at this field (field direction above Ip²/4Z,
 *   parabolic without a real root beyond the barrier)
 */
export function tunnelExitRadius(f: number, s: BoundState, model: ExitModel): number | null {
  if (!(f > 0)) return null;
  const ip = s.ipAu;
  if (model === 'triangular') return ip / f;
  if (model === 'field_direction') {
    const disc = ip * ip - 4 * s.z * f;
    return disc < 0 ? null : (ip + Math.sqrt(disc)) / (2 * f);
  }
  // parabolic: outer real root of p(η) = Fη³ − 2Ipη² + 4β₂η + (1 − m²)
  const b2 = parabolicBeta2(s);
  const c0 = 1 - s.m * s.m;
  const p = (eta: number) => ((f * eta - 2 * ip) * eta + 4 * b2) * eta + c0;
  const dp = (eta: number) => (3 * f * eta - 4 * ip) * eta + 4 * b2;
  // p → +∞ as η → ∞; the outer root lies below 2Ip/F + a margin (where Fη³ dominates 2Ipη²). Bisect down from there
  // in steps to find the last sign change, then refine with Newton inside that bracket.
  let hi = (2 * ip) / f + 4 * Math.sqrt(Math.abs(b2) / f) + 1;
  if (p(hi) <= 0) return null;
  const steps = 4000;
  const dEta = hi / steps;
  let lo = hi - dEta;
  while (lo > 0 && p(lo) > 0) {
    hi = lo;
    lo -= dEta;
  }
  if (lo <= 0) return null; // no sign change beyond the origin: no outer turning point
  let eta = (lo + hi) / 2;
  for (let i = 0; i < 60; i++) {
    const v = p(eta);
    if (v > 0) hi = eta;
    else lo = eta;
    let next = eta - v / dp(eta);
    if (!(next > lo && next < hi)) next = (lo + hi) / 2;
    if (Math.abs(next - eta) < 1e-13 * eta) {
      eta = next;
      break;
    }
    eta = next;
  }
  return eta / 2;
}
