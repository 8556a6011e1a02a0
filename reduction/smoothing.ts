/**
 * Circular (periodic) Gaussian smoothing of an angular distribution.
 *
 * Convention (Lobeline's choice): `angular_smoothing_deg` is the standard deviation σ of the Gaussian kernel, in
 * degrees; the kernel is sampled at the bin spacing, truncated at ±4σ, normalised to sum 1 (so total counts are
 * kept) and wrapped around 360°. σ = 0, or σ below a tenth of a bin, copies the input.
 */

// FUNCTIONS //

/**
 * Builds the normalised kernel for a bin width.
 *
 * @param sigmaDeg - σ, degrees (≥ 0)
 * @param binDeg - bin width, degrees (> 0)
 * @returns kernel of odd length 2h + 1 (h = half-width in bins); [1] for no smoothing
 */
export function gaussianKernel(sigmaDeg: number, binDeg: number): Float64Array {
  if (!(sigmaDeg >= 0) || !(binDeg > 0)) {
    throw new RangeError(`smoothing needs σ ≥ 0 and a bin width > 0, got σ = ${sigmaDeg}, bin = ${binDeg}`);
  }
  const s = sigmaDeg / binDeg;
  if (s < 0.1) return Float64Array.of(1);
  const h = Math.max(1, Math.ceil(4 * s));
  const k = new Float64Array(2 * h + 1);
  let sum = 0;
  for (let i = -h; i <= h; i++) {
    const v = Math.exp((-0.5 * i * i) / (s * s));
    k[i + h] = v;
    sum += v;
  }
  for (let i = 0; i < k.length; i++) k[i] = k[i]! / sum;
  return k;
}

/**
 * Kernel: periodic convolution out[j] = Σ_k kernel[k] x[(j + k − h) mod N]. The kernel length must not exceed N
 * by more than wrap-around allows (longer kernels wrap several times, which is still a valid periodic convolution).
 *
 * @param N - length of the periodic signal (N ≤ 0 does nothing)
 * @param x - input (not aliased with out)
 * @param kernel - odd-length kernel
 * @param out - output
 * @returns out
 */
export function circularConvolveKernel(
  N: number,
  x: ArrayLike<number>,
  kernel: ArrayLike<number>,
  out: Float64Array,
): Float64Array {
  const L = kernel.length;
  const h = (L - 1) / 2;
  for (let j = 0; j < N; j++) {
    let s = 0;
    for (let k = 0; k < L; k++) {
      let idx = (j + k - h) % N;
      if (idx < 0) idx += N;
      s += kernel[k]! * x[idx]!;
    }
    out[j] = s;
  }
  return out;
}

/**
 * Smooths a periodic angular distribution with a Gaussian of σ = `sigmaDeg`.
 *
 * @param y - distribution over 360° (bin width 360/len)
 * @param sigmaDeg - σ, degrees
 * @param out - output (default new)
 * @returns smoothed distribution
 * @example
 * smoothCircular(Float64Array.of(0, 0, 6, 0), 0); // returns [0, 0, 6, 0]
 */
export function smoothCircular(
  y: ArrayLike<number>,
  sigmaDeg: number,
  out: Float64Array = new Float64Array(y.length),
): Float64Array {
  const N = y.length;
  if (N === 0) return out;
  const k = gaussianKernel(sigmaDeg, 360 / N);
  return circularConvolveKernel(N, y, k, out);
}
