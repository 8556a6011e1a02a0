/**
 * Poisson bootstrap of binned data (SCIENCE.md §9.2, [paper: B. Efron, Ann. Stat. 7, 1 (1979)]): every replicate
 * draws N*_i ~ Poisson(N_i) independently per bin and repeats the analysis chain on it; the reported uncertainty is
 * the standard deviation of the replicate statistics (n − 1 normalisation).
 *
 * Negative bins (after background subtraction) are resampled sign-symmetrically, N* = −Poisson(−N), so their
 * variance is |N| like a Poisson bin (Lobeline's choice; it keeps the mean and does not clip). Non-integer bins
 * (sub-pixel splitting, flat field) use Poisson of the non-integer mean (variance = mean).
 *
 * Angles are handled on the circle: the spread is taken of wrap(value − reference) with the given period.
 */
import { wrapDeg } from './angles';
import type { Prng } from './prng';

// FUNCTIONS //

/**
 * Kernel: one Poisson replicate of N bins, dst[i] = Poisson(src[i]) (sign-symmetric for negative src). NaN stays
 * NaN. Allocates nothing; N ≤ 0 does nothing.
 *
 * @param N - bins
 * @param src - data
 * @param strideS - stride of src
 * @param offsetS - offset of src
 * @param dst - replicate
 * @param strideD - stride of dst
 * @param offsetD - offset of dst
 * @param rng - generator
 * @returns dst
 */
export function poissonResampleKernel(
  N: number,
  src: ArrayLike<number>,
  strideS: number,
  offsetS: number,
  dst: Float64Array,
  strideD: number,
  offsetD: number,
  rng: Prng,
): Float64Array {
  let is = offsetS;
  let id = offsetD;
  for (let i = 0; i < N; i++) {
    const v = src[is]!;
    if (v > 0) dst[id] = rng.poisson(v);
    else if (v < 0) dst[id] = -rng.poisson(-v);
    else dst[id] = v; // 0 or NaN
    is += strideS;
    id += strideD;
  }
  return dst;
}

/**
 * Standard deviation of finite replicate values around their mean (n − 1), optionally on a circle.
 *
 * @param values - replicate values (NaN = failed replicate, skipped)
 * @param B - replicates
 * @param K - statistics per replicate (row-major [B][K])
 * @param k - statistic index
 * @param reference - centre for circular statistics (ignored when period is null)
 * @param period - circle period (e.g. 360) or null for a linear statistic
 * @returns `{ std, used }`; std is NaN with fewer than two finite replicates
 */
export function replicateStd(
  values: Float64Array,
  B: number,
  K: number,
  k: number,
  reference: number,
  period: number | null,
): { std: number; used: number } {
  let n = 0;
  let s = 0;
  let s2 = 0;
  for (let b = 0; b < B; b++) {
    let v = values[b * K + k]!;
    if (!Number.isFinite(v)) continue;
    if (period !== null) v = wrapDeg(v - reference, period);
    n++;
    s += v;
    s2 += v * v;
  }
  if (n < 2) return { std: Number.NaN, used: n };
  const mean = s / n;
  const varc = Math.max(0, (s2 - n * mean * mean) / (n - 1));
  return { std: Math.sqrt(varc), used: n };
}
