/**
 * Forward model of synthetic scans with known truth (for the example generator and the end-to-end tests).
 *
 * Momentum space (lab frame, a.u.): each step's expected 2-D momentum density ρ(px, py) (counts per unit area of
 * momentum) is a sum of lobes, ρ = Σ_k A_k exp(−(|p| − r_k)²/(2σ_r²)) · exp(κ (cos(θ − θ_k) − 1)), with θ_k the
 * simple-man direction of lobe k (reduction/fields.ts) rotated by the chosen offset in the sense s (SCIENCE.md
 * §4.6) and r_k = |p_SM| (1 − shrink). Along its direction this density peaks exactly at r_k, and because the lobes
 * of one step share r and sit symmetrically (180° or 120° apart), the angular distribution peaks exactly at θ_k.
 * Two-colour phase scans: Y(p, φ) = A₀(p) + A₁(p) cos(φ − φ₀(p)) (SCIENCE.md §6.2, C10) with a known φ₀ map.
 *
 * Detector space: raw pixel (x, y) sees the density at the lab momentum the calibration (FORMATS §2) assigns to
 * it, times the pixel's area in momentum space (mpp²/ratio); a detector background (dark counts, a gradient and a
 * warm spot, per laser shot) is added; Poisson noise comes from the seeded PRNG. Reducing with the calibration
 * returned here therefore recovers the truth.
 */
import { wrapDeg } from '../angles';
import { HARTREE_EV, photonEnergyEv } from '../constants';
import { intensityFromRadiusWcm2, offsetSense, simpleManDirectionsDeg, simpleManMomentumAu } from '../fields';
import type { DetectorCalibration, ExperimentKind, StepQuantity } from '../formats';

// TYPES //

export type CountsDtype = 'uint16' | 'float32';
export type BackgroundLayout = 'none' | 'single' | 'per_step';

export interface SynthOptions {
  kind: ExperimentKind;
  target: string;
  wavelengthNm: number;
  /** ε for angular streaking (ignored otherwise). */
  ellipticity: number;
  /** h (elliptical) or h₁ (bicircular). */
  helicity: 1 | -1;
  /** Number of steps (1 for `image`). */
  steps: number;
  /** Detector frame is size × size pixels. */
  size: number;
  /** Expected signal counts per frame. */
  counts: number;
  /** True offset angle (deg), positive in the sense of field rotation; at offsetRefIntensityWcm2 when the next is ≠ 0. */
  offsetDeg: number;
  /**
   * Intensity dependence of the true offset: θ(I) = offsetDeg · (I / offsetRefIntensityWcm2)^(−exponent); 0 = the same
   * offset at every step. The classical model of SCIENCE.md §10.7 falls roughly so: He 800 nm ≈ 0.08, Ar 800 nm ≈ 0.15.
   */
  offsetIntensityExponent: number;
  offsetRefIntensityWcm2: number;
  /**
   * Optional: the true offset of every step (deg), one per step of an intensity scan, in place of the power law above
   * (e.g. a model's own numbers, as scripts/demo-neon.ts plants them). Absent: the power law.
   */
  offsetsDeg?: number[];
  seed: number;
  background: BackgroundLayout;
  distort: boolean;
  mirror: boolean;
  compression: 'gzip' | 'none';
  dtype: CountsDtype;
  /** F(2ω)/F(ω) for bicircular and two-colour scans. */
  fieldRatio: number;
  /** Fixed ω–2ω phase (bicircular), rad. */
  relativePhaseRad: number;
  /** Fractional radius shrink relative to |p_SM| (a Coulomb-like effect), 0 … 0.5. */
  shrink: number;
  /** Lab azimuth of the major axis, deg. */
  majorAxisDeg: number;
  /** Whole periods of the relative phase covered by a two-colour scan. */
  periods: number;
  /** Intensity range of the steps (W/cm², cycle-averaged total). */
  intensityMinWcm2: number;
  intensityMaxWcm2: number;
  /** Lobe angle of a single image (deg, lab azimuth; ignored for other kinds). */
  imageAngleDeg: number;
  /** Optional: lobe width 1/√κ of the von Mises angular shape, degrees (default 15°, 20° for `image`). */
  lobeWidthDeg?: number;
  /**
   * Optional: an isotropic component with the lobes' radial profile (flat in angle) holding this fraction of the
   * lobe counts (0 … 10; default 0). `signal_counts` is then the lobe counts; the frame holds (1 + f) times that.
   */
  isotropicFraction?: number;
  /**
   * Optional (calibration bench tests): isotropic above-threshold-ionization rings at E_n = E₀ + nħω (ħω from the
   * wavelength), each a Gaussian in |p| of rms `widthAu` and peak density `amplitude` (relative to the lobes' peak
   * density 1). When `kappaEvPerPx2` is given, the detector's momentum per pixel becomes √(2κ/E_h) (SCIENCE.md §7.1).
   * Absent: no rings, and every output is as before.
   */
  atiRings?: { e0Ev: number; orders: number[]; widthAu: number; amplitude: number; kappaEvPerPx2?: number };
  /**
   * Optional (calibration bench tests): hot pixels [x, y, extra counts per frame] added to every signal frame after
   * the Poisson draw (a camera defect, not counting noise). Absent: none.
   */
  hotPixels?: [number, number, number][];
}

