/**
 * Physical constants (CODATA 2018) and the unit conversions Lobeline uses everywhere.
 *
 * Conventions (SCIENCE.md §0, §1): atomic units (ħ = mₑ = e = 4πε₀ = 1) unless a unit is part of the name;
 * wavelengths in nm, energies in eV where the name says `Ev`, intensities in W cm⁻² where the name says `Wcm2`.
 * The "atomic unit of intensity" is the linear one, I_au,lin = ½ ε₀ c F_au² (SCIENCE.md §1.2), unless the name
 * says `CIRC`.
 *
 * Pure module: no I/O, runs in Node and in a browser web worker.
 */

// VARIABLES //

/** Speed of light in vacuum, m s⁻¹ (exact) [CODATA18]. */
export const SPEED_OF_LIGHT_M_S = 299_792_458;

/** Planck constant, J s (exact) [CODATA18]. */
export const PLANCK_J_S = 6.626_070_15e-34;

/** Elementary charge, C (exact) [CODATA18]. */
export const ELEMENTARY_CHARGE_C = 1.602_176_634e-19;

/** Electron mass, kg [CODATA18]. */
export const ELECTRON_MASS_KG = 9.109_383_701_5e-31;

/** Vacuum electric permittivity ε₀, F m⁻¹ [CODATA18]. */
export const VACUUM_PERMITTIVITY_F_M = 8.854_187_812_8e-12;

/** Fine-structure constant α [CODATA18]. */
export const FINE_STRUCTURE = 7.297_352_569_3e-3;

/** Hartree energy E_h in eV [CODATA18]. */
export const HARTREE_EV = 27.211_386_245_988;

/** Hartree energy E_h in J [CODATA18]. */
export const HARTREE_J = 4.359_744_722_207_1e-18;

/** Bohr radius a₀ in m [CODATA18]. */
export const BOHR_M = 5.291_772_109_03e-11;

/** Atomic unit of time ħ/E_h in s [CODATA18]. */
export const AU_TIME_S = 2.418_884_326_585_7e-17;

/** Atomic unit of time in fs [CODATA18]. */
export const AU_TIME_FS = AU_TIME_S * 1e15;

/** Atomic unit of electric field E_h/(e a₀) in V m⁻¹ [CODATA18]. */
export const AU_FIELD_V_PER_M = 5.142_206_747_63e11;

/** Atomic unit of momentum ħ/a₀ in kg m s⁻¹ [CODATA18]. */
export const AU_MOMENTUM_SI = 1.992_851_914_1e-24;

/** Atomic unit of velocity αc in m s⁻¹ [CODATA18]. */
export const AU_VELOCITY_M_S = 2.187_691_263_64e6;

/** Atomic unit of magnetic flux density ħ/(e a₀²) in T [CODATA18]. */
export const AU_MAGNETIC_T = 2.350_517_567_58e5;

/** hc in eV nm, exact from the exact h, c and e [CODATA18]: 1239.841 984 332 eV nm. */
export const HC_EV_NM = ((PLANCK_J_S * SPEED_OF_LIGHT_M_S) / ELEMENTARY_CHARGE_C) * 1e9;

/**
 * Linear atomic unit of intensity I_au,lin = ½ ε₀ c F_au² in W cm⁻² (SCIENCE.md §1.2, default):
 * the cycle-averaged intensity of a linearly polarized wave of peak field 1 a.u. ≈ 3.509 445 5 × 10¹⁶ W cm⁻².
 */
export const I_AU_LIN_WCM2 = (0.5 * VACUUM_PERMITTIVITY_F_M * SPEED_OF_LIGHT_M_S * AU_FIELD_V_PER_M ** 2) / 1e4;

/**
 * Circular atomic unit of intensity I_au,circ = ε₀ c F_au² = 2 I_au,lin in W cm⁻² (SCIENCE.md §1.2):
 * a circularly polarized wave whose field magnitude is 1 a.u. ≈ 7.018 891 0 × 10¹⁶ W cm⁻².
 */
export const I_AU_CIRC_WCM2 = 2 * I_AU_LIN_WCM2;

/** "Flux" atomic unit of intensity E_h/(t_au a₀²) in W cm⁻² (SCIENCE.md §1.2) ≈ 6.436 409 9 × 10¹⁵. */
export const I_AU_FLUX_WCM2 = HARTREE_J / (AU_TIME_S * BOHR_M ** 2) / 1e4;

/** One ionization-energy table entry (SCIENCE.md §3). */
export interface IonizationEnergyEntry {
  /** Ionization energy in eV (lowest ionic level; molecules: adiabatic). */
  ev: number;
  /** Source label as in SCIENCE.md: `[ASD]` or `[WebBook]`. */
  source: string;
}

/**
 * Ionization energies of the targets Lobeline knows by name (SCIENCE.md §3). H includes the reduced-mass
 * correction (the infinite-mass value would be 0.5 a.u. = 13.605 693 eV).
 */
