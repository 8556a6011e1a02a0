/**
 * Estimators of the ω–2ω phase dependence Y(φ) = A₀ + A₁ cos(φ − φ₀) + Σ_{k≥2} A_k cos(kφ − ψ_k) (SCIENCE.md §6.2,
 * conventions C8, C10, C11) for one series: projection over whole periods, linear least squares for arbitrary
 * phases, the FFT form φ₀ = φ_s − arg F₁ (fft.js for power-of-two N, a direct DFT otherwise), and the
 * delay-to-phase conversion φ = delay_sign · 2ωτ (§6.1).
 *
 * Units: phases in rad; φ₀ (phase of maximum yield) and ψ_k in (−π, π]; contrast = A₁/A₀ (dimensionless).
 */
import FFT from 'fft.js';
import { wrapRad } from './angles';
import { AU_TIME_FS, omegaAu } from './constants';
import { invertSmall } from './lm';

// TYPES //

export interface HarmonicFit {
  a0: number;
  /** A_k for k = 1 … harmonics (index k − 1). */
  amplitude: number[];
  /** ψ_k with Y ⊃ A_k cos(kφ − ψ_k); ψ₁ = φ₀, the phase of maximum yield. */
  phase: number[];
  /** A₁/A₀ (NaN when A₀ = 0). */
  contrast: number;
}

// FUNCTIONS //

/**
 * Relative phase from a delay: φ = delay_sign · 2ωτ (SCIENCE.md §6.1, C8; default sign −1: 2ω delayed by τ).
 *
 * @param delayFs - delay τ, fs
 * @param wavelengthNm - fundamental wavelength, nm
 * @param delaySign - ±1
 * @returns φ, rad (not wrapped)
 * @example
 * delayToPhaseRad(1, 800, 1); // returns ≈ 4.70913 (2ω = 4.70913 rad/fs at 800 nm)
 */
export function delayToPhaseRad(delayFs: number, wavelengthNm: number, delaySign: 1 | -1): number {
  if (!Number.isFinite(delayFs)) throw new RangeError(`delayFs must be finite, got ${delayFs}`);
  if (delaySign !== 1 && delaySign !== -1) throw new RangeError(`delaySign must be ±1, got ${String(delaySign)}`);
  return delaySign * 2 * omegaAu(wavelengthNm) * (delayFs / AU_TIME_FS);
}

/**
 * True when the phases are equally spaced (in the given order) and cover a whole number M ≥ 1 of periods with at
 * least three samples per period (Σ e^{iφ_j} = Σ e^{2iφ_j} = 0), i.e. when the projection is exact.
 *
 * @param phases - phases, rad, in scan order
 * @param tolRad - tolerance on each step and on the total span (default 1e-6 rad)
 * @returns `{ equal, periods }` with periods = N·Δ/(2π) (the integer M when `equal`)
 */
export function wholePeriodSampling(phases: readonly number[], tolRad = 1e-6): { equal: boolean; periods: number } {
  const N = phases.length;
  if (N < 3) return { equal: false, periods: N > 1 ? Math.abs(phases[N - 1]! - phases[0]!) / (2 * Math.PI) : 0 };
  const step = (phases[N - 1]! - phases[0]!) / (N - 1);
  let equal = step !== 0;
  for (let j = 1; j < N && equal; j++) if (Math.abs(phases[j]! - phases[j - 1]! - step) > tolRad) equal = false;
  const periods = Math.abs(N * step) / (2 * Math.PI);
  const M = Math.round(periods);
  if (M < 1 || Math.abs(N * Math.abs(step) - 2 * Math.PI * M) > tolRad * N || N / M < 3) equal = false;
  return { equal, periods: equal ? M : periods };
}

/**
 * Highest harmonic the phase sampling can resolve: for whole-period sampling with N/M samples per period,
 * k < (N/M)/2; for least squares, 2k + 1 ≤ number of distinct phases mod 2π.
 *
 * @param phases - phases, rad
 * @param requested - harmonics wanted
 * @returns harmonics usable (≥ 1 when ≥ 3 distinct phases, else 0)
 */