export interface TruthLobe {
  /** True lab azimuth of the lobe maximum, deg in (−180, 180]. */
  angle_deg: number;
  /** Simple-man direction, deg (null for `image`). */
  expected_deg: number | null;
  /** s · wrap(angle − expected), deg. */
  offset_deg: number | null;
  /** |p| of the density maximum along the lobe, a.u. */
  radius_au: number;
}

export interface TruthStep {
  index: number;
  value: number;
  shots: number;
  /** Expected signal counts in the frame (before noise, background excluded). */
  signal_counts: number;
  lobes: TruthLobe[];
  offset_deg: number | null;
  radius_au: number | null;
  /** Intensity of the step (W/cm²) when the step quantity is intensity. */
  intensity_Wcm2: number | null;
  /** Adiabatic intensity from the true radius (differs from intensity_Wcm2 when shrink > 0). */
  intensity_from_radius_Wcm2: number | null;
}

export interface PhaseTruth {
  /** φ₀(p) = phi_a_rad + slope_rad_per_au · |p| (+ π where px < 0), rad. */
  phi_a_rad: number;
  slope_rad_per_au: number;
  /** A₁/A₀ = contrast_0 · (0.5 + 0.5 cos² θ). */
  contrast_0: number;
  periods: number;
  n_phases: number;
  phase_start_rad: number;
}

export interface ScanPlan {
  options: SynthOptions;
  calibration: DetectorCalibration;
  stepQuantity: StepQuantity;
  stepUnits: string;
  stepValues: number[];
  shots: number[];
  backgroundShots: number[];
  /** Radial width σ_r (a.u.) and von Mises concentration κ of every lobe. */
  radialSigmaAu: number;
  kappa: number;
  /** Isotropic fraction of the options (0 when not asked for). */
  isotropicFraction: number;
  steps: TruthStep[];
  phase: PhaseTruth | null;
  /** ATI rings of the options with their true radii (null when not asked for). */
  atiRings: {
    kappaEvPerPx2: number;
    e0Ev: number;
    photonEnergyEv: number;
    orders: number[];
    radiiAu: number[];
    /** Radii in pixels of the ellipticity-corrected detector frame (momentum / momentum_per_pixel). */
    radiiPx: number[];
    widthAu: number;
    amplitude: number;
  } | null;
  /** Dark counts per pixel per shot, and the detector's warm spot. */
  detectorBackground: {
    darkPerShot: number;
    gradientPerShot: number;
    spot: { x: number; y: number; sigma: number; peakPerShot: number };
  };
}

// VARIABLES //

export const DEFAULT_SYNTH_OPTIONS: SynthOptions = {
  kind: 'angular_streaking',
  target: 'He',
  wavelengthNm: 800,
  ellipticity: 0.87,
  helicity: 1,
  steps: 5,
  size: 512,
  counts: 2e5,
  offsetDeg: 6,
  offsetIntensityExponent: 0,
  offsetRefIntensityWcm2: 4e14,
  seed: 1,
  background: 'none',
  distort: false,
  mirror: false,
  compression: 'gzip',
  dtype: 'float32',
  fieldRatio: 1,
  relativePhaseRad: 0,
  shrink: 0,
  majorAxisDeg: 0,
  periods: 2,
  intensityMinWcm2: 2e14,
  intensityMaxWcm2: 5e14,
  imageAngleDeg: 40,
};

// CALIBRATION //

/**
 * Lab momentum of a pixel centre under a calibration (FORMATS §2).
 *
 * @returns [px, py] in a.u.
 */
