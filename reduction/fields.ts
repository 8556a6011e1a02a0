/**
 * Laser-field models: amplitudes from intensity, ponderomotive energy, Keldysh parameter, simple-man's drift
 * momenta and lobe directions, in-situ intensity from a lobe radius, and evaluators of E(t) and A(t).
 *
 * Conventions (SCIENCE.md §0): C1 lab frame with z along the laser; the formulas are written with x along the
 * ellipse's major axis and rotated into the lab by `majorAxisDeg` (FORMATS §1: `major_axis_angle`); C3 helicity
 * h = sign[ẑ·(E × dE/dt)]; C4 ε = F_minor/F_major ∈ [0, 1] plus separate h; C5 intensity = cycle-averaged, total
 * over both field components (and both colours) unless `intensityConvention` says otherwise; C6 p_final = −A(t₀)
 * with E = −dA/dt; C9 bicircular E = F₁(cos ωt, h₁ sin ωt) + F₂(cos(2ωt+φ), −h₁ sin(2ωt+φ)).
 *
 * Units: atomic units (field, momentum, time, energy) unless the name carries a unit (`Wcm2`, `Nm`, `Deg`, `Rad`).
 */
import { wrapDeg } from './angles';
import { I_AU_CIRC_WCM2, I_AU_LIN_WCM2, omegaAu } from './constants';

// TYPES //

/** Experiment kinds (FORMATS §1). */
export type FieldKind = 'angular_streaking' | 'bicircular' | 'two_color_phase' | 'image';

/**
 * Intensity conventions (SCIENCE.md C5):
 * - `cycle_averaged_total` (default): cycle-averaged intensity summed over both field components and both colours;
 * - `linear_equivalent`: I = ½ε₀cF_major² (elliptical: major-axis amplitude only; bicircular: F₁ only, linear units);
 * - `per_colour`: the intensity of the ω colour alone, I₁ = ε₀cF₁² (bicircular; elliptical treats it as the total).
 */
export type IntensityConvention = 'cycle_averaged_total' | 'linear_equivalent' | 'per_colour';

/** Inputs of the simple-man direction rules. */
export interface SimpleManDirectionParams {
  kind: FieldKind;
  /** Lab azimuth of the field ellipse's major axis (bicircular: of the x axis of C9), degrees. */
  majorAxisDeg: number;
  /** h (elliptical) or h₁ (bicircular, helicity of the ω field); null when unknown. */
  helicity: 1 | -1 | null;
  /** F(2ω)/F(ω) (bicircular and two-colour); null when not stated. */
  fieldRatio: number | null;
  /** ω–2ω relative phase φ of C9 (attached to the 2ω field), rad. */
  relativePhaseRad: number;
}

/** Inputs of the simple-man momentum / intensity conversions. */
export interface SimpleManMomentumParams {
  kind: FieldKind;
  /** Intensity, W cm⁻², in `intensityConvention` (default cycle-averaged total, C5). */
  intensityWcm2: number;
  wavelengthNm: number;
  /** ε ∈ [0, 1] (elliptical only). */
  ellipticity: number | null;
  /** F(2ω)/F(ω) (bicircular only). */
  fieldRatio: number | null;
  intensityConvention?: IntensityConvention | string;
}

/** Inputs of `intensityFromRadiusWcm2`. */
export interface IntensityFromRadiusParams {
  kind: FieldKind;
  /** Measured lobe radius |p|, a.u. */
  radiusAu: number;
  wavelengthNm: number;
  ellipticity: number | null;
  fieldRatio: number | null;
  intensityConvention?: IntensityConvention | string;
}

/** Elliptical field (SCIENCE.md §4.1) with optional cos² envelope. */
export interface EllipticalFieldParams {
  /** Major-axis amplitude F_a, a.u. */
  fMajorAu: number;
  /** ε = F_b/F_a ∈ [0, 1]. */
  ellipticity: number;
  /** h = ±1 (C3). */
  helicity: 1 | -1;
  /** ω, a.u. */
  omegaAu: number;
  /** Lab azimuth of the major axis, degrees (default 0). */
  majorAxisDeg?: number;
  /** Carrier-envelope phase φ_CE, rad (default 0). */
  cepRad?: number;
  /** Total duration τ_p of a cos²(πt/τ_p) envelope, a.u.; omitted or ≤ 0 means constant envelope f = 1. */
  envelopeDurationAu?: number;
}

