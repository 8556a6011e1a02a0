/**
 * VMI momentum scale from above-threshold-ionization rings (SCIENCE.md §7.1, [common practice]): E_n = E₀ + nħω and
 * E = κ r², so r_n² = E₀/κ + (ħω/κ) n; a (weighted) straight-line fit of r_n² against n gives κ = ħω/slope,
 * E₀ = κ·intercept, α = √(2κ/E_h) (a.u. of momentum per pixel).
 * Weights: σ(r_n²) = 2 r_n σ(r_n) when radius errors are given, else unweighted.
 */
import { HARTREE_EV } from './constants';
import { requirePositive } from './validate';

// TYPES //

export interface AtiScaleFit {
  /** κ, eV px⁻². */
  kappaEvPerPx2: number;
  /** E₀, eV (depends on the order labelling, κ does not). */
  e0Ev: number;
  /** α = √(2κ/E_h), a.u. px⁻¹. */
  momentumPerPixelAu: number;
  /** Slope of r² against n, px². */
  slopePx2: number;
  /** Intercept of r² against n, px². */
  interceptPx2: number;
  /**
   * Standard errors (straight-line least squares [common practice]): from the given σ(r_n) as they are when radius
   * errors are given, else from the scatter about the line, s² = Σ res²/(N − 2) (NaN for two rings).
   */
  slopeErrPx2: number;
  interceptErrPx2: number;
  /** Covariance of slope and intercept, px⁴. */
  slopeInterceptCovPx4: number;
  kappaErrEvPerPx2: number;
  e0ErrEv: number;
  momentumPerPixelErrAu: number;
  /** Σ w res² (w = 1/σ(r²)² when errors are given, else 1) and the degrees of freedom N − 2. */
  chi2: number;
  dof: number;
  /** r_n² − (intercept + slope·n) per ring, px². */
  residualsPx2: number[];
}

// FUNCTIONS //

/**
 * Fits κ and E₀ from ring radii.
 *
 * @param orders - ring orders n (any integers, e.g. 0 … 5)
 * @param radiiPx - ring radii r_n, px
 * @param photonEnergyEvValue - ħω, eV
 * @param radiusErrPx - optional σ(r_n), px
 * @returns the fit
 * @throws {RangeError} with fewer than two rings or mismatched lengths
 * @example
 * fitAtiScale([0,1,2,3,4,5], [47.43,100,133.22,159.68,182.33,202.47], 1.549802);
 * // returns κ ≈ 2.000075e-4 eV/px², E₀ ≈ 0.450096 eV (SCIENCE.md §7.1)
 */
export function fitAtiScale(
  orders: ArrayLike<number>,
  radiiPx: ArrayLike<number>,
  photonEnergyEvValue: number,
  radiusErrPx?: ArrayLike<number>,
): AtiScaleFit {
  const N = orders.length;
  if (radiiPx.length !== N) throw new RangeError(`radiiPx must have ${N} elements, got ${radiiPx.length}`);
  if (radiusErrPx && radiusErrPx.length !== N) {
    throw new RangeError(`radiusErrPx must have ${N} elements, got ${radiusErrPx.length}`);
  }
  if (N < 2) throw new RangeError(`the ring fit needs at least 2 rings, got ${N}`);
  requirePositive('photonEnergyEv', photonEnergyEvValue);
  let sw = 0;
  let sx = 0;
  let sy = 0;
  for (let i = 0; i < N; i++) {
    const r = radiiPx[i]!;
    const w = radiusErrPx ? 1 / (2 * r * radiusErrPx[i]!) ** 2 : 1;
    sw += w;
    sx += w * orders[i]!;
    sy += w * r * r;
  }
  const mx = sx / sw;
  const my = sy / sw;
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < N; i++) {
    const r = radiiPx[i]!;
    const w = radiusErrPx ? 1 / (2 * r * radiusErrPx[i]!) ** 2 : 1;
    const dx = orders[i]! - mx;
    sxx += w * dx * dx;
    sxy += w * dx * (r * r - my);
  }
  if (!(sxx > 0)) throw new RangeError('the ring orders must not all be equal');
  const slope = sxy / sxx;
  const intercept = my - slope * mx;
  const kappa = photonEnergyEvValue / slope;
  let chi2 = 0;
  const residualsPx2: number[] = [];
  for (let i = 0; i < N; i++) {
    const r = radiiPx[i]!;
    const w = radiusErrPx ? 1 / (2 * r * radiusErrPx[i]!) ** 2 : 1;
    const res = r * r - (intercept + slope * orders[i]!);
    residualsPx2.push(res);
    chi2 += w * res * res;
  }
  const dof = N - 2;
  // weighted: Var(slope) = 1/Sxx, Var(intercept) = 1/Σw + x̄²/Sxx, cov = −x̄/Sxx; unweighted: times s²
  const s2 = radiusErrPx ? 1 : dof > 0 ? chi2 / dof : Number.NaN;
  const varSlope = s2 / sxx;
  const varIntercept = s2 * (1 / sw + (mx * mx) / sxx);
  const cov = (-s2 * mx) / sxx;
  const hw = photonEnergyEvValue;
  const kappaErr = (hw * Math.sqrt(varSlope)) / (slope * slope);
  // E₀ = ħω·intercept/slope
  const e0Var =
    hw *
    hw *
    (varIntercept / slope ** 2 + (intercept ** 2 * varSlope) / slope ** 4 - (2 * intercept * cov) / slope ** 3);
  const alpha = Math.sqrt((2 * kappa) / HARTREE_EV);
  return {
    slopeErrPx2: Math.sqrt(varSlope),
    interceptErrPx2: Math.sqrt(varIntercept),
    slopeInterceptCovPx4: cov,
    kappaErrEvPerPx2: kappaErr,
    e0ErrEv: Math.sqrt(Math.max(e0Var, 0)),
    momentumPerPixelErrAu: (alpha * kappaErr) / (2 * kappa),
    chi2,
    dof,
    residualsPx2,
    kappaEvPerPx2: kappa,
    e0Ev: kappa * intercept,
    momentumPerPixelAu: Math.sqrt((2 * kappa) / HARTREE_EV),
    slopePx2: slope,
    interceptPx2: intercept,
  };
}
