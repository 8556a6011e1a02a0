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
 *
 * Poisson weights for low-count pixels (SCIENCE.md §6.2 (b)), still from the streamed sums only: when the accumulator
 * is created with `poissonHarmonics` = M, it also keeps the harmonics up to M + 1, and `least_squares` pixels whose
 * mean is at most `POISSON_WEIGHTED_BELOW_COUNTS` get the fit of Y ≈ a + b cos φ + c sin φ with weights 1/μ(φ_j),
 * μ the model of the previous pass (iteratively reweighted, whose fixed point is the Poisson maximum likelihood).
 * The weights never need the frames: with μ = a(1 + κ cos(φ − φ₀)),
 *   1/μ(φ) = [1 + 2 Σ_{m≥1} (−ρ)^m cos m(φ − φ₀)] / (a√(1 − κ²)),  ρ = (1 − √(1 − κ²))/κ
 * (the generating function of the Chebyshev series of 1/(1 + κ cos ψ), a handbook series), so every weighted sum
 * Σ_j Y_j w(φ_j) e^{ikφ_j} is Σ_m ω_m Y_{m+k} over the streamed Y_n = Σ_j Y_j e^{inφ_j}, and the weighted normal
 * matrix comes the same way from the phase sums P_n = Σ_j e^{inφ_j}. The series is cut at |m| ≤ M (relative error
 * ≈ ρ^{M+1}); pixels whose model contrast κ reaches `POISSON_MAX_CONTRAST` (the model nearly touches zero) keep the
 * unweighted fit.
 */

import { solveSmall } from './lm';
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
  /** Pixels whose A₀, A₁, φ₀ come from the Poisson-weighted fit (0 unless `poissonHarmonics` was set). */
  poissonWeighted: number;
}

/** Mean counts per phase at or below which a least-squares pixel gets Poisson weights. */
export const POISSON_WEIGHTED_BELOW_COUNTS = 100;

/** Model contrast from which the weight series is not used (ρ^{M+1} would converge too slowly). */
export const POISSON_MAX_CONTRAST = 0.95;

/** Reweighting passes of the Poisson-weighted fit. */
const POISSON_PASSES = 6;

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
 * Kernel for H = 1 over a block of four frames: acc[3i + …] += Σ_j y_j·(1, cos φ_j, sin φ_j), j = 0 … 3, with
 * cs[j] = cos φ_j, sn[j] = sin φ_j. One pass over the sums per four frames (the sums, not the frames, dominate the
 * memory traffic). Allocates nothing.
 *
 * @param N - pixels
 * @param f0 - frame 0 (length ≥ N)
 * @param f1 - frame 1
 * @param f2 - frame 2
 * @param f3 - frame 3
 * @param cs - cos φ_j, j = 0 … 3
 * @param sn - sin φ_j, j = 0 … 3
 * @param acc - sums, length 3N
 * @returns acc
 */
export function accumulateBlock4H1Kernel(
  N: number,
  f0: Float64Array,
  f1: Float64Array,
  f2: Float64Array,
  f3: Float64Array,
  cs: Float64Array,
  sn: Float64Array,
  acc: Float64Array,
): Float64Array {
  const c0 = cs[0]!;
  const c1 = cs[1]!;
  const c2 = cs[2]!;
  const c3 = cs[3]!;
  const s0 = sn[0]!;
  const s1 = sn[1]!;
  const s2 = sn[2]!;
  const s3 = sn[3]!;
  for (let i = 0, o = 0; i < N; i++, o += 3) {
    const y0 = f0[i]!;
    const y1 = f1[i]!;
    const y2 = f2[i]!;
    const y3 = f3[i]!;
    acc[o]! += y0 + y1 + (y2 + y3);
    acc[o + 1]! += y0 * c0 + y1 * c1 + (y2 * c2 + y3 * c3);
    acc[o + 2]! += y0 * s0 + y1 * s1 + (y2 * s2 + y3 * s3);
  }
  return acc;
}