/** Counter-rotating bicircular ω + 2ω field (SCIENCE.md §5.1, C9) with optional cos² envelope. */
export interface BicircularFieldParams {
  /** |F₁|, magnitude of the ω rotating vector, a.u. */
  f1Au: number;
  /** |F₂|, magnitude of the 2ω rotating vector, a.u. */
  f2Au: number;
  /** h₁ = ±1, helicity of the ω field; the 2ω field has −h₁. */
  helicity: 1 | -1;
  /** ω of the fundamental, a.u. */
  omegaAu: number;
  /** Relative phase φ attached to the 2ω field, rad. */
  relativePhaseRad: number;
  /** Lab azimuth of the x axis of C9, degrees (default 0). */
  majorAxisDeg?: number;
  /** Total duration τ_p of a cos² envelope, a.u.; omitted or ≤ 0 means constant envelope. */
  envelopeDurationAu?: number;
}

// FUNCTIONS //

function requireFinite(name: string, value: unknown): number {
  if (typeof value !== 'number') throw new TypeError(`${name} must be a number, got ${typeof value}`);
  if (!Number.isFinite(value)) throw new RangeError(`${name} must be finite, got ${value}`);
  return value;
}

function requireNonNegative(name: string, value: unknown): number {
  const v = requireFinite(name, value);
  if (v < 0) throw new RangeError(`${name} must be ≥ 0, got ${v}`);
  return v;
}

function requireEllipticity(value: unknown): number {
  const v = requireFinite('ellipticity', value);
  if (v < 0 || v > 1) throw new RangeError(`ellipticity must be in [0, 1], got ${v}`);
  return v;
}

function isElliptical(kind: FieldKind): boolean {
  return kind === 'angular_streaking';
}

/**
 * Major- and minor-axis field amplitudes of elliptical light from its cycle-averaged total intensity (C5):
 * I = I_au,lin F_a² (1 + ε²), F_b = ε F_a (SCIENCE.md §1.2).
 *
 * @param intensityWcm2 - cycle-averaged total intensity, W cm⁻² (≥ 0)
 * @param ellipticity - ε ∈ [0, 1] (0 linear, 1 circular)
 * @returns `{ fMajorAu, fMinorAu }` in a.u. of field
 * @throws {RangeError} for negative/non-finite intensity or ε outside [0, 1]
 * @example
 * ellipticalFieldAmplitudes(4e14, 0.87); // returns { fMajorAu: ≈0.080545, fMinorAu: ≈0.070074 } (SCIENCE.md §4.3)
 */
export function ellipticalFieldAmplitudes(
  intensityWcm2: number,
  ellipticity: number,
): { fMajorAu: number; fMinorAu: number } {
  requireNonNegative('intensityWcm2', intensityWcm2);
  const eps = requireEllipticity(ellipticity);
  const fMajorAu = Math.sqrt(intensityWcm2 / (I_AU_LIN_WCM2 * (1 + eps * eps)));
  return { fMajorAu, fMinorAu: eps * fMajorAu };
}

/**
 * Ponderomotive energy Up = ⟨A²⟩/2 = I/(4 I_au,lin ω²) in a.u. for the cycle-averaged total intensity I; it does
 * not depend on the polarization at fixed I (SCIENCE.md §2.1).
 *
 * @param intensityWcm2 - cycle-averaged total intensity, W cm⁻²
 * @param wavelengthNm - wavelength, nm
 * @returns Up, hartree
 * @example
 * ponderomotiveEnergyAu(1e14, 800); // returns ≈ 0.219609 (= 5.97587 eV, SCIENCE.md §2.1)
 */
export function ponderomotiveEnergyAu(intensityWcm2: number, wavelengthNm: number): number {
  requireNonNegative('intensityWcm2', intensityWcm2);
  const w = omegaAu(wavelengthNm);
  return intensityWcm2 / I_AU_LIN_WCM2 / (4 * w * w);
}

/**
 * Keldysh parameter γ = ω √(2 Ip) / F (SCIENCE.md §2.2). F is the peak field for linear light; for circular or
 * elliptical light pass the instantaneous field magnitude at ionization (F_a, or |E| for circular) and say so.
 *
 * @param ipAu - ionization energy, hartree (> 0)
 * @param fieldAu - field amplitude, a.u. (> 0)
 * @param omegaAuValue - angular frequency, a.u. (> 0)
 * @returns γ (dimensionless)
 * @example
 * keldyshParameter(0.9035699, 0.05338027, 0.05695419); // returns ≈ 1.43430 (He, SCIENCE.md §2.2)
 */