export function resolvableHarmonics(phases: readonly number[], requested: number): number {
  const s = wholePeriodSampling(phases);
  if (s.equal) {
    const perPeriod = phases.length / Math.round(s.periods);
    let k = requested;
    while (k > 0 && !(k < perPeriod / 2)) k--;
    return k;
  }
  const distinct: number[] = [];
  for (const p of phases) {
    const w = wrapRad(p);
    if (!distinct.some((d) => Math.abs(wrapRad(d - w)) < 1e-9)) distinct.push(w);
  }
  return Math.max(0, Math.min(requested, Math.floor((distinct.length - 1) / 2)));
}

/**
 * Projection over whole periods (SCIENCE.md §6.2 (a)): A₀ = ΣY/N, c_k = (2/N)ΣY cos kφ, s_k = (2/N)ΣY sin kφ,
 * A_k = √(c_k² + s_k²), ψ_k = atan2(s_k, c_k).
 *
 * @param y - yields
 * @param phases - phases, rad (same length)
 * @param harmonics - number of harmonics (≥ 1)
 * @returns the fit
 * @example
 * fourierProjection([179.192658, 245.464871, 220.807342, 154.535129], [0, Math.PI/2, Math.PI, 3*Math.PI/2], 1);
 * // returns { a0: 200, amplitude: [50.000000], phase: [2.000000], … } (SCIENCE.md §6.3 (ii))
 */
export function fourierProjection(y: ArrayLike<number>, phases: ArrayLike<number>, harmonics: number): HarmonicFit {
  const N = y.length;
  if (phases.length !== N) throw new RangeError(`phases must have ${N} elements, got ${phases.length}`);
  if (N === 0) throw new RangeError('fourierProjection needs at least one sample, got 0');
  let a0 = 0;
  for (let j = 0; j < N; j++) a0 += y[j]!;
  a0 /= N;
  const amplitude: number[] = [];
  const phase: number[] = [];
  for (let k = 1; k <= harmonics; k++) {
    let c = 0;
    let s = 0;
    for (let j = 0; j < N; j++) {
      c += y[j]! * Math.cos(k * phases[j]!);
      s += y[j]! * Math.sin(k * phases[j]!);
    }
    c *= 2 / N;
    s *= 2 / N;
    amplitude.push(Math.hypot(c, s));
    phase.push(Math.atan2(s, c));
  }
  return { a0, amplitude, phase, contrast: a0 !== 0 ? amplitude[0]! / a0 : Number.NaN };
}

/**
 * Normal-equation inverse (XᵀX)⁻¹ of the design X = [1, cos φ, sin φ, …, cos Hφ, sin Hφ] (shared by all pixels).
 *
 * @param phases - phases, rad
 * @param harmonics - H
 * @returns row-major (2H+1)² inverse, or null when singular (too few distinct phases)
 */
export function leastSquaresNormalInverse(phases: ArrayLike<number>, harmonics: number): Float64Array | null {
  const K = 1 + 2 * harmonics;
  const g = new Float64Array(K * K);
  const x = new Float64Array(K);
  for (let j = 0; j < phases.length; j++) {
    designRow(phases[j]!, harmonics, x);
    for (let p = 0; p < K; p++) for (let q = 0; q < K; q++) g[p * K + q] = g[p * K + q]! + x[p]! * x[q]!;
  }
  return invertSmall(K, g);
}

/** Design row [1, cos φ, sin φ, cos 2φ, sin 2φ, …]. */
export function designRow(phi: number, harmonics: number, out: Float64Array): Float64Array {
  out[0] = 1;
  for (let k = 1; k <= harmonics; k++) {
    out[2 * k - 1] = Math.cos(k * phi);
    out[2 * k] = Math.sin(k * phi);
  }
  return out;
}

/**
 * Unweighted linear least squares for arbitrary phases (SCIENCE.md §6.2 (b)): Y = a + Σ_k (b_k cos kφ + c_k sin kφ);
 * A₀ = a, A_k = √(b_k² + c_k²), ψ_k = atan2(c_k, b_k). Needs ≥ 2H + 1 distinct phases.
 *
 * @param y - yields
 * @param phases - phases, rad
 * @param harmonics - H ≥ 1
 * @returns the fit
 * @throws {RangeError} when the design is singular
 * @example
 * leastSquaresPhaseFit([183.835522, 222.679806, 250, 243.879128, 183.835522, 150.043242],
 *   [0.1, 0.9, 2.0, 2.5, 3.9, 5.1], 1); // returns a0 = 200, A₁ = 50, φ₀ = 2 (SCIENCE.md §6.3 (iii))
 */