export function pixelToMomentum(cal: DetectorCalibration, x: number, y: number): [number, number] {
  let ux = x - cal.center_px[0];
  let uy = y - cal.center_px[1];
  if (cal.mirror) ux = -ux;
  const a = (cal.detector_ellipticity.axis_deg * Math.PI) / 180;
  const ca = Math.cos(a);
  const sa = Math.sin(a);
  // rotate by −axis, divide the first component by ratio, rotate back
  let rx = ca * ux + sa * uy;
  const ry = -sa * ux + ca * uy;
  rx /= cal.detector_ellipticity.ratio;
  ux = ca * rx - sa * ry;
  uy = sa * rx + ca * ry;
  const r = (cal.rotation_deg * Math.PI) / 180;
  const cr = Math.cos(r);
  const sr = Math.sin(r);
  return [(cr * ux - sr * uy) * cal.momentum_per_pixel_au, (sr * ux + cr * uy) * cal.momentum_per_pixel_au];
}

/** Inverse of {@link pixelToMomentum}: the pixel position (x, y) that sees lab momentum (px, py). */
export function momentumToPixel(cal: DetectorCalibration, px: number, py: number): [number, number] {
  const r = (-cal.rotation_deg * Math.PI) / 180;
  const cr = Math.cos(r);
  const sr = Math.sin(r);
  let ux = (cr * px - sr * py) / cal.momentum_per_pixel_au;
  let uy = (sr * px + cr * py) / cal.momentum_per_pixel_au;
  const a = (cal.detector_ellipticity.axis_deg * Math.PI) / 180;
  const ca = Math.cos(a);
  const sa = Math.sin(a);
  let rx = ca * ux + sa * uy;
  const ry = -sa * ux + ca * uy;
  rx *= cal.detector_ellipticity.ratio;
  ux = ca * rx - sa * ry;
  uy = sa * rx + ca * ry;
  if (cal.mirror) ux = -ux;
  return [ux + cal.center_px[0], uy + cal.center_px[1]];
}

/** The calibration that undoes the generator's detector distortion. */
export function synthCalibration(o: SynthOptions): DetectorCalibration {
  const half = (o.size - 1) / 2;
  const kappa = o.atiRings?.kappaEvPerPx2;
  const mpp = kappa !== undefined ? Math.sqrt((2 * kappa) / HARTREE_EV) : 2.0 / (o.size / 2 - 12);
  return {
    center_px: o.distort ? [half + 0.0273 * o.size, half - 0.0161 * o.size] : [half, half],
    momentum_per_pixel_au: mpp,
    rotation_deg: o.distort ? 4 : 0,
    mirror: o.mirror,
    detector_ellipticity: o.distort ? { ratio: 1.04, axis_deg: 30 } : { ratio: 1, axis_deg: 0 },
    bad_pixels: [],
    background: { subtract: true, scale_by: 'shots' },
    note: 'Harbor Point Ultrafast Lab synthetic detector: the calibration that undoes the generated distortion',
  };
}

// PLAN //

function linspace(a: number, b: number, n: number): number[] {
  if (n === 1) return [a];
  return Array.from({ length: n }, (_, i) => a + ((b - a) * i) / (n - 1));
}

/**
 * Lays out a synthetic scan: step values, shots, lobe truth, calibration.
 *
 * @param partial - options (completed from {@link DEFAULT_SYNTH_OPTIONS})
 * @returns the plan, which also carries the truth
 */