export function keldyshParameter(ipAu: number, fieldAu: number, omegaAuValue: number): number {
  for (const [n, v] of [
    ['ipAu', ipAu],
    ['fieldAu', fieldAu],
    ['omegaAu', omegaAuValue],
  ] as const) {
    if (requireFinite(n, v) <= 0) throw new RangeError(`${n} must be > 0, got ${v}`);
  }
  return (omegaAuValue * Math.sqrt(2 * ipAu)) / fieldAu;
}

/**
 * Simple-man lobe directions in the lab frame, degrees in (−180, 180].
 *
 * - `angular_streaking` (elliptical, §4.2): [φ_major − h·90°, φ_major + 180° − h·90°]. With h unknown the set
 *   is the same for both helicities; h = +1 is used for the order (offsets can then not be signed).
 * - `bicircular` (§5.2): φ_SM,k = majorAxis + θ_k − h₁·90° for F₂ < 2F₁, θ_k + h₁·90° for F₂ > 2F₁, with
 *   θ_k = h₁(360°k − φ)/3, k = 0, 1, 2; empty when h₁ or the ratio is unknown or F₂ = 2F₁ (p_SM = 0).
 * - `two_color_phase`, `image`: [].
 *
 * @param params - kind, major axis (deg), helicity, field ratio, relative phase (rad)
 * @returns the directions, one per lobe (k order)
 * @example
 * simpleManDirectionsDeg({ kind: 'bicircular', majorAxisDeg: 0, helicity: 1, fieldRatio: 1, relativePhaseRad: 1 });
 * // returns ≈ [-109.0986, 10.9014, 130.9014] (SCIENCE.md §5.4; −109.0986 ≡ 250.9014)
 */
export function simpleManDirectionsDeg(params: SimpleManDirectionParams): number[] {
  const major = requireFinite('majorAxisDeg', params.majorAxisDeg);
  if (isElliptical(params.kind)) {
    const h = params.helicity ?? 1;
    return [wrapDeg(major - h * 90), wrapDeg(major + 180 - h * 90)];
  }
  if (params.kind === 'bicircular') {
    const h1 = params.helicity;
    const r = params.fieldRatio;
    if (h1 === null || r === null) return [];
    requireNonNegative('fieldRatio', r);
    if (r === 2) return [];
    const phiDeg = (requireFinite('relativePhaseRad', params.relativePhaseRad) * 180) / Math.PI;
    const side = r < 2 ? -h1 : h1;
    const out: number[] = [];
    for (let k = 0; k < 3; k++) {
      const theta = (h1 * (360 * k - phiDeg)) / 3;
      out.push(wrapDeg(major + theta + side * 90));
    }
    return out;
  }
  return [];
}

/**
 * Reference sense s of the offset angles (SCIENCE.md §4.6): s = sign[ẑ·(p_SM × E(t₀))].
 * Elliptical: s = h. Bicircular: s = +h₁ for F₂ < 2F₁ and −h₁ for F₂ > 2F₁. Unknown helicity, and the kinds
 * without lobes, give +1 (the caller must then warn that offsets are not signed).
 *
 * @param params - as for {@link simpleManDirectionsDeg}
 * @returns +1 or −1
 */
export function offsetSense(params: SimpleManDirectionParams): 1 | -1 {
  const h = params.helicity;
  if (h === null) return 1;
  if (isElliptical(params.kind)) return h;
  if (params.kind === 'bicircular') {
    const r = params.fieldRatio;
    if (r !== null && r > 2) return h === 1 ? -1 : 1;
    return h;
  }
  return 1;
}

/**
 * ω-field amplitude F₁ of a bicircular field from the stated intensity.
 * `cycle_averaged_total` (default): I = I_au,circ (F₁² + F₂²) = I_au,circ F₁² (1 + r²);
 * `per_colour`: I = I_au,circ F₁²; `linear_equivalent`: I = I_au,lin F₁².
 */
function bicircularF1(intensityWcm2: number, r: number, convention: string): number {
  if (convention === 'per_colour') return Math.sqrt(intensityWcm2 / I_AU_CIRC_WCM2);
  if (convention === 'linear_equivalent') return Math.sqrt(intensityWcm2 / I_AU_LIN_WCM2);
  return Math.sqrt(intensityWcm2 / (I_AU_CIRC_WCM2 * (1 + r * r)));
}