/**
 * Kernel for H = 2 over a block of four frames (as {@link accumulateBlock4H1Kernel}); cs[2j + k − 1] = cos kφ_j,
 * sn[2j + k − 1] = sin kφ_j, k = 1, 2. Allocates nothing.
 *
 * @param N - pixels
 * @param f0 - frame 0 (length ≥ N)
 * @param f1 - frame 1
 * @param f2 - frame 2
 * @param f3 - frame 3
 * @param cs - cos kφ_j, [j][k]
 * @param sn - sin kφ_j, [j][k]
 * @param acc - sums, length 5N
 * @returns acc
 */
export function accumulateBlock4H2Kernel(
  N: number,
  f0: Float64Array,
  f1: Float64Array,
  f2: Float64Array,
  f3: Float64Array,
  cs: Float64Array,
  sn: Float64Array,
  acc: Float64Array,
): Float64Array {
  const a0 = cs[0]!;
  const a1 = cs[2]!;
  const a2 = cs[4]!;
  const a3 = cs[6]!;
  const b0 = sn[0]!;
  const b1 = sn[2]!;
  const b2 = sn[4]!;
  const b3 = sn[6]!;
  const p0 = cs[1]!;
  const p1 = cs[3]!;
  const p2 = cs[5]!;
  const p3 = cs[7]!;
  const q0 = sn[1]!;
  const q1 = sn[3]!;
  const q2 = sn[5]!;
  const q3 = sn[7]!;
  for (let i = 0, o = 0; i < N; i++, o += 5) {
    const y0 = f0[i]!;
    const y1 = f1[i]!;
    const y2 = f2[i]!;
    const y3 = f3[i]!;
    acc[o]! += y0 + y1 + (y2 + y3);
    acc[o + 1]! += y0 * a0 + y1 * a1 + (y2 * a2 + y3 * a3);
    acc[o + 2]! += y0 * b0 + y1 * b1 + (y2 * b2 + y3 * b3);
    acc[o + 3]! += y0 * p0 + y1 * p1 + (y2 * p2 + y3 * p3);
    acc[o + 4]! += y0 * q0 + y1 * q1 + (y2 * q2 + y3 * q3);
  }
  return acc;
}

/** Frames per block for H = 1, 2 (higher H: one frame at a time). */
const BLOCK = 4;

