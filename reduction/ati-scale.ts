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
  return {
    kappaEvPerPx2: kappa,
    e0Ev: kappa * intercept,
    momentumPerPixelAu: Math.sqrt((2 * kappa) / HARTREE_EV),
    slopePx2: slope,
    interceptPx2: intercept,
  };
}