/** Inverse of {@link bicircularF1}. */
function bicircularIntensity(f1: number, r: number, convention: string): number {
  if (convention === 'per_colour') return I_AU_CIRC_WCM2 * f1 * f1;
  if (convention === 'linear_equivalent') return I_AU_LIN_WCM2 * f1 * f1;
  return I_AU_CIRC_WCM2 * f1 * f1 * (1 + r * r);
}

/** Major-axis amplitude of elliptical light for the stated convention (`linear_equivalent`: I = I_au,lin F_a²). */
function ellipticalFa(intensityWcm2: number, eps: number, convention: string): number {
  if (convention === 'linear_equivalent') return Math.sqrt(intensityWcm2 / I_AU_LIN_WCM2);
  return Math.sqrt(intensityWcm2 / (I_AU_LIN_WCM2 * (1 + eps * eps)));
}

function ellipticalIntensity(fa: number, eps: number, convention: string): number {
  if (convention === 'linear_equivalent') return I_AU_LIN_WCM2 * fa * fa;
  return I_AU_LIN_WCM2 * fa * fa * (1 + eps * eps);
}

/**
 * Simple-man drift momentum |p_SM| at the field maximum, a.u.
 * - elliptical (§4.2): ε F_a / ω (along the minor axis), F_a from the intensity in its convention (C5);
 * - bicircular (§5.2): |F₁/ω − F₂/(2ω)| with F₂ = r F₁; the default intensity is the total of both colours,
 *   I = I_au,circ F₁²(1 + r²); `per_colour` means the ω colour alone;
 * - other kinds: NaN (no simple-man radius).
 *
 * @param params - kind, intensity (W cm⁻²), wavelength (nm), ε, field ratio, convention
 * @returns |p_SM|, a.u.
 * @throws {RangeError} when a needed value is missing or out of range
 * @example
 * simpleManMomentumAu({ kind: 'angular_streaking', intensityWcm2: 4e14, wavelengthNm: 800, ellipticity: 0.87,
 *   fieldRatio: null }); // returns ≈ 1.230356 (SCIENCE.md §4.3)
 */
export function simpleManMomentumAu(params: SimpleManMomentumParams): number {
  const I = requireNonNegative('intensityWcm2', params.intensityWcm2);
  const w = omegaAu(params.wavelengthNm);
  const conv = params.intensityConvention ?? 'cycle_averaged_total';
  if (isElliptical(params.kind)) {
    if (params.ellipticity === null) throw new RangeError('ellipticity is required for angular_streaking, got null');
    const eps = requireEllipticity(params.ellipticity);
    return (eps * ellipticalFa(I, eps, conv)) / w;
  }
  if (params.kind === 'bicircular') {
    if (params.fieldRatio === null) throw new RangeError('fieldRatio is required for bicircular, got null');
    const r = requireNonNegative('fieldRatio', params.fieldRatio);
    const f1 = bicircularF1(I, r, conv);
    return Math.abs(f1 / w - (r * f1) / (2 * w));
  }
  return Number.NaN;
}

/**
 * Adiabatic in-situ intensity from a measured lobe radius (no Coulomb or non-adiabatic correction), W cm⁻², in the
 * stated convention (default cycle-averaged total, C5).
 * - elliptical/circular (§4.3): F_a = ω p / ε, I = I_au,lin F_a² (1 + ε²) (circular: 2 I_au,lin (ωp)²);
 * - bicircular (§5.1, §5.2): F₁ = ω p / |1 − r/2|, I = I_au,circ F₁² (1 + r²) (total of both colours);
 * - null when it does not apply (ε = 0 or unknown, r = 2 or unknown, non-finite radius, image/two-colour kinds).
 *
 * @param params - kind, radius (a.u.), wavelength (nm), ε, field ratio, convention
 * @returns intensity, W cm⁻², or null
 * @example
 * intensityFromRadiusWcm2({ kind: 'angular_streaking', radiusAu: 1, wavelengthNm: 800, ellipticity: 1,
 *   fieldRatio: null }); // returns ≈ 2.27677e14 (SCIENCE.md §4.3)
 */