/**
 * Creates a streaming accumulator. For H ≤ 2 frames are summed in blocks of four: up to three frames are held as
 * Float64Array copies until the fourth arrives (memory bounded by 4 frames + the sums, whatever the number of steps),
 * and `finish` adds any held frames first. Results equal frame-by-frame summation up to floating-point reordering.
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
export function createPhaseAccumulator(
  nPixels: number,
  harmonics: number,
  options: { poissonHarmonics?: number } = {},
): PhaseAccumulator {
  requireInteger('nPixels', nPixels, 1, 2 ** 31);
  const Hmaps = requireInteger('harmonics', harmonics, 1, 8);
  const M =
    options.poissonHarmonics === undefined ? 0 : requireInteger('poissonHarmonics', options.poissonHarmonics, 1, 30);
  // the sums hold the harmonics of the maps, and up to M + 1 for the Poisson weights
  const H = Math.max(Hmaps, M > 0 ? M + 1 : 0);
  const K = 1 + 2 * H;
  const acc = new Float64Array(nPixels * K);
  const phases: number[] = [];
  const blocked = H <= 2;
  const B = blocked ? BLOCK : 1;
  // cos kφ_j, sin kφ_j of the frames of the current block, [j][k]
  const cs = new Float64Array(B * H);
  const sn = new Float64Array(B * H);
  // held copies of the block's frames (allocated on first use); held[B − 1] only for a last frame that is not a
  // Float64Array
  const held: Float64Array[] = [];
  let nHeld = 0;
  const heldFrame = (j: number): Float64Array => {
    while (held.length <= j) held.push(new Float64Array(nPixels));
    return held[j]!;
  };
  const one = new Float64Array(H);
  const two = new Float64Array(H);
  /** Adds the held frames one at a time (end of stream, incomplete block). */
  const flush = () => {
    for (let j = 0; j < nHeld; j++) {
      for (let k = 0; k < H; k++) {
        one[k] = cs[j * H + k]!;
        two[k] = sn[j * H + k]!;
      }
      accumulateHarmonicsKernel(nPixels, held[j]!, 1, 0, H, one, two, acc);
    }
    nHeld = 0;
  };
  return {
    nPixels,
    harmonics: Hmaps,
    phases,
    addFrame(frame, phaseRad) {
      requireLength('frame', frame, nPixels);
      if (!Number.isFinite(phaseRad)) throw new RangeError(`phaseRad must be finite, got ${phaseRad}`);
      const j = nHeld;
      for (let k = 1; k <= H; k++) {
        cs[j * H + k - 1] = Math.cos(k * phaseRad);
        sn[j * H + k - 1] = Math.sin(k * phaseRad);
      }
      phases.push(phaseRad);
      if (!blocked) {
        accumulateHarmonicsKernel(nPixels, frame, 1, 0, H, cs, sn, acc);
        return;
      }
      if (j < B - 1) {
        heldFrame(j).set(frame);
        nHeld++;
        return;
      }
      let last: Float64Array;
      if (frame instanceof Float64Array) last = frame;
      else {
        last = heldFrame(B - 1);
        last.set(frame);
      }
      const kernel = H === 1 ? accumulateBlock4H1Kernel : accumulateBlock4H2Kernel;
      kernel(nPixels, held[0]!, held[1]!, held[2]!, last, cs, sn, acc);
      nHeld = 0;
    },
    finish({ minCounts, method }) {
      flush();
      return finishPhaseSums(acc, nPixels, H, phases, minCounts, method, Hmaps, M);
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
 * @param mapHarmonics - harmonics of the maps (default H)
 * @param poissonTerms - M of the Poisson weight series (0: no weights; needs H ≥ M + 1)
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
  mapHarmonics: number = H,
  poissonTerms = 0,
): PhaseMapResult {
  const N = phases.length;
  const sampling = wholePeriodSampling(phases);
  const method = forced ?? (sampling.equal ? 'fourier' : 'least_squares');
  if (poissonTerms > 0 && H < poissonTerms + 1) {
    throw new RangeError(
      `Poisson weights with ${poissonTerms} terms need ${poissonTerms + 1} summed harmonics, got ${H}`,
    );
  }
  const Hu = Math.min(mapHarmonics, resolvableHarmonics(phases, mapHarmonics));
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
  // only the coefficients the maps use: a, c₁, s₁ and (H ≥ 2) c₂, s₂
  const nT = Math.min(Ku, 5);
  let masked = 0;
  if (!inv && !h2a) {
    // common case (whole-period sampling, first harmonic only): same arithmetic as below, fewer branches
    for (let i = 0, o = 0; i < nPixels; i++, o += K) {
      const a0 = acc[o]! / N;
      const c1 = (2 * acc[o + 1]!) / N;
      const s1 = (2 * acc[o + 2]!) / N;
      mean[i] = a0;
      if (!(a0 >= minCounts) || !(a0 > 0)) {
        amplitude[i] = Number.NaN;
        phaseOfMax[i] = Number.NaN;
        contrast[i] = Number.NaN;
        masked++;
        continue;
      }
      const a1 = Math.sqrt(c1 * c1 + s1 * s1);
      amplitude[i] = a1;
      phaseOfMax[i] = Math.atan2(s1, c1);
      contrast[i] = a1 / a0;
    }
  } else {
    for (let i = 0, o = 0; i < nPixels; i++, o += K) {
      let a0: number;
      let c1: number;
      let s1: number;
      let c2 = 0;
      let s2 = 0;
      if (inv) {
        a0 = normalRowDot(inv, Ku, 0, acc, o);
        c1 = normalRowDot(inv, Ku, 1, acc, o);
        s1 = normalRowDot(inv, Ku, 2, acc, o);
        if (nT > 3) {
          c2 = normalRowDot(inv, Ku, 3, acc, o);
          s2 = normalRowDot(inv, Ku, 4, acc, o);
        }
      } else {
        a0 = acc[o]! / N;
        c1 = (2 * acc[o + 1]!) / N;
        s1 = (2 * acc[o + 2]!) / N;
        if (nT > 3) {
          c2 = (2 * acc[o + 3]!) / N;
          s2 = (2 * acc[o + 4]!) / N;
        }
      }
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
      const a1 = Math.sqrt(c1 * c1 + s1 * s1);
      amplitude[i] = a1;
      phaseOfMax[i] = Math.atan2(s1, c1);
      contrast[i] = a1 / a0;
      if (h2a && h2p) {
        h2a[i] = Math.sqrt(c2 * c2 + s2 * s2);
        h2p[i] = Math.atan2(s2, c2);
      }
    }
  }
  let poissonWeighted = 0;
  if (method === 'least_squares' && poissonTerms > 0) {
    const w = new PoissonWeights(phases, poissonTerms);
    const fit = new Float64Array(3);
    for (let i = 0, o = 0; i < nPixels; i++, o += K) {
      const a0 = mean[i]!;
      if (!(a0 >= minCounts) || !(a0 > 0) || a0 > POISSON_WEIGHTED_BELOW_COUNTS) continue;
      const a1 = amplitude[i]!;
      const p0 = phaseOfMax[i]!;
      if (!w.fit(acc, o, a0, a1 * Math.cos(p0), a1 * Math.sin(p0), fit)) continue;
      const b1 = Math.hypot(fit[1]!, fit[2]!);
      mean[i] = fit[0]!;
      amplitude[i] = b1;
      phaseOfMax[i] = Math.atan2(fit[2]!, fit[1]!);
      contrast[i] = b1 / fit[0]!;
      poissonWeighted++;
    }
  }
  const maps: PhaseMaps = { mean, amplitude, phase_of_max: phaseOfMax, contrast };
  if (h2a && h2p) {
    maps.harmonic_2_amplitude = h2a;
    maps.harmonic_2_phase = h2p;
  }
  return { method, nPhases: N, periods: sampling.periods, harmonicsUsed: Hu, maps, masked, poissonWeighted };
}

/**
 * Poisson-weighted fit of a + b cos φ + c sin φ from a pixel's streamed harmonic sums (see the module comment).
 * Holds the phase sums P_n = Σ_j e^{inφ_j}, n = 0 … M + 2, shared by every pixel; allocates nothing per pixel.
 */
class PoissonWeights {
  private readonly pRe: Float64Array;
  private readonly pIm: Float64Array;
  private readonly wRe: Float64Array;
  private readonly wIm: Float64Array;
  private readonly g = new Float64Array(9);
  private readonly inv = new Float64Array(9);
  private readonly r = new Float64Array(3);
  private readonly t = new Float64Array(2);

  constructor(
    phases: readonly number[],
    private readonly M: number,
  ) {
    this.pRe = new Float64Array(M + 3);
    this.pIm = new Float64Array(M + 3);
    for (const phi of phases) {
      for (let n = 0; n <= M + 2; n++) {
        this.pRe[n] = this.pRe[n]! + Math.cos(n * phi);
        this.pIm[n] = this.pIm[n]! + Math.sin(n * phi);
      }
    }
    this.wRe = new Float64Array(2 * M + 1);
    this.wIm = new Float64Array(2 * M + 1);
  }

  /**
   * Σ_{m=−M}^{M} ω_m Z_{m+k} for Z = the pixel's sums (acc[o + 2n − 1] = Re Z_n, acc[o + 2n] = Im Z_n, Z₀ = acc[o],
   * Z_{−n} = conj Z_n) or, with `acc` null, the phase sums P. Returns the real part into out[0], imaginary into out[1].
   */
  private sum(acc: Float64Array | null, o: number, k: number, out: Float64Array): void {
    const M = this.M;
    let re = 0;
    let im = 0;
    for (let m = -M; m <= M; m++) {
      const n = m + k;
      const an = Math.abs(n);
      let zr: number;
      let zi: number;
      if (acc === null) {
        zr = this.pRe[an]!;
        zi = this.pIm[an]!;
      } else if (an === 0) {
        zr = acc[o]!;
        zi = 0;
      } else {
        zr = acc[o + 2 * an - 1]!;
        zi = acc[o + 2 * an]!;
      }
      if (n < 0) zi = -zi;
      const wr = this.wRe[m + M]!;
      const wi = this.wIm[m + M]!;
      re += wr * zr - wi * zi;
      im += wr * zi + wi * zr;
    }
    out[0] = re;
    out[1] = im;
  }

  /**
   * Iteratively reweighted fit from the unweighted start (a, b, c).
   *
   * @returns false when the model contrast is too high or the system is singular (the start is then kept)
   */
  fit(acc: Float64Array, o: number, a: number, b: number, c: number, out: Float64Array): boolean {
    const M = this.M;
    const t = this.t;
    let ta = a;
    let tb = b;
    let tc = c;
    for (let pass = 0; pass < POISSON_PASSES; pass++) {
      const kappa = Math.hypot(tb, tc) / ta;
      if (!(ta > 0) || !(kappa < POISSON_MAX_CONTRAST)) return false;
      // ω_m = ω₀ (−ρ)^|m| e^{−imφ₀} (m > 0), ω_{−m} = conj ω_m, ω₀ = 1/(a√(1 − κ²))
      const root = Math.sqrt(1 - kappa * kappa);
      const rho = kappa > 0 ? (1 - root) / kappa : 0;
      const phi0 = Math.atan2(tc, tb);
      const w0 = 1 / (ta * root);
      this.wRe[M] = w0;
      this.wIm[M] = 0;
      let mag = w0;
      for (let m = 1; m <= M; m++) {
        mag *= -rho;
        const cr = mag * Math.cos(m * phi0);
        const ci = -mag * Math.sin(m * phi0);
        this.wRe[M + m] = cr;
        this.wIm[M + m] = ci;
        this.wRe[M - m] = cr;
        this.wIm[M - m] = -ci;
      }
      // weighted normal matrix from the phase sums, right-hand side from the pixel's sums
      this.sum(null, 0, 0, t);
      const g00 = t[0]!;
      this.sum(null, 0, 1, t);
      const g0c = t[0]!;
      const g0s = t[1]!;
      this.sum(null, 0, 2, t);
      const g = this.g;
      g[0] = g00;
      g[1] = g[3] = g0c;
      g[2] = g[6] = g0s;
      g[4] = (g00 + t[0]!) / 2;
      g[8] = (g00 - t[0]!) / 2;
      g[5] = g[7] = t[1]! / 2;
      this.sum(acc, o, 0, t);
      this.r[0] = t[0]!;
      this.sum(acc, o, 1, t);
      this.r[1] = t[0]!;
      this.r[2] = t[1]!;
      this.inv.set(g);
      if (!solveSmall(3, this.inv, this.r)) return false;
      [ta, tb, tc] = [this.r[0]!, this.r[1]!, this.r[2]!];
    }
    if (!(ta > 0) || !(Math.hypot(tb, tc) / ta < 1)) return false;
    out[0] = ta;
    out[1] = tb;
    out[2] = tc;
    return true;
  }
}

/** Row p of the inverse normal matrix (Ku × Ku, row-major) times the sums acc[o … o + Ku − 1]. */
function normalRowDot(inv: Float64Array, Ku: number, p: number, acc: Float64Array, o: number): number {
  let s = 0;
  for (let q = 0, r = p * Ku; q < Ku; q++, r++) s += inv[r]! * acc[o + q]!;
  return s;
}

/** Re-export for callers that fit single series the same way as the maps. */
export type { HarmonicFit };