export const IONIZATION_ENERGIES_EV: Readonly<Record<string, IonizationEnergyEntry>> = Object.freeze({
  H: { ev: 13.598_434_599_702, source: '[ASD]' },
  He: { ev: 24.587_389_011, source: '[ASD]' },
  Ne: { ev: 21.564_541, source: '[ASD]' },
  Ar: { ev: 15.759_611_9, source: '[ASD]' },
  Kr: { ev: 13.999_605_5, source: '[ASD]' },
  Xe: { ev: 12.129_843_7, source: '[ASD]' },
  N2: { ev: 15.581, source: '[WebBook]' },
  O2: { ev: 12.0697, source: '[WebBook]' },
});

// FUNCTIONS //

function requirePositiveFinite(name: string, value: number): void {
  if (typeof value !== 'number') {
    throw new TypeError(`${name} must be a number, got ${typeof value}`);
  }
  if (!Number.isFinite(value) || value <= 0) {
    throw new RangeError(`${name} must be a positive finite number, got ${value}`);
  }
}

/**
 * Photon energy ħω = hc/λ in eV.
 *
 * @param wavelengthNm - vacuum wavelength, nm (> 0)
 * @returns photon energy, eV
 * @throws {RangeError} when the wavelength is not a positive finite number
 * @example
 * photonEnergyEv(800); // returns ≈ 1.549802 (SCIENCE.md §1.3)
 */
export function photonEnergyEv(wavelengthNm: number): number {
  requirePositiveFinite('wavelengthNm', wavelengthNm);
  return HC_EV_NM / wavelengthNm;
}

/**
 * Angular frequency ω in atomic units (ω = ħω/E_h).
 *
 * @param wavelengthNm - vacuum wavelength, nm (> 0)
 * @returns ω, a.u. (hartree/ħ)
 * @example
 * omegaAu(800); // returns ≈ 0.05695419 (SCIENCE.md §1.3)
 */
export function omegaAu(wavelengthNm: number): number {
  return photonEnergyEv(wavelengthNm) / HARTREE_EV;
}

/**
 * Optical period T = λ/c in fs.
 *
 * @param wavelengthNm - vacuum wavelength, nm (> 0)
 * @returns period, fs
 * @example
 * periodFs(800); // returns ≈ 2.66851 (SCIENCE.md §1.3)
 */
export function periodFs(wavelengthNm: number): number {
  requirePositiveFinite('wavelengthNm', wavelengthNm);
  return (wavelengthNm * 1e-9 * 1e15) / SPEED_OF_LIGHT_M_S;
}

/**
 * Optical period in atomic units of time, T = 2π/ω.
 *
 * @param wavelengthNm - vacuum wavelength, nm
 * @returns period, a.u. of time
 */
export function periodAu(wavelengthNm: number): number {
  return (2 * Math.PI) / omegaAu(wavelengthNm);
}

/**
 * Ionization energy of a named target from the table of SCIENCE.md §3.
 * The name is matched exactly first, then case-insensitively, after trimming (`"he"` → He, `"n2"` → N2).
 *
 * @param target - target name as in `/entry/sample/name`
 * @returns Ip in eV, or null when the name is not in the table (the file must then carry it)
 * @example
 * ionizationEnergyEv('He'); // returns 24.587389011
 */
export function ionizationEnergyEv(target: string): number | null {
  if (typeof target !== 'string') {
    throw new TypeError(`target must be a string, got ${typeof target}`);
  }
  const name = target.trim();
  const exact = IONIZATION_ENERGIES_EV[name];
  if (exact) return exact.ev;
  const lower = name.toLowerCase();
  for (const key of Object.keys(IONIZATION_ENERGIES_EV)) {
    if (key.toLowerCase() === lower) return IONIZATION_ENERGIES_EV[key]!.ev;
  }
  return null;
}

/**
 * Kinetic energy of an electron of momentum p: E = p²/2 (a.u.) converted to eV.
 *
 * @param p - momentum magnitude, a.u. (sign ignored)
 * @returns energy, eV
 * @example
 * momentumAuToEnergyEv(1); // returns 13.605693122994
 */
export function momentumAuToEnergyEv(p: number): number {
  return 0.5 * p * p * HARTREE_EV;
}

/**
 * Momentum magnitude of an electron of kinetic energy E: p = √(2E/E_h) a.u.
 *
 * @param energyEv - kinetic energy, eV (≥ 0; negative gives NaN)
 * @returns momentum, a.u.
 * @example
 * energyEvToMomentumAu(10); // returns ≈ 0.857314 (SCIENCE.md §1.2)
 */
export function energyEvToMomentumAu(energyEv: number): number {
  return Math.sqrt((2 * energyEv) / HARTREE_EV);
}
