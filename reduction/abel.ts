/**
 * Onion-peeling Abel inversion [paper: C. J. Dasch, Appl. Opt. 31, 1146 (1992)] for images that are cylindrically
 * symmetric about an axis in the detector plane (SCIENCE.md §8.1: linear or parallel ω–2ω polarization only).
 *
 * Model: the distribution is constant on rings (j − ½)Δr < ρ < (j + ½)Δr; the projection at x_i = iΔr is
 * P_i = Δr Σ_{j≥i} W_ij f_j with W_ii = √((2i+1)² − 4i²), W_ij = √((2j+1)² − 4i²) − √((2j−1)² − 4i²) (j > i)
 * (SCIENCE.md §8.4). The inverse is back-substitution from the outermost ring. Row-by-row for images: each half
 * row from the symmetry axis outward is one projection; never average the two halves for ω–2ω data (§8.1).
 * Units: P in counts per pixel along the line of sight, Δr in the same length unit as x (pixels or a.u.); f in
 * P-units per unit length.
 */
import { requirePositive } from './validate';

// FUNCTIONS //

/**
 * Dasch onion-peeling weight W_ij (dimensionless; 0 for j < i).
 *
 * @param i - projection index ≥ 0
 * @param j - ring index ≥ 0
 * @returns W_ij
 */
export function onionWeight(i: number, j: number): number {
  if (j < i) return 0;
  const a = (2 * j + 1) ** 2 - 4 * i * i;
  if (j === i) return Math.sqrt(a);
  return Math.sqrt(a) - Math.sqrt((2 * j - 1) ** 2 - 4 * i * i);
}

/**
 * Kernel: forward onion-peeling projection P_i = Δr Σ_{j≥i} W_ij f_j for N rings (strided).
 *
 * @param N - rings (N ≤ 0 does nothing)
 * @param f - ring values
 * @param strideF - stride of f
 * @param offsetF - offset of f
 * @param dr - ring width Δr
 * @param out - projection
 * @param strideOut - stride of out
 * @param offsetOut - offset of out
 * @returns out
 */
export function onionForwardKernel(
  N: number,
  f: ArrayLike<number>,
  strideF: number,
  offsetF: number,
  dr: number,
  out: Float64Array,
  strideOut: number,
  offsetOut: number,
): Float64Array {
  for (let i = 0; i < N; i++) {
    let s = 0;
    for (let j = i; j < N; j++) s += onionWeight(i, j) * f[offsetF + j * strideF]!;
    out[offsetOut + i * strideOut] = dr * s;
  }
  return out;
}

/**
 * Kernel: onion-peeling inversion by back-substitution, f_i = (P_i/Δr − Σ_{j>i} W_ij f_j)/W_ii, from the outermost
 * ring inward (strided; out may not alias p).
 *
 * @param N - rings (N ≤ 0 does nothing)
 * @param p - projection at x_i = iΔr
 * @param strideP - stride of p
 * @param offsetP - offset of p
 * @param dr - ring width Δr
 * @param out - ring values
 * @param strideOut - stride of out
 * @param offsetOut - offset of out
 * @returns out
 */
export function onionInverseKernel(
  N: number,
  p: ArrayLike<number>,
  strideP: number,
  offsetP: number,
  dr: number,
  out: Float64Array,
  strideOut: number,
  offsetOut: number,
): Float64Array {
  for (let i = N - 1; i >= 0; i--) {
    let s = p[offsetP + i * strideP]! / dr;
    for (let j = i + 1; j < N; j++) s -= onionWeight(i, j) * out[offsetOut + j * strideOut]!;
    out[offsetOut + i * strideOut] = s / onionWeight(i, i);
  }
  return out;
}

/**
 * Onion-peeling inversion of one projection (public layer).
 *
 * @param projection - P at x_i = iΔr, i = 0 … N − 1 (from the axis outward)
 * @param dr - sample spacing Δr (> 0)
 * @returns f at ρ_i = iΔr
 * @throws {RangeError} for a non-positive Δr
 * @example
 * abelInvertOnion(Float64Array.of(4), 1); // returns [4] (W_00 = 1)
 */
export function abelInvertOnion(projection: ArrayLike<number>, dr: number): Float64Array {
  requirePositive('dr', dr);
  const N = projection.length;
  return onionInverseKernel(N, projection, 1, 0, dr, new Float64Array(N), 1, 0);
}

/**
 * Onion-peeling forward projection (public layer).
 *
 * @param rings - f on rings j = 0 … N − 1
 * @param dr - ring width (> 0)
 * @returns P at x_i = iΔr
 */
export function abelForwardOnion(rings: ArrayLike<number>, dr: number): Float64Array {
  requirePositive('dr', dr);
  const N = rings.length;
  return onionForwardKernel(N, rings, 1, 0, dr, new Float64Array(N), 1, 0);
}

/**
 * Inverts an image row by row about a vertical symmetry axis at column `axisX` (integer), each half separately:
 * columns axisX, axisX + 1, … (right half) and axisX, axisX − 1, … (left half). The axis column gets the mean of the
 * two halves' f₀. The image is [row][column] row-major.
 *
 * @param image - projection image
 * @param nX - columns
 * @param nY - rows
 * @param axisX - symmetry-axis column (0 … nX − 1)
 * @param dr - pixel size (> 0)
 * @returns inverted image (slice through the axis), same layout
 */
export function abelInvertImageOnion(
  image: ArrayLike<number>,
  nX: number,
  nY: number,
  axisX: number,
  dr: number,
): Float64Array {
  requirePositive('dr', dr);
  if (!Number.isInteger(axisX) || axisX < 0 || axisX >= nX) {
    throw new RangeError(`axisX must be an integer column in [0, ${nX - 1}], got ${axisX}`);
  }
  if (image.length !== nX * nY) throw new RangeError(`image must have ${nX * nY} elements, got ${image.length}`);
  const out = new Float64Array(nX * nY);
  const nR = nX - axisX;
  const nL = axisX + 1;
  const tmp = new Float64Array(Math.max(nR, nL));
  for (let y = 0; y < nY; y++) {
    const o = y * nX;
    onionInverseKernel(nR, image, 1, o + axisX, dr, tmp, 1, 0);
    const rightAxis = tmp[0]!;
    for (let i = 1; i < nR; i++) out[o + axisX + i] = tmp[i]!;
    onionInverseKernel(nL, image, -1, o + axisX, dr, tmp, 1, 0);
    for (let i = 1; i < nL; i++) out[o + axisX - i] = tmp[i]!;
    out[o + axisX] = 0.5 * (rightAxis + tmp[0]!);
  }
  return out;
}
