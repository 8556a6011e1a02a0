/**
 * Streaming per-pixel two-colour phase analysis (SCIENCE.md §6.2): frames are added one at a time with their phase
 * φ_j and only the per-pixel sums S₀ = ΣY, C_k = ΣY cos kφ, S_k = ΣY sin kφ (k = 1 … H) are kept, interleaved
 * [pixel][1 + 2H] in one Float64Array — never the stack. At the end:
 * - `fourier` (phases equally spaced over whole periods): A₀ = S₀/N, c_k = 2C_k/N, s_k = 2S_k/N;
 * - `least_squares` (any phases): [a, b₁, c₁, …] = (XᵀX)⁻¹ [S₀, C₁, S₁, …], the 3×3 (or (2H+1)²) normal matrix
 *   being shared by all pixels (unweighted; identical to the projection when the sampling is whole-period).
 * Maps: mean A₀, amplitude A₁, phase_of_max φ₀ = atan2(s₁, c₁) ∈ (−π, π], contrast A₁/A₀, and for H ≥ 2
 * harmonic_2_amplitude A₂ and harmonic_2_phase ψ₂ (Y ⊃ A₂ cos(2φ − ψ₂)).
 * NaN policy: pixels whose mean A₀ is below `minCounts` get NaN in every map except `mean` (kept so the mask can be
 * seen); a NaN input value makes that pixel's sums NaN.
 */
import {
  type HarmonicFit,
  leastSquaresNormalInverse,
  resolvableHarmonics,
  wholePeriodSampling,
} from './phase-estimators';
import { requireInteger, requireLength } from './validate';

// TYPES //

export interface PhaseMaps {
  mean: Float32Array;
  amplitude: Float32Array;
  phase_of_max: Float32Array;
  contrast: Float32Array;
  harmonic_2_amplitude?: Float32Array;
  harmonic_2_phase?: Float32Array;
}

export interface PhaseMapResult {
  method: 'fourier' | 'least_squares';
  nPhases: number;
  periods: number;
  harmonicsUsed: number;
  maps: PhaseMaps;
  masked: number;
}

export interface PhaseAccumulator {
  readonly nPixels: number;
  readonly harmonics: number;
  /** Phases added so far, rad, in order. */
  readonly phases: readonly number[];
  /** Adds one frame (length nPixels) at phase φ (rad). */
  addFrame(frame: ArrayLike<number>, phaseRad: number): void;
  /** Computes the maps (method chosen from the phases unless forced). */
  finish(options: { minCounts: number; method?: 'fourier' | 'least_squares' }): PhaseMapResult;
}

// FUNCTIONS //

/**
 * Kernel: adds one frame to the interleaved sums acc[(i·K) + …], K = 1 + 2H, with cs[k−1] = cos kφ, sn[k−1] = sin kφ.
 * Allocates nothing; N ≤ 0 does nothing.
 *
 * @param N - pixels
 * @param frame - frame values
 * @param stride - stride of frame
 * @param offset - offset of frame
 * @param H - harmonics
 * @param cs - cos kφ, k = 1 … H
 * @param sn - sin kφ, k = 1 … H
 * @param acc - sums, length N·(1 + 2H)
 * @returns acc
 */
export function accumulateHarmonicsKernel(
  N: number,
  frame: ArrayLike<number>,
  stride: number,
  offset: number,
  H: number,
  cs: ArrayLike<number>,
  sn: ArrayLike<number>,
  acc: Float64Array,
): Float64Array {
  let ix = offset;
  if (H === 1) {
    const c1 = cs[0]!;
    const s1 = sn[0]!;
    for (let i = 0, o = 0; i < N; i++, o += 3) {
      const y = frame[ix]!;
      ix += stride;
      acc[o]! += y;
      acc[o + 1]! += y * c1;
      acc[o + 2]! += y * s1;
    }
    return acc;
  }
  if (H === 2) {
    const c1 = cs[0]!;
    const s1 = sn[0]!;
    const c2 = cs[1]!;
    const s2 = sn[1]!;
    for (let i = 0, o = 0; i < N; i++, o += 5) {
      const y = frame[ix]!;
      ix += stride;
      acc[o]! += y;
      acc[o + 1]! += y * c1;
      acc[o + 2]! += y * s1;
      acc[o + 3]! += y * c2;
      acc[o + 4]! += y * s2;
    }
    return acc;
  }
  const K = 1 + 2 * H;
  for (let i = 0, o = 0; i < N; i++, o += K) {
    const y = frame[ix]!;
    ix += stride;
    acc[o]! += y;
    for (let k = 0; k < H; k++) {
      acc[o + 1 + 2 * k]! += y * cs[k]!;
      acc[o + 2 + 2 * k]! += y * sn[k]!;
    }
  }
  return acc;
}

