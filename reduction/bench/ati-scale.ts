/**
 * Momentum scale from above-threshold-ionization rings (SCIENCE.md §7.1): ring radii from the image (the peak of
 * the azimuthally averaged count density in the ellipticity-corrected frame, one Gaussian + linear-background fit per ring)
 * and the straight-line fit r_n² = E₀/κ + (ħω/κ) n of reduction/ati-scale.ts, with σ(r_n²) = 2 r_n σ(r_n)
 * [common practice]; κ = ħω/slope, E₀ = κ·intercept, α = √(2κ/E_h), each with its standard error.
 */
import { fitAtiScale as fitAtiLine } from '../ati-scale';
import { calibrationMatrix } from '../calibration';
import { type LmModel, levenbergMarquardt } from '../lm';
import type { CentreCalibration } from './centre-symmetry';
import { type BenchFrame, type BenchToolResult, requireFrame } from './types';

// TYPES //

export interface AtiScaleValue {
  kappaEvPerPx2: number;
  e0Ev: number;
  momentumPerPixelAu: number;
}

export type AtiScaleResult = BenchToolResult<
  AtiScaleValue,
  AtiScaleValue,
  /** r_n² − line, px², per ring, and its rms. */
  { orders: number[]; residualPx2: number[]; rms: number },
  { slopePx2: number; interceptPx2: number; chi2: number; dof: number; weighted: boolean }
>;

export interface RingRadiusFit {
  radiusPx: number;
  radiusErrPx: number;
  widthPx: number;
  converged: boolean;
}

// FUNCTIONS //

/**
 * Fits κ, E₀ and α from ring radii.
 *
 * @param radiiPx - ring radii r_n (ellipticity-corrected frame), px
 * @param sigmasPx - σ(r_n), px, or null for an unweighted fit (errors from the scatter about the line)
 * @param photonEnergyEv - ħω, eV
 * @param options - ring orders (default firstOrder, firstOrder + 1, …; firstOrder default 0)
 * @returns κ, E₀, α with standard errors, the residual per ring, diagnostics, warnings
 * @throws {RangeError} with fewer than 2 rings or mismatched lengths
 * @example
 * fitAtiScale([47.43, 100, 133.22, 159.68, 182.33, 202.47], null, 1.549802);
 * // value.kappaEvPerPx2 ≈ 2.000075e-4 (SCIENCE.md §7.1)
 */
export function fitAtiScale(
  radiiPx: ArrayLike<number>,
  sigmasPx: ArrayLike<number> | null,
  photonEnergyEv: number,
  options: { orders?: ArrayLike<number>; firstOrder?: number } = {},
): AtiScaleResult {
  const N = radiiPx.length;
  const first = options.firstOrder ?? 0;
  if (!Number.isInteger(first)) throw new RangeError(`firstOrder must be a whole number, got ${first}`);
  const orders = options.orders ? Array.from(options.orders) : Array.from({ length: N }, (_, i) => first + i);
  for (let i = 0; i < N; i++) {
    if (!(radiiPx[i]! > 0)) throw new RangeError(`radius ${i} must be > 0 px, got ${radiiPx[i]}`);
    if (sigmasPx && !(sigmasPx[i]! > 0)) throw new RangeError(`σ of radius ${i} must be > 0 px, got ${sigmasPx[i]}`);
  }
  const f = fitAtiLine(orders, radiiPx, photonEnergyEv, sigmasPx ?? undefined);
  const warnings: string[] = [];
  if (N === 2 && !sigmasPx) warnings.push('Two rings and no radius errors: the line passes through both, no errors.');
  if (sigmasPx && f.dof > 0 && f.chi2 / f.dof > 3) {
    warnings.push(
      `The rings do not lie on a straight line in r² against n within their errors (χ²/dof = ${(f.chi2 / f.dof).toFixed(1)}): check the order labels, the centre and the ellipticity; lens aberrations need E = κr²(1 + a₂r²) (≥ 5 rings).`,
    );
  }
  let rss = 0;
  for (const r of f.residualsPx2) rss += r * r;
  return {
    value: { kappaEvPerPx2: f.kappaEvPerPx2, e0Ev: f.e0Ev, momentumPerPixelAu: f.momentumPerPixelAu },
    stdErr: { kappaEvPerPx2: f.kappaErrEvPerPx2, e0Ev: f.e0ErrEv, momentumPerPixelAu: f.momentumPerPixelErrAu },
    residual: { orders, residualPx2: f.residualsPx2, rms: Math.sqrt(rss / N) },
    diagnostics: {
      slopePx2: f.slopePx2,
      interceptPx2: f.interceptPx2,
      chi2: f.chi2,
      dof: f.dof,
      weighted: sigmasPx !== null,
    },
    warnings,
  };
}