export function planScan(partial: Partial<SynthOptions>): ScanPlan {
  const o: SynthOptions = { ...DEFAULT_SYNTH_OPTIONS, ...partial };
  if (o.kind === 'image') o.steps = 1;
  if (!(Number.isInteger(o.steps) && o.steps >= 1 && o.steps <= 4096))
    throw new RangeError(`steps must be 1…4096, got ${o.steps}`);
  if (!(Number.isInteger(o.size) && o.size >= 32 && o.size <= 8192))
    throw new RangeError(`size must be 32…8192, got ${o.size}`);
  if (!(o.counts > 0)) throw new RangeError(`counts must be > 0, got ${o.counts}`);
  if (o.offsetsDeg && !(o.offsetsDeg.length === o.steps && o.offsetsDeg.every(Number.isFinite)))
    throw new RangeError(`offsetsDeg needs one finite offset per step (${o.steps}), got ${o.offsetsDeg.length}`);
  const iso = o.isotropicFraction ?? 0;
  if (!(iso >= 0 && iso <= 10)) throw new RangeError(`isotropicFraction must be 0…10, got ${iso}`);
  if (o.lobeWidthDeg !== undefined && !(o.lobeWidthDeg >= 1 && o.lobeWidthDeg <= 90)) {
    throw new RangeError(`lobeWidthDeg must be 1…90, got ${o.lobeWidthDeg}`);
  }
  if (o.atiRings) {
    const a = o.atiRings;
    if (!(a.widthAu > 0 && a.amplitude >= 0 && a.orders.length >= 1)) {
      throw new RangeError('atiRings needs widthAu > 0, amplitude ≥ 0 and at least one order');
    }
    if (a.kappaEvPerPx2 !== undefined && !(a.kappaEvPerPx2 > 0))
      throw new RangeError('atiRings.kappaEvPerPx2 must be > 0');
  }
  for (const [x, y, c] of o.hotPixels ?? []) {
    if (!(Number.isInteger(x) && Number.isInteger(y) && x >= 0 && y >= 0 && x < o.size && y < o.size && c >= 0)) {
      throw new RangeError(`hot pixel (${x}, ${y}, ${c}) must lie in the frame with extra counts ≥ 0`);
    }
  }
  const calibration = synthCalibration(o);
  let atiRings: ScanPlan['atiRings'] = null;
  if (o.atiRings) {
    const a = o.atiRings;
    const hw = photonEnergyEv(o.wavelengthNm);
    const radiiAu = a.orders.map((n) => {
      const e = a.e0Ev + n * hw;
      if (!(e > 0)) throw new RangeError(`ATI order ${n} has no positive energy (E₀ + nħω = ${e} eV)`);
      return Math.sqrt((2 * e) / HARTREE_EV);
    });
    const mpp = calibration.momentum_per_pixel_au;
    atiRings = {
      kappaEvPerPx2: (mpp * mpp * HARTREE_EV) / 2,
      e0Ev: a.e0Ev,
      photonEnergyEv: hw,
      orders: [...a.orders],
      radiiAu,
      radiiPx: radiiAu.map((p) => p / mpp),
      widthAu: a.widthAu,
      amplitude: a.amplitude,
    };
  }
  const n = o.steps;
  const shots = Array.from({ length: n }, (_, k) => 1000 + 100 * k);
  const backgroundShots =
    o.background === 'single'
      ? [4000]
      : o.background === 'per_step'
        ? Array.from({ length: n }, (_, k) => 500 + 50 * k)
        : [];
  let stepQuantity: StepQuantity;
  let stepValues: number[];
  let phase: PhaseTruth | null = null;
  const steps: TruthStep[] = [];
  let radialSigmaAu = 0.1;
  let kappa = 1 / (15 * (Math.PI / 180)) ** 2; // σ_θ ≈ 15°
  if (o.kind === 'two_color_phase') {
    if (!(Number.isInteger(o.periods) && o.periods >= 1 && n >= 3 * o.periods)) {
      throw new RangeError(
        `two_color_phase needs whole periods (≥ 1) and ≥ 3 steps per period, got ${n} steps over ${o.periods}`,
      );
    }
    stepQuantity = 'relative_phase';
    const start = 0.25;
    stepValues = Array.from({ length: n }, (_, j) => start + (2 * Math.PI * o.periods * j) / n);
    phase = {
      phi_a_rad: 0.7,
      slope_rad_per_au: 1.5,
      contrast_0: 0.35,
      periods: o.periods,
      n_phases: n,
      phase_start_rad: start,
    };
    radialSigmaAu = 0.18;
    for (let k = 0; k < n; k++) {
      steps.push({
        index: k,
        value: stepValues[k] as number,
        shots: shots[k] as number,
        signal_counts: o.counts,
        lobes: [],
        offset_deg: null,
        radius_au: null,
        intensity_Wcm2: null,
        intensity_from_radius_Wcm2: null,
      });
    }
  } else if (o.kind === 'image') {
    stepQuantity = 'index';
    stepValues = [0];
    const radius = 0.9;
    kappa = 1 / (20 * (Math.PI / 180)) ** 2;
    const angle = wrapDeg(o.imageAngleDeg);
    steps.push({
      index: 0,
      value: 0,
      shots: shots[0] as number,
      signal_counts: o.counts,
      lobes: [{ angle_deg: angle, expected_deg: null, offset_deg: null, radius_au: radius }],
      offset_deg: null,
      radius_au: radius,
      intensity_Wcm2: null,
      intensity_from_radius_Wcm2: null,
    });
  } else {
    stepQuantity = 'intensity';
    stepValues = linspace(o.intensityMinWcm2, o.intensityMaxWcm2, n);
    if (o.kind === 'bicircular') radialSigmaAu = 0.06;
    const dirParams = {
      kind: o.kind,
      majorAxisDeg: o.majorAxisDeg,
      helicity: o.helicity,
      fieldRatio: o.kind === 'bicircular' ? o.fieldRatio : null,
      relativePhaseRad: o.relativePhaseRad,
    } as const;
    const expected = simpleManDirectionsDeg(dirParams);
    const s = offsetSense(dirParams);
    for (let k = 0; k < n; k++) {
      const I = stepValues[k] as number;
      const pSm = simpleManMomentumAu({
        kind: o.kind,
        intensityWcm2: I,
        wavelengthNm: o.wavelengthNm,
        ellipticity: o.kind === 'angular_streaking' ? o.ellipticity : null,
        fieldRatio: o.kind === 'bicircular' ? o.fieldRatio : null,
      });
      const r = pSm * (1 - o.shrink);
      const off = o.offsetsDeg?.[k] ?? o.offsetDeg * (I / o.offsetRefIntensityWcm2) ** -o.offsetIntensityExponent;
      const lobes = expected.map((e) => ({
        angle_deg: wrapDeg(e + s * off),
        expected_deg: e,
        offset_deg: off,
        radius_au: r,
      }));
      steps.push({
        index: k,
        value: I,
        shots: shots[k] as number,
        signal_counts: o.counts,
        lobes,
        offset_deg: off,
        radius_au: r,
        intensity_Wcm2: I,
        intensity_from_radius_Wcm2: intensityFromRadiusWcm2({
          kind: o.kind,
          radiusAu: r,
          wavelengthNm: o.wavelengthNm,
          ellipticity: o.kind === 'angular_streaking' ? o.ellipticity : null,
          fieldRatio: o.kind === 'bicircular' ? o.fieldRatio : null,
        }),
      });
    }
  }
  const half = (o.size - 1) / 2;
  return {
    options: o,
    calibration,
    stepQuantity,
    stepUnits: stepQuantity === 'intensity' ? 'W/cm^2' : stepQuantity === 'relative_phase' ? 'rad' : '1',
    stepValues,
    shots,
    backgroundShots,
    radialSigmaAu,
    kappa:
      o.lobeWidthDeg !== undefined && o.kind !== 'two_color_phase'
        ? 1 / (o.lobeWidthDeg * (Math.PI / 180)) ** 2
        : kappa,
    isotropicFraction: o.kind === 'two_color_phase' ? 0 : iso,
    steps,
    phase,
    atiRings,
    detectorBackground: {
      darkPerShot: 1e-4,
      gradientPerShot: 1e-5,
      spot: { x: half * 0.45, y: half * 1.6, sigma: o.size / 40, peakPerShot: 2e-3 },
    },
  };
}