/**
 * Creates a streaming accumulator.
 *
 * @param nPixels - pixels per frame
 * @param harmonics - harmonics H to accumulate (1 … 8)
 * @returns the accumulator
 * @throws {RangeError} for bad sizes
 * @example
 * const acc = createPhaseAccumulator(512 * 512, 2);
 * for (const [frame, phi] of frames) acc.addFrame(frame, phi);
 * const { maps } = acc.finish({ minCounts: 10 });
 */
export function createPhaseAccumulator(nPixels: number, harmonics: number): PhaseAccumulator {
  requireInteger('nPixels', nPixels, 1, 2 ** 31);
  const H = requireInteger('harmonics', harmonics, 1, 8);
  const K = 1 + 2 * H;
  const acc = new Float64Array(nPixels * K);
  const phases: number[] = [];
  const cs = new Float64Array(H);
  const sn = new Float64Array(H);
  return {
    nPixels,
    harmonics: H,
    phases,
    addFrame(frame, phaseRad) {
      requireLength('frame', frame, nPixels);
      if (!Number.isFinite(phaseRad)) throw new RangeError(`phaseRad must be finite, got ${phaseRad}`);
      for (let k = 1; k <= H; k++) {
        cs[k - 1] = Math.cos(k * phaseRad);
        sn[k - 1] = Math.sin(k * phaseRad);
      }
      accumulateHarmonicsKernel(nPixels, frame, 1, 0, H, cs, sn, acc);
      phases.push(phaseRad);
    },
    finish({ minCounts, method }) {
      return finishPhaseSums(acc, nPixels, H, phases, minCounts, method);
    },
  };
}

/**
 * Turns accumulated sums into maps (used by the accumulator; exported for tests and region curves).
 *
 * @param acc - interleaved sums [pixel][1 + 2H]
 * @param nPixels - pixels
 * @param H - harmonics accumulated
 * @param phases - phases of the frames, rad
 * @param minCounts - mask threshold on the mean
 * @param forced - force a method
 * @returns maps and bookkeeping
 * @throws {RangeError} with fewer than three distinct phases
 */
export function finishPhaseSums(
  acc: Float64Array,
  nPixels: number,
  H: number,
  phases: readonly number[],
  minCounts: number,
  forced?: 'fourier' | 'least_squares',
): PhaseMapResult {
  const N = phases.length;
  const sampling = wholePeriodSampling(phases);
  const method = forced ?? (sampling.equal ? 'fourier' : 'least_squares');
  const Hu = Math.min(H, resolvableHarmonics(phases, H));
  if (Hu < 1) throw new RangeError(`phase analysis needs ≥ 3 distinct phases, got ${N} frame(s)`);
  const K = 1 + 2 * H;
  const Ku = 1 + 2 * Hu;
  let inv: Float64Array | null = null;
  if (method === 'least_squares') {
    inv = leastSquaresNormalInverse(phases, Hu);
    if (!inv) throw new RangeError('least-squares phase fit is singular: too few distinct phases');
  }
  const mean = new Float32Array(nPixels);
  const amplitude = new Float32Array(nPixels);
  const phaseOfMax = new Float32Array(nPixels);
  const contrast = new Float32Array(nPixels);
  const h2a = Hu >= 2 ? new Float32Array(nPixels) : undefined;
  const h2p = Hu >= 2 ? new Float32Array(nPixels) : undefined;
  const t = new Float64Array(Ku);
  let masked = 0;
  for (let i = 0; i < nPixels; i++) {
    const o = i * K;
    if (inv) {
      for (let p = 0; p < Ku; p++) {
        let s = 0;
        for (let q = 0; q < Ku; q++) s += inv[p * Ku + q]! * acc[o + q]!;
        t[p] = s;
      }
    } else {
      t[0] = acc[o]! / N;
      for (let p = 1; p < Ku; p++) t[p] = (2 * acc[o + p]!) / N;
    }
    const a0 = t[0]!;
    mean[i] = a0;
    if (!(a0 >= minCounts) || !(a0 > 0)) {
      amplitude[i] = Number.NaN;
      phaseOfMax[i] = Number.NaN;
      contrast[i] = Number.NaN;
      if (h2a && h2p) {
        h2a[i] = Number.NaN;
        h2p[i] = Number.NaN;
      }
      masked++;
      continue;
    }
    const a1 = Math.sqrt(t[1]! * t[1]! + t[2]! * t[2]!);
    amplitude[i] = a1;
    phaseOfMax[i] = Math.atan2(t[2]!, t[1]!);
    contrast[i] = a1 / a0;
    if (h2a && h2p) {
      h2a[i] = Math.sqrt(t[3]! * t[3]! + t[4]! * t[4]!);
      h2p[i] = Math.atan2(t[4]!, t[3]!);
    }
  }
  const maps: PhaseMaps = { mean, amplitude, phase_of_max: phaseOfMax, contrast };
  if (h2a && h2p) {
    maps.harmonic_2_amplitude = h2a;
    maps.harmonic_2_phase = h2p;
  }
  return { method, nPhases: N, periods: sampling.periods, harmonicsUsed: Hu, maps, masked };
}

/** Re-export for callers that fit single series the same way as the maps. */
export type { HarmonicFit };
