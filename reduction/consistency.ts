/**
 * Calibration consistency of one step: a clearly wrong detector calibration (most often a centre that is off) leaves
 * marks that need no outside truth, because the laser field itself fixes a symmetry of the momentum distribution.
 *
 * - Angular streaking (two lobes): an elliptically polarized multi-cycle field repeats with the opposite sign every
 *   half cycle, E(t + T/2) = −E(t), so the distribution is symmetric under inversion p → −p: both lobes have the
 *   same offset angle and the same radius, and the angular distribution has no odd Fourier harmonics.
 * - Bicircular (three lobes): counter-rotating ω–2ω fields repeat after T/3 turned by 120°, so the three lobes share
 *   offset and radius and the angular distribution has only harmonics 0, 3, 6, …
 *
 * (Both are common practice of the trade; the field symmetries follow from SCIENCE.md §4–5.) A detector centre that
 * is off by δ turns the two opposite lobes of an attoclock image in opposite directions (by about ±δ/R), moves one
 * closer to the centre than the other and adds a first harmonic to the angular distribution; an uncorrected
 * detector ellipticity (an image stretched along one axis) keeps inversion symmetry but breaks the three-fold one
 * and adds a second harmonic. A wrong rotation turns every lobe alike and cannot be seen from inside one step.
 *
 * Pure: no I/O, no allocation beyond the returned sentences.
 */
import { wrapDeg } from './angles';
import type { ExperimentKind } from './formats';

// TYPES //

/** What the check needs of one lobe (the fields of FORMATS §4). */
export interface ConsistencyLobe {
  angle_deg: number;
  offset_deg: number | null;
  offset_err_deg: number | null;
  radius_au: number | null;
}

export interface ConsistencyInput {
  kind: ExperimentKind;
  lobes: readonly ConsistencyLobe[];
  /** Error of the step radius (the mean of the lobe radii), a.u.; null without a bootstrap. */
  radiusErrAu: number | null;
  /** Counts per angular bin in the radial window. */
  angular: ArrayLike<number>;
  /** Centres of the angular bins, deg. */
  thetaDeg: ArrayLike<number>;
  /** Momentum per detector pixel, a.u. (for a size in pixels in the sentences); null to leave it out. */
  momentumPerPixelAu?: number | null;
}

/**
 * One warning: `sentence` is the same on every step with the same defect (so a scan lists it once with its steps);
 * `detailed` adds this step's numbers.
 */
export interface ConsistencyWarning {
  check: 'offsets' | 'radii' | 'inversion' | 'three_fold_centre' | 'three_fold_stretch';
  sentence: string;
  detailed: string;
}

// VARIABLES //

/** Standard deviations beyond which a difference counts (one false alarm in ~10⁴ pairs for Gaussian errors). */
export const CONSISTENCY_SIGMAS = 4;

/** Smallest offset difference reported, deg: below it the calibration is good enough for any attoclock use. */
export const MIN_OFFSET_DIFFERENCE_DEG = 0.5;

/** Smallest radius difference reported, as a fraction of the mean radius. */
export const MIN_RADIUS_DIFFERENCE = 0.005;

/**
 * A forbidden harmonic counts when N·|c_n|² exceeds this (under Poisson noise N·|c_n|² is exponentially distributed
 * with mean 1, so the chance of a false alarm is e^−25 ≈ 10⁻¹¹) …
 */
export const HARMONIC_SIGNIFICANCE = 25;

/** … and when |c_n| (relative to the total) exceeds this, so that large images do not warn about tiny defects. */
export const MIN_HARMONIC = 0.02;

// FUNCTIONS //

/**
 * Normalized Fourier harmonic c_n = Σ Y_k e^{inθ_k} / Σ Y_k of an angular distribution.
 *
 * @returns |c_n| and the total Σ Y_k (null when the total is not positive)
 */
export function angularHarmonic(
  angular: ArrayLike<number>,
  thetaDeg: ArrayLike<number>,
  n: number,
): { magnitude: number; total: number } | null {
  let re = 0;
  let im = 0;
  let total = 0;
  for (let k = 0; k < angular.length; k++) {
    const y = angular[k] as number;
    const t = ((thetaDeg[k] as number) * Math.PI) / 180;
    re += y * Math.cos(n * t);
    im += y * Math.sin(n * t);
    total += y;
  }
  if (!(total > 0)) return null;
  return { magnitude: Math.hypot(re, im) / total, total };
}

function fmt(x: number, digits = 2): string {
  return Number.parseFloat(x.toPrecision(digits)).toString();
}

/** " (about 3 detector pixels)" when the pixel size is known. */
function inPixels(au: number, mpp: number | null | undefined): string {
  if (!(mpp !== null && mpp !== undefined && mpp > 0)) return '';
  const px = au / mpp;
  return ` (about ${px < 10 ? fmt(px, 2) : Math.round(px)} detector pixels)`;
}

/**
 * Plain-sentence warnings about the calibration of one step (empty when it looks consistent or when the kind has no
 * expected symmetry).
 *
 * @param input - the step's lobes, its radius error and its angular distribution
 * @returns the warnings; each names the calibration value to check
 */