export function leastSquaresPhaseFit(y: ArrayLike<number>, phases: ArrayLike<number>, harmonics: number): HarmonicFit {
  const N = y.length;
  if (phases.length !== N) throw new RangeError(`phases must have ${N} elements, got ${phases.length}`);
  const inv = leastSquaresNormalInverse(phases, harmonics);
  if (!inv) {
    throw new RangeError(`least squares with ${harmonics} harmonic(s) needs ≥ ${2 * harmonics + 1} distinct phases`);
  }
  const K = 1 + 2 * harmonics;
  const b = new Float64Array(K);
  const x = new Float64Array(K);
  for (let j = 0; j < N; j++) {
    designRow(phases[j]!, harmonics, x);
    for (let p = 0; p < K; p++) b[p] = b[p]! + x[p]! * y[j]!;
  }
  const t = new Float64Array(K);
  for (let p = 0; p < K; p++) {
    let s = 0;
    for (let q = 0; q < K; q++) s += inv[p * K + q]! * b[q]!;
    t[p] = s;
  }
  const amplitude: number[] = [];
  const phase: number[] = [];
  for (let k = 1; k <= harmonics; k++) {
    amplitude.push(Math.hypot(t[2 * k - 1]!, t[2 * k]!));
    phase.push(Math.atan2(t[2 * k]!, t[2 * k - 1]!));
  }
  const a0 = t[0]!;
  return { a0, amplitude, phase, contrast: a0 !== 0 ? amplitude[0]! / a0 : Number.NaN };
}

/**
 * Poisson-weighted linear least squares for arbitrary phases (SCIENCE.md §6.2 (b)), for low-count series where
 * equal weights waste information: Y = a + Σ_k (b_k cos kφ + c_k sin kφ) with weights w_j = 1/σ_j², first
 * σ_j² = max(Y_j, 1) (the data), then σ_j² = max(μ_j, ε) with μ_j the model value of the previous pass
 * (iteratively reweighted). Each model-weighted pass moves toward the fixed point Σ_j (Y_j/μ_j − 1) x_j = 0, which is
 * the score equation of the Poisson likelihood, so with enough passes the fit is the Poisson maximum-likelihood fit.
 *
 * @param y - counts (≥ 0; negative values from a background subtraction are allowed and weighted as 1 count)
 * @param phases - phases, rad
 * @param harmonics - H ≥ 1
 * @param modelPasses - model-weighted passes after the data-weighted one (default 4; SCIENCE.md asks for ≥ 1)
 * @returns the fit and the parameter covariance (XᵀWX)⁻¹ of the last pass, row-major (2H+1)²
 * @throws {RangeError} when the design is singular (fewer than 2H + 1 distinct phases)
 */
export function poissonWeightedPhaseFit(
  y: ArrayLike<number>,
  phases: ArrayLike<number>,
  harmonics: number,
  modelPasses = 4,
): HarmonicFit & { covariance: Float64Array } {
  const N = y.length;
  if (phases.length !== N) throw new RangeError(`phases must have ${N} elements, got ${phases.length}`);
  if (!(Number.isInteger(harmonics) && harmonics >= 1)) throw new RangeError(`harmonics must be ≥ 1, got ${harmonics}`);
  if (!(Number.isInteger(modelPasses) && modelPasses >= 0)) {
    throw new RangeError(`modelPasses must be an integer ≥ 0, got ${modelPasses}`);
  }
  const K = 1 + 2 * harmonics;
  const distinct: number[] = [];
  for (let j = 0; j < N; j++) {
    const w = wrapRad(phases[j]!);
    if (!distinct.some((d) => Math.abs(wrapRad(d - w)) < 1e-9)) distinct.push(w);
  }
  if (distinct.length < K) {
    throw new RangeError(
      `least squares with ${harmonics} harmonic(s) needs ≥ ${K} distinct phases, got ${distinct.length}`,
    );
  }
  const x = new Float64Array(K);
  const g = new Float64Array(K * K);
  const b = new Float64Array(K);
  const t = new Float64Array(K);
  let inv: Float64Array | null = null;
  for (let pass = 0; pass <= modelPasses; pass++) {
    g.fill(0);
    b.fill(0);
    for (let j = 0; j < N; j++) {
      designRow(phases[j]!, harmonics, x);
      let variance: number;
      if (pass === 0) variance = Math.max(y[j]!, 1);
      else {
        let mu = 0;
        for (let p = 0; p < K; p++) mu += x[p]! * t[p]!;
        // a model that dips to or below zero keeps a floor of a tenth of a count (no infinite weights)
        variance = Math.max(mu, 0.1);
      }
      const w = 1 / variance;
      for (let p = 0; p < K; p++) {
        b[p] = b[p]! + w * x[p]! * y[j]!;
        for (let q = 0; q < K; q++) g[p * K + q] = g[p * K + q]! + w * x[p]! * x[q]!;
      }
    }
    inv = invertSmall(K, g);
    if (!inv) {
      throw new RangeError(`least squares with ${harmonics} harmonic(s) needs ≥ ${2 * harmonics + 1} distinct phases`);
    }
    for (let p = 0; p < K; p++) {
      let s = 0;
      for (let q = 0; q < K; q++) s += inv[p * K + q]! * b[q]!;
      t[p] = s;
    }
  }
  const amplitude: number[] = [];
  const phase: number[] = [];
  for (let k = 1; k <= harmonics; k++) {
    amplitude.push(Math.hypot(t[2 * k - 1]!, t[2 * k]!));
    phase.push(Math.atan2(t[2 * k]!, t[2 * k - 1]!));
  }
  const a0 = t[0]!;
  return {
    a0,
    amplitude,
    phase,
    contrast: a0 !== 0 ? amplitude[0]! / a0 : Number.NaN,
    covariance: inv as Float64Array,
  };
}