// RENDERING //

/** φ₀(p) of the two-colour truth, rad (not wrapped). */
export function truePhaseOfMax(t: PhaseTruth, px: number, py: number): number {
  return t.phi_a_rad + t.slope_rad_per_au * Math.hypot(px, py) + (px < 0 ? Math.PI : 0);
}

/** A₁/A₀ of the two-colour truth. */
export function trueContrast(t: PhaseTruth, px: number, py: number): number {
  const th = Math.atan2(py, px);
  const c = Math.cos(th);
  return t.contrast_0 * (0.5 + 0.5 * c * c);
}

/** A₀(p) of the two-colour truth, unnormalised: a ring at 0.7 a.u. elongated along the major axis + a core. */
function twoColourMean(px: number, py: number, sigma: number): number {
  const p = Math.hypot(px, py);
  const c = px / (p || 1);
  const ring = Math.exp(-((p - 0.7) ** 2) / (2 * sigma * sigma)) * (0.4 + c * c);
  const core = 0.6 * Math.exp(-(p * p) / (2 * 0.15 * 0.15));
  return ring + core;
}

/** (1/2π)∫exp(κ(cos u − 1))du = I₀(κ)e^(−κ), by the midpoint rule over 3600 points (exact to rounding). */
const meanVonMisesCache = new Map<number, number>();
function meanVonMises(kappa: number): number {
  const hit = meanVonMisesCache.get(kappa);
  if (hit !== undefined) return hit;
  let s = 0;
  for (let i = 0; i < 3600; i++) s += Math.exp(kappa * (Math.cos(((i + 0.5) * 2 * Math.PI) / 3600) - 1));
  meanVonMisesCache.set(kappa, s / 3600);
  return s / 3600;
}

