/**
 * n-fold angular-harmonic estimator of the lobe direction (SCIENCE.md §9.1 item 3, [common practice]):
 * φ̂ = (1/n) atan2(Σ w sin nφ, Σ w cos nφ). n = 1 for one lobe, 2 for the two-lobed elliptical pattern, 3 for the
 * bicircular pattern; the result is defined modulo 360°/n and returned in (−180°/n, 180°/n].
 */
import { RAD_PER_DEG } from './angles';

// FUNCTIONS //

/**
 * Kernel: n-fold harmonic direction of N weighted angles (strided).
 *
 * @param N - number of angles (N ≤ 0 gives NaN)
 * @param n - harmonic order (≥ 1)
 * @param angleDeg - angles, degrees
 * @param strideA - stride of angleDeg
 * @param offsetA - offset of angleDeg
 * @param w - weights, or null for 1
 * @param strideW - stride of w
 * @param offsetW - offset of w
 * @returns φ̂ in degrees, in (−180/n, 180/n]; NaN when the resultant vanishes
 */
export function harmonicAngleKernel(
  N: number,
  n: number,
  angleDeg: ArrayLike<number>,
  strideA: number,
  offsetA: number,
  w: ArrayLike<number> | null,
  strideW: number,
  offsetW: number,
): number {
  if (N <= 0) return Number.NaN;
  let s = 0;
  let c = 0;
  let ia = offsetA;
  let iw = offsetW;
  for (let i = 0; i < N; i++) {
    const wi = w ? w[iw]! : 1;
    const a = n * angleDeg[ia]! * RAD_PER_DEG;
    s += wi * Math.sin(a);
    c += wi * Math.cos(a);
    ia += strideA;
    iw += strideW;
  }
  if (s === 0 && c === 0) return Number.NaN;
  let r = Math.atan2(s, c) / RAD_PER_DEG / n;
  if (r <= -180 / n) r += 360 / n;
  return r;
}

/**
 * n-fold harmonic direction of a set of angles (public layer).
 *
 * @param angleDeg - angles, degrees
 * @param n - harmonic order, integer ≥ 1
 * @param weights - optional weights (same length)
 * @returns φ̂, degrees, in (−180/n, 180/n]
 * @throws {RangeError} for a bad order or mismatched weights
 * @example
 * harmonicAngleDeg([-78, -80, -82, 100, 102, 98], 2); // returns -80 (SCIENCE.md §9.1)
 */
export function harmonicAngleDeg(angleDeg: ArrayLike<number>, n: number, weights?: ArrayLike<number>): number {
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`harmonic order n must be an integer ≥ 1, got ${n}`);
  if (weights && weights.length !== angleDeg.length) {
    throw new RangeError(`weights must have ${angleDeg.length} elements, got ${weights.length}`);
  }
  return harmonicAngleKernel(angleDeg.length, n, angleDeg, 1, 0, weights ?? null, 1, 0);
}