export function calibrationConsistencyWarnings(input: ConsistencyInput): ConsistencyWarning[] {
  const { kind, lobes } = input;
  const nExpected = kind === 'angular_streaking' ? 2 : kind === 'bicircular' ? 3 : 0;
  if (nExpected === 0 || lobes.length !== nExpected) return [];
  if (input.angular.length !== input.thetaDeg.length) {
    throw new RangeError(
      `angular and thetaDeg must have the same length, got ${input.angular.length} and ${input.thetaDeg.length}`,
    );
  }
  const out: ConsistencyWarning[] = [];
  const two = nExpected === 2;
  const what = two ? 'detector centre' : 'detector centre or ellipticity';
  const fix = two
    ? 'check the detector centre in the calibration'
    : 'check the detector centre and the detector ellipticity (the ratio of the image axes) in the calibration';

  // 1. offsets of the lobes (they must agree: the field turns every lobe alike)
  const radii = lobes.map((l) => l.radius_au).filter((r): r is number => r !== null && Number.isFinite(r));
  const meanRadius = radii.length === lobes.length ? radii.reduce((a, b) => a + b, 0) / radii.length : null;
  let worst: { i: number; j: number; diff: number; sigma: number } | null = null;
  for (let i = 0; i < lobes.length; i++) {
    for (let j = i + 1; j < lobes.length; j++) {
      const a = lobes[i]!;
      const b = lobes[j]!;
      if (a.offset_deg === null || b.offset_deg === null) continue;
      if (!(a.offset_err_deg !== null && a.offset_err_deg > 0 && b.offset_err_deg !== null && b.offset_err_deg > 0)) {
        continue;
      }
      const diff = Math.abs(wrapDeg(a.offset_deg - b.offset_deg));
      const sigma = Math.hypot(a.offset_err_deg, b.offset_err_deg);
      if (diff > Math.max(CONSISTENCY_SIGMAS * sigma, MIN_OFFSET_DIFFERENCE_DEG) && (!worst || diff > worst.diff)) {
        worst = { i, j, diff, sigma };
      }
    }
  }
  if (worst) {
    const a = lobes[worst.i]!;
    const b = lobes[worst.j]!;
    const shift =
      two && meanRadius !== null
        ? ` A centre that is off by about ${fmt((meanRadius * worst.diff * Math.PI) / 360)} a.u.${inPixels((meanRadius * worst.diff * Math.PI) / 360, input.momentumPerPixelAu)} across the line of the lobes does this.`
        : '';
    const head =
      'The offset angles of the lobes differ beyond their errors, although the laser field turns every lobe alike';
    const tail = `the ${what} in the calibration is probably wrong, so the mean offset is not to be trusted`;
    out.push({
      check: 'offsets',
      sentence: `${head}: ${tail}. To fix it, ${fix}.`,
      detailed: `${head} (lobe ${worst.i + 1}: ${fmt(a.offset_deg!, 3)}°, lobe ${worst.j + 1}: ${fmt(b.offset_deg!, 3)}°, ${fmt(worst.diff / worst.sigma, 2)} times their combined error): ${tail}.${shift} To fix it, ${fix}.`,
    });
  }

  // 2. radii of the lobes (they must agree as well)
  if (meanRadius !== null && input.radiusErrAu !== null && input.radiusErrAu > 0) {
    const perLobe = input.radiusErrAu * Math.sqrt(lobes.length); // the step radius is the mean of the lobe radii
    let rMin = Number.POSITIVE_INFINITY;
    let rMax = Number.NEGATIVE_INFINITY;
    let iMin = 0;
    let iMax = 0;
    radii.forEach((r, i) => {
      if (r < rMin) [rMin, iMin] = [r, i];
      if (r > rMax) [rMax, iMax] = [r, i];
    });
    const diff = rMax - rMin;
    const sigma = perLobe * Math.SQRT2;
    if (diff > Math.max(CONSISTENCY_SIGMAS * sigma, MIN_RADIUS_DIFFERENCE * meanRadius)) {
      const along = two
        ? ` A centre that is off by about ${fmt(diff / 2)} a.u.${inPixels(diff / 2, input.momentumPerPixelAu)} along the line of the lobes does this.`
        : '';
      const head = 'The lobe radii differ beyond their errors, although the field gives every lobe the same radius';
      const tail = `the ${what} in the calibration is probably wrong, and the intensity from the radius is biased`;
      out.push({
        check: 'radii',
        sentence: `${head}: ${tail}. To fix it, ${fix}.`,
        detailed: `${head} (lobe ${iMax + 1}: ${fmt(rMax, 4)} a.u., lobe ${iMin + 1}: ${fmt(rMin, 4)} a.u., ${fmt(diff / sigma, 2)} times their error): ${tail}.${along} To fix it, ${fix}.`,
      });
    }
  }

  // 3. symmetry of the angular distribution
  const forbidden = two ? [1] : [1, 2];
  for (const n of forbidden) {
    const h = angularHarmonic(input.angular, input.thetaDeg, n);
    if (h === null) continue;
    if (h.total * h.magnitude ** 2 > HARMONIC_SIGNIFICANCE && h.magnitude > MIN_HARMONIC) {
      const symmetry = two
        ? 'is not symmetric under inversion (one side of the image is brighter or the lobes are not opposite), as the field of an elliptically polarized pulse requires'
        : 'lacks the three-fold symmetry of the counter-rotating two-colour field';
      const cause =
        n === 1
          ? 'the detector centre in the calibration is probably off (an uneven detector gain can do the same); check the centre'
          : 'the image is probably stretched along one axis; check the detector ellipticity (the ratio of the image axes) in the calibration';
      const head = `The angular distribution ${symmetry}`;
      out.push({
        check: two ? 'inversion' : n === 1 ? 'three_fold_centre' : 'three_fold_stretch',
        sentence: `${head}: ${cause}.`,
        detailed: `${head} (its ${n === 1 ? 'first' : 'second'} harmonic is ${fmt(100 * h.magnitude, 2)} % of the total, far above the noise): ${cause}.`,
      });
    }
  }
  return out;
}
