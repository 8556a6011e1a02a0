/**
 * Background scale from a region the analyst marks outside the lobes (SCIENCE.md §7.4): in that region the signal
 * frame holds only background, s_i ~ Poisson(k μ_i), and the background frame b_i ~ Poisson(μ_i). Conditioned on
 * n_i = s_i + b_i, s_i is binomial with p = k/(1 + k) whatever μ_i is, so the maximum-likelihood scale is the pooled
 * ratio k = Σs/Σb, with σ_k² = k²(1/Σs + 1/Σb) (delta method) [derived; the shot-ratio form of §7.4 is the special
 * case k = N_sig/N_bg]. Least squares (k = Σsb/Σb²) is offered for analog frames that are not counts.
 */
import { type BenchFrame, type BenchToolResult, requireFrame } from './types';

// TYPES //

export interface BackgroundScaleOptions {
  /** 'poisson' (default) or 'least_squares'. */
  method?: 'poisson' | 'least_squares';
  /** The shot ratio N_sig/N_bg, when known: the result reports how far the fitted scale lies from it. */
  shotRatio?: number;
}

export type BackgroundScaleResult = BenchToolResult<
  { scale: number },
  { scale: number },
  /** (s − k b)/√(s + k² b) inside the region (NaN outside), and its rms. */
  { image: Float64Array; rms: number },
  {
    method: 'poisson' | 'least_squares';
    pixels: number;
    signalCounts: number;
    backgroundCounts: number;
    /** Σ (s − k b)²/max(s + k²b, 1) / (pixels − 1). */
    chi2PerPixel: number;
    /** (k − shotRatio)/σ_k when a shot ratio was given, else null. */
    pullFromShotRatio: number | null;
  }
>;

// FUNCTIONS //

/**
 * Fits the scale k of a background frame to a signal frame inside a region.
 *
 * @param signal - signal frame
 * @param background - background frame of the same shape
 * @param regionMask - 1 inside the marked region (outside the lobes), 0 elsewhere; n_y × n_x
 * @param options - method and the shot ratio to compare with
 * @returns k with its standard error, the normalised residual image, diagnostics and warnings
 * @throws {RangeError} for mismatched shapes, an empty region or a region without background counts
 */
export function fitBackgroundScale(
  signal: BenchFrame,
  background: BenchFrame,
  regionMask: ArrayLike<number>,
  options: BackgroundScaleOptions = {},
): BackgroundScaleResult {
  requireFrame(signal);
  requireFrame(background);
  const n = signal.nX * signal.nY;
  if (background.nX !== signal.nX || background.nY !== signal.nY) {
    throw new RangeError(
      `the background frame is ${background.nX} × ${background.nY}, the signal ${signal.nX} × ${signal.nY}`,
    );
  }
  if (regionMask.length !== n) throw new RangeError(`the region mask must hold ${n} values, got ${regionMask.length}`);
  const method = options.method ?? 'poisson';
  if (method !== 'poisson' && method !== 'least_squares') throw new RangeError(`unknown method "${method}"`);
  const use = (i: number) =>
    regionMask[i]! !== 0 && (!signal.mask || signal.mask[i]) && (!background.mask || background.mask[i]);
  let ss = 0;
  let sb = 0;
  let sbb = 0;
  let ssb = 0;
  let pixels = 0;
  for (let i = 0; i < n; i++) {
    if (!use(i)) continue;
    const s = signal.counts[i]!;
    const b = background.counts[i]!;
    ss += s;
    sb += b;
    sbb += b * b;
    ssb += s * b;
    pixels++;
  }
  if (pixels < 10) throw new RangeError(`the marked region holds ${pixels} usable pixels (need at least 10)`);
  if (!(sb > 0)) throw new RangeError('the background frame has no counts inside the marked region');
  let k: number;
  let err: number;
  if (method === 'poisson') {
    k = ss / sb;
    err = ss > 0 ? k * Math.sqrt(1 / ss + 1 / sb) : Math.sqrt(1 / sb) / sb;
  } else {
    k = ssb / sbb;
    // Var(Σ s b)/ (Σb²)² with Var(s) ≈ k b (Poisson) plus the background's own noise k²·Σ s-weighted … (delta method)
    let v = 0;
    for (let i = 0; i < n; i++) {
      if (!use(i)) continue;
      const b = background.counts[i]!;
      const s = signal.counts[i]!;
      const ds = b / sbb;
      const db = (s * sbb - 2 * b * ssb) / (sbb * sbb);
      v += ds * ds * Math.max(k * b, 0) + db * db * Math.max(b, 0);
    }
    err = Math.sqrt(v);
  }
  const image = new Float64Array(n).fill(Number.NaN);
  let chi = 0;
  for (let i = 0; i < n; i++) {
    if (!use(i)) continue;
    const s = signal.counts[i]!;
    const b = background.counts[i]!;
    const v = Math.max(Math.abs(s) + k * k * Math.abs(b), 1);
    const r = (s - k * b) / Math.sqrt(v);
    image[i] = r;
    chi += r * r;
  }
  const chi2 = chi / Math.max(pixels - 1, 1);
  const warnings: string[] = [];
  const pull =
    options.shotRatio !== undefined && options.shotRatio > 0 && err > 0 ? (k - options.shotRatio) / err : null;
  if (pull !== null && Math.abs(pull) > 3) {
    warnings.push(
      `The fitted scale differs from the shot ratio ${options.shotRatio} by ${pull.toFixed(1)} standard errors: signal inside the marked region, or the background frame's shots are not what the file says.`,
    );
  }
  if (ss + sb < 100) warnings.push(`The region holds only ${ss + sb} counts; the scale is rough.`);
  return {
    value: { scale: k },
    stdErr: { scale: err },
    residual: { image, rms: Math.sqrt(chi / pixels) },
    diagnostics: {
      method,
      pixels,
      signalCounts: ss,
      backgroundCounts: sb,
      chi2PerPixel: chi2,
      pullFromShotRatio: pull,
    },
    warnings,
  };
}