export function intensityFromRadiusWcm2(params: IntensityFromRadiusParams): number | null {
  const p = params.radiusAu;
  if (typeof p !== 'number' || !Number.isFinite(p) || p < 0) return null;
  const w = omegaAu(params.wavelengthNm);
  const conv = params.intensityConvention ?? 'cycle_averaged_total';
  if (isElliptical(params.kind)) {
    const eps = params.ellipticity;
    if (eps === null || !Number.isFinite(eps) || eps <= 0 || eps > 1) return null;
    const fa = (w * p) / eps;
    return ellipticalIntensity(fa, eps, conv);
  }
  if (params.kind === 'bicircular') {
    const r = params.fieldRatio;
    if (r === null || !Number.isFinite(r) || r < 0 || r === 2) return null;
    const f1 = (w * p) / Math.abs(1 - r / 2);
    return bicircularIntensity(f1, r, conv);
  }
  return null;
}

/**
 * Field amplitudes (F₁, F₂) of a bicircular field from the intensity in its convention (default: total of both
 * colours, I = I_au,circ(F₁² + F₂²)).
 *
 * @param intensityWcm2 - intensity, W cm⁻²
 * @param fieldRatio - r = F₂/F₁ ≥ 0
 * @param intensityConvention - C5 convention (default `cycle_averaged_total`)
 * @returns `{ f1Au, f2Au }`
 * @example
 * bicircularFieldAmplitudes(2e14, 1); // returns { f1Au: ≈0.03774555, f2Au: ≈0.03774555 } (SCIENCE.md §5.4)
 */
export function bicircularFieldAmplitudes(
  intensityWcm2: number,
  fieldRatio: number,
  intensityConvention: IntensityConvention | string = 'cycle_averaged_total',
): { f1Au: number; f2Au: number } {
  requireNonNegative('intensityWcm2', intensityWcm2);
  const r = requireNonNegative('fieldRatio', fieldRatio);
  const f1Au = bicircularF1(intensityWcm2, r, intensityConvention);
  return { f1Au, f2Au: r * f1Au };
}

/** cos² envelope f(t) = cos²(πt/τ) for |t| < τ/2 (else 0) and its derivative; τ ≤ 0 or undefined → f = 1. */
function envelope(tAu: number, tauAu: number | undefined): [number, number] {
  if (tauAu === undefined || !(tauAu > 0)) return [1, 0];
  if (Math.abs(tAu) >= tauAu / 2) return [0, 0];
  const x = (Math.PI * tAu) / tauAu;
  const c = Math.cos(x);
  return [c * c, (-Math.PI / tauAu) * Math.sin(2 * x)];
}

function rotateInto(out: Float64Array | number[], x: number, y: number, majorAxisDeg: number | undefined): void {
  if (!majorAxisDeg) {
    out[0] = x;
    out[1] = y;
    return;
  }
  const a = (majorAxisDeg * Math.PI) / 180;
  const c = Math.cos(a);
  const s = Math.sin(a);
  out[0] = c * x - s * y;
  out[1] = s * x + c * y;
}

/**
 * Vector potential of the elliptical field of SCIENCE.md §4.1 in the lab frame:
 * A(t) = −(F_a/ω) f(t) [sin(ωt+φ_CE), −hε cos(ωt+φ_CE)], rotated by the major-axis azimuth.
 * The simple-man final momentum of an electron born at t₀ is −A(t₀) (C6).
 *
 * @param tAu - time, a.u.
 * @param p - field parameters
 * @param out - output [Ax, Ay] (a.u.), written in place (default: new Float64Array(2))
 * @returns `out`
 * @example
 * vectorPotentialEllipticalAu(0, { fMajorAu: 0.080545, ellipticity: 0.87, helicity: 1, omegaAu: 0.05695419 });
 * // returns [0, ≈1.230356]  (so −A(0) = (0, −1.230356), along −hŷ, SCIENCE.md §4.2)
 */
export function vectorPotentialEllipticalAu(
  tAu: number,
  p: EllipticalFieldParams,
  out: Float64Array | number[] = new Float64Array(2),
): Float64Array | number[] {
  const [f] = envelope(tAu, p.envelopeDurationAu);
  const ph = p.omegaAu * tAu + (p.cepRad ?? 0);
  const a = (p.fMajorAu / p.omegaAu) * f;
  rotateInto(out, -a * Math.sin(ph), a * p.helicity * p.ellipticity * Math.cos(ph), p.majorAxisDeg);
  return out;
}