/**
 * Unnormalised signal density of step k at lab momentum (px, py).
 */
function density(plan: ScanPlan, k: number, px: number, py: number): number {
  const step = plan.steps[k] as TruthStep;
  if (plan.phase !== null) {
    const a0 = twoColourMean(px, py, plan.radialSigmaAu);
    const phi = plan.stepValues[k] as number;
    return a0 * (1 + trueContrast(plan.phase, px, py) * Math.cos(phi - truePhaseOfMax(plan.phase, px, py)));
  }
  const p = Math.hypot(px, py);
  const th = Math.atan2(py, px);
  const s2 = 2 * plan.radialSigmaAu * plan.radialSigmaAu;
  let sum = 0;
  for (const lobe of step.lobes) {
    const radial = Math.exp(-((p - lobe.radius_au) ** 2) / s2);
    const ang = Math.exp(plan.kappa * (Math.cos(th - (lobe.angle_deg * Math.PI) / 180) - 1));
    sum += radial * ang;
  }
  if (plan.isotropicFraction > 0 && step.lobes.length > 0) {
    // flat in angle with the same radial profile: its angular integral is f × Σ_k ∫exp(κ(cos u − 1))du
    const r0 = step.lobes[0]!.radius_au;
    sum += plan.isotropicFraction * step.lobes.length * meanVonMises(plan.kappa) * Math.exp(-((p - r0) ** 2) / s2);
  }
  if (plan.atiRings) {
    const w2 = 2 * plan.atiRings.widthAu * plan.atiRings.widthAu;
    for (const r of plan.atiRings.radiiAu) sum += plan.atiRings.amplitude * Math.exp(-((p - r) ** 2) / w2);
  }
  return sum;
}

/**
 * Expected signal counts of step k in every raw pixel (no noise, no background), normalised to the step's
 * `signal_counts`.
 *
 * @param out - Float64Array of size² (row-major, index iy·size + ix)
 */
export function renderSignal(plan: ScanPlan, k: number, out: Float64Array): Float64Array {
  const n = plan.options.size;
  const cal = plan.calibration;
  const area = (cal.momentum_per_pixel_au * cal.momentum_per_pixel_au) / cal.detector_ellipticity.ratio;
  let total = 0;
  for (let iy = 0; iy < n; iy++) {
    for (let ix = 0; ix < n; ix++) {
      const [px, py] = pixelToMomentum(cal, ix, iy);
      const v = density(plan, k, px, py) * area;
      out[iy * n + ix] = v;
      total += v;
    }
  }
  const step = plan.steps[k] as TruthStep;
  // two-colour: normalise with the phase-averaged density so that the modulation is kept
  let norm = total;
  if (plan.phase !== null) {
    norm = 0;
    for (let iy = 0; iy < n; iy++) {
      for (let ix = 0; ix < n; ix++) {
        const [px, py] = pixelToMomentum(cal, ix, iy);
        norm += twoColourMean(px, py, plan.radialSigmaAu) * area;
      }
    }
  }
  const scale = norm > 0 ? (step.signal_counts * (1 + plan.isotropicFraction)) / norm : 0;
  for (let i = 0; i < out.length; i++) out[i] = (out[i] as number) * scale;
  return out;
}

/**
 * Adds the options' hot pixels to a frame (in place; after the Poisson draw).
 *
 * @param out - frame of size² (row-major)
 */
export function addHotPixels(plan: ScanPlan, out: Float64Array): Float64Array {
  const n = plan.options.size;
  for (const [x, y, c] of plan.options.hotPixels ?? []) out[y * n + x] = (out[y * n + x] as number) + c;
  return out;
}

/**
 * Expected detector background per pixel for `shots` laser shots (dark counts + gradient + warm spot).
 */
export function renderDetectorBackground(plan: ScanPlan, shots: number, out: Float64Array): Float64Array {
  const n = plan.options.size;
  const b = plan.detectorBackground;
  const s2 = 2 * b.spot.sigma * b.spot.sigma;
  for (let iy = 0; iy < n; iy++) {
    for (let ix = 0; ix < n; ix++) {
      const spot = b.spot.peakPerShot * Math.exp(-((ix - b.spot.x) ** 2 + (iy - b.spot.y) ** 2) / s2);
      out[iy * n + ix] = shots * (b.darkPerShot + (b.gradientPerShot * ix) / n + spot);
    }
  }
  return out;
}