/**
 * Ring radii from an image: the count density per pixel in bins of `binPx` of the ellipticity-corrected radius
 * |M⁻¹ R(−β)…| about the centre (the calibration's mirror and ellipticity are undone; its scale and rotation do not
 * change a radius in pixels), then per guess a Gaussian + linear-background fit of the density within ± `halfWidthPx`
 * (weights pixels²/max(counts, 1), Poisson); σ(r) from the fit covariance, scaled by √(χ²/dof) when that exceeds 1.
 *
 * @param frame - raw frame
 * @param options - centre (px), optional calibration, guesses (px), half window, bin width (default 0.5 px)
 * @returns one fit per guess (NaN radius when the fit fails)
 */
export function atiRingRadii(
  frame: BenchFrame,
  options: {
    centrePx: [number, number];
    calibration?: CentreCalibration;
    guessesPx: ArrayLike<number>;
    halfWidthPx: number;
    binPx?: number;
  },
): RingRadiusFit[] {
  requireFrame(frame);
  const [cx, cy] = options.centrePx;
  const bin = options.binPx ?? 0.5;
  if (!(bin > 0)) throw new RangeError(`binPx must be > 0, got ${bin}`);
  if (!(options.halfWidthPx > 2 * bin)) throw new RangeError('halfWidthPx must be more than two bins');
  // pixel offsets → ellipticity-corrected pixels: A/scale with the rotation left out (rotation keeps radii)
  let m = Float64Array.of(1, 0, 0, 1);
  if (options.calibration) {
    const c = options.calibration;
    const map = calibrationMatrix({
      center_px: [0, 0],
      bad_pixels: [],
      background: { subtract: false, scale_by: 'none' },
      ...c,
      rotation_deg: 0,
    });
    m = map.a.map((v) => v / c.momentum_per_pixel_au);
  }
  let rMax = 0;
  for (let i = 0; i < options.guessesPx.length; i++) rMax = Math.max(rMax, options.guessesPx[i]! + options.halfWidthPx);
  const nb = Math.ceil(rMax / bin) + 1;
  const cnt = new Float64Array(nb);
  const pix = new Float64Array(nb);
  const { nX, nY, counts, mask } = frame;
  for (let iy = 0; iy < nY; iy++) {
    for (let ix = 0; ix < nX; ix++) {
      const i = iy * nX + ix;
      if (mask && !mask[i]) continue;
      const ux = ix - cx;
      const uy = iy - cy;
      const r = Math.hypot(m[0]! * ux + m[1]! * uy, m[2]! * ux + m[3]! * uy);
      const k = Math.floor(r / bin);
      if (k >= nb) continue;
      cnt[k] = cnt[k]! + counts[i]!;
      pix[k] = pix[k]! + 1;
    }
  }
  // Gaussian on a linear background: the rings sit on the slope of the broad lobes (and of each other's tails); a
  // constant background put the radii 0.02 … 0.04 px outside (κ −1.2e-3 relative on a noiseless frame)
  let xRef = 0;
  const model: LmModel = {
    nParams: 5,
    evaluate(x, t, g) {
      const z = (x - t[1]!) / t[2]!;
      const e = Math.exp(-0.5 * z * z);
      g[0] = e;
      g[1] = (t[0]! * e * z) / t[2]!;
      g[2] = (t[0]! * e * z * z) / t[2]!;
      g[3] = 1;
      g[4] = x - xRef;
      return t[0]! * e + t[3]! + t[4]! * (x - xRef);
    },
    valid: (t) => t[2]! > 0,
  };
  const out: RingRadiusFit[] = [];
  for (let j = 0; j < options.guessesPx.length; j++) {
    const g = options.guessesPx[j]!;
    const xs: number[] = [];
    const ys: number[] = [];
    const ws: number[] = [];
    for (let k = Math.max(0, Math.floor((g - options.halfWidthPx) / bin)); k * bin <= g + options.halfWidthPx; k++) {
      if (k >= nb || pix[k]! === 0) continue;
      xs.push((k + 0.5) * bin);
      ys.push(cnt[k]! / pix[k]!);
      ws.push((pix[k]! * pix[k]!) / Math.max(cnt[k]!, 1));
    }
    if (xs.length < 7) {
      out.push({ radiusPx: Number.NaN, radiusErrPx: Number.NaN, widthPx: Number.NaN, converged: false });
      continue;
    }
    let iMax = 0;
    let lo = Number.POSITIVE_INFINITY;
    for (let k = 0; k < ys.length; k++) {
      if (ys[k]! > ys[iMax]!) iMax = k;
      lo = Math.min(lo, ys[k]!);
    }
    xRef = g;
    const lm = levenbergMarquardt(model, xs.length, xs, ys, ws, [ys[iMax]! - lo, xs[iMax]!, 2 * bin, lo, 0], {
      maxIterations: 200,
    });
    const dof = xs.length - 5;
    const scale = Math.max(1, lm.chi2 / dof);
    const mu = lm.theta[1]!;
    const ok = lm.covariance !== null && mu > g - options.halfWidthPx && mu < g + options.halfWidthPx;
    out.push({
      radiusPx: ok ? mu : Number.NaN,
      radiusErrPx: ok ? Math.sqrt(lm.covariance![6]! * scale) : Number.NaN,
      widthPx: Math.abs(lm.theta[2]!),
      converged: lm.converged && ok,
    });
  }
  return out;
}