/**
 * FFT form (SCIENCE.md §6.2 (a), C11): samples at φ_j = φ_s + 2πj/N; F_k = Σ Y_j e^{−2πijk/N};
 * A₀ = F₀/N, A_k = 2|F_k|/N, ψ_k = wrap(kφ_s − arg F_k) (k = 1: φ₀ = φ_s − arg F₁). fft.js for power-of-two N,
 * a direct DFT otherwise.
 *
 * @param y - yields over exactly one period (N ≥ 3)
 * @param phaseStartRad - φ_s, rad
 * @param harmonics - number of harmonics (k < N/2)
 * @returns the fit and F₁ (real, imaginary) for cross-checks
 * @example
 * fftPhaseFit(Y16, 0, 1); // returns φ₀ = 2.000000, F₁ = −166.458735 − 363.718971i (SCIENCE.md §6.3 (i))
 */
export function fftPhaseFit(
  y: ArrayLike<number>,
  phaseStartRad: number,
  harmonics: number,
): HarmonicFit & { f1: [number, number] } {
  const N = y.length;
  if (N < 3) throw new RangeError(`fftPhaseFit needs ≥ 3 samples, got ${N}`);
  if (!(harmonics >= 1 && harmonics < N / 2)) {
    throw new RangeError(`harmonics must be in [1, N/2) for N = ${N}, got ${harmonics}`);
  }
  const re = new Float64Array(harmonics + 1);
  const im = new Float64Array(harmonics + 1);
  if ((N & (N - 1)) === 0) {
    const f = new FFT(N);
    const input = new Array<number>(N);
    for (let j = 0; j < N; j++) input[j] = y[j]!;
    const out = f.createComplexArray() as number[];
    f.realTransform(out, input);
    for (let k = 0; k <= harmonics; k++) {
      re[k] = out[2 * k]!;
      im[k] = out[2 * k + 1]!;
    }
  } else {
    for (let k = 0; k <= harmonics; k++) {
      let r = 0;
      let i = 0;
      for (let j = 0; j < N; j++) {
        const a = (-2 * Math.PI * j * k) / N;
        r += y[j]! * Math.cos(a);
        i += y[j]! * Math.sin(a);
      }
      re[k] = r;
      im[k] = i;
    }
  }
  const a0 = re[0]! / N;
  const amplitude: number[] = [];
  const phase: number[] = [];
  for (let k = 1; k <= harmonics; k++) {
    amplitude.push((2 * Math.hypot(re[k]!, im[k]!)) / N);
    phase.push(wrapRad(k * phaseStartRad - Math.atan2(im[k]!, re[k]!)));
  }
  return { a0, amplitude, phase, contrast: a0 !== 0 ? amplitude[0]! / a0 : Number.NaN, f1: [re[1]!, im[1]!] };
}