/**
 * Electric field E = −dA/dt of {@link vectorPotentialEllipticalAu} (exact, including the envelope-derivative
 * term): E = F_a f [cos ψ, hε sin ψ] + (F_a/ω) f′ [sin ψ, −hε cos ψ], ψ = ωt + φ_CE, rotated into the lab.
 *
 * @param tAu - time, a.u.
 * @param p - field parameters
 * @param out - output [Ex, Ey] (a.u.)
 * @returns `out`
 * @example
 * electricFieldEllipticalAu(0, { fMajorAu: 0.08, ellipticity: 0.5, helicity: 1, omegaAu: 0.057 }); // returns [0.08, 0]
 */
export function electricFieldEllipticalAu(
  tAu: number,
  p: EllipticalFieldParams,
  out: Float64Array | number[] = new Float64Array(2),
): Float64Array | number[] {
  const [f, df] = envelope(tAu, p.envelopeDurationAu);
  const ph = p.omegaAu * tAu + (p.cepRad ?? 0);
  const c = Math.cos(ph);
  const s = Math.sin(ph);
  const he = p.helicity * p.ellipticity;
  const k = p.fMajorAu / p.omegaAu;
  rotateInto(out, p.fMajorAu * f * c + k * df * s, p.fMajorAu * f * he * s - k * df * he * c, p.majorAxisDeg);
  return out;
}

/**
 * Vector potential of the counter-rotating bicircular field (SCIENCE.md §5.1, C9) in the lab frame:
 * A(t) = f(t){ −(F₁/ω)[sin ωt, −h₁ cos ωt] − (F₂/2ω)[sin(2ωt+φ), h₁ cos(2ωt+φ)] }.
 *
 * @param tAu - time, a.u.
 * @param p - field parameters
 * @param out - output [Ax, Ay] (a.u.)
 * @returns `out`
 */
export function vectorPotentialBicircularAu(
  tAu: number,
  p: BicircularFieldParams,
  out: Float64Array | number[] = new Float64Array(2),
): Float64Array | number[] {
  const [f] = envelope(tAu, p.envelopeDurationAu);
  const w = p.omegaAu;
  const h = p.helicity;
  const a1 = p.f1Au / w;
  const a2 = p.f2Au / (2 * w);
  const p1 = w * tAu;
  const p2 = 2 * w * tAu + p.relativePhaseRad;
  const ax = -a1 * Math.sin(p1) - a2 * Math.sin(p2);
  const ay = a1 * h * Math.cos(p1) - a2 * h * Math.cos(p2);
  rotateInto(out, f * ax, f * ay, p.majorAxisDeg);
  return out;
}

/**
 * Electric field E = −dA/dt of {@link vectorPotentialBicircularAu} (exact with the envelope):
 * constant envelope gives E = F₁[cos ωt, h₁ sin ωt] + F₂[cos(2ωt+φ), −h₁ sin(2ωt+φ)].
 *
 * @param tAu - time, a.u.
 * @param p - field parameters
 * @param out - output [Ex, Ey] (a.u.)
 * @returns `out`
 */
export function electricFieldBicircularAu(
  tAu: number,
  p: BicircularFieldParams,
  out: Float64Array | number[] = new Float64Array(2),
): Float64Array | number[] {
  const [f, df] = envelope(tAu, p.envelopeDurationAu);
  const w = p.omegaAu;
  const h = p.helicity;
  const p1 = w * tAu;
  const p2 = 2 * w * tAu + p.relativePhaseRad;
  // carrier field g(t) = −dA₀/dt and carrier potential A₀(t); E = f g − f′ A₀
  const gx = p.f1Au * Math.cos(p1) + p.f2Au * Math.cos(p2);
  const gy = p.f1Au * h * Math.sin(p1) - p.f2Au * h * Math.sin(p2);
  const a1 = p.f1Au / w;
  const a2 = p.f2Au / (2 * w);
  const ax = -a1 * Math.sin(p1) - a2 * Math.sin(p2);
  const ay = a1 * h * Math.cos(p1) - a2 * h * Math.cos(p2);
  rotateInto(out, f * gx - df * ax, f * gy - df * ay, p.majorAxisDeg);
  return out;
}

/**
 * Times of maximum |E| of the bicircular field, t_k = (2πk − φ)/(3ω), k = 0, 1, 2 (SCIENCE.md §5.2), a.u.
 *
 * @param omegaAuValue - ω, a.u.
 * @param relativePhaseRad - φ, rad
 * @returns [t₀, t₁, t₂]
 */
export function bicircularMaximaTimesAu(omegaAuValue: number, relativePhaseRad: number): number[] {
  return [0, 1, 2].map((k) => (2 * Math.PI * k - relativePhaseRad) / (3 * omegaAuValue));
}
