/**
 * Hot-pixel detection: a pixel is hot when its count is improbably high for the local level estimated by the
 * median of its neighbours (a median filter excluding the pixel itself, robust to the hot pixel and to a second one
 * nearby). The threshold is a Poisson tail: flag when P(N ≥ c | λ) < α/n_pixels with λ = max(median, mean of the
 * neighbours without their largest one, `floor`) over a 3 × 3 window (a wider window underestimates λ on the crest
 * of a narrow ring and raises false alarms), a Bonferroni bound so that an image without hot pixels
 * gives a false alarm with probability ≲ α [common practice for defect maps; the Poisson tail is exact for
 * counting frames]. An optional minimum excess (counts above λ) guards analog frames.
 */
import { type BenchFrame, type BenchToolResult, requireFrame } from './types';

// TYPES //

export interface HotPixelOptions {
  /** Neighbourhood half-size (default 1: a 3 × 3 window without its centre). */
  radius?: number;
  /** Family-wise false-alarm probability over the frame (default 1e-3). */
  alpha?: number;
  /** Minimum excess over the local level, counts (default 5). */
  minExcess?: number;
  /** Lowest local level used, counts (default 0.05). */
  floor?: number;
}

export type HotPixelResult = BenchToolResult<
  {
    /** Row-major indices iy·n_x + ix of the hot pixels, ascending. */
    indices: number[];
    /** [x, y] of each hot pixel (calibration `bad_pixels` order). */
    pixels: [number, number][];
    count: number;
  },
  /** Expected number of false alarms (α by construction); there is no standard error of a set. */
  { expectedFalseAlarms: number },
  /** Excess counts c − λ of each hot pixel (same order), and the local level λ. */
  { excess: number[]; level: number[]; rms: number },
  { alpha: number; pixelTailProbability: number; radius: number; pixelsTested: number }
>;

// FUNCTIONS //

/** log P(N ≥ c | λ) for integer c ≥ 1 by summing the upper tail from c (stable: terms fall off fast above λ). */
function logUpperTail(c: number, lambda: number): number {
  // log pmf(c) = c ln λ − λ − ln c!
  let lgam = 0;
  for (let j = 2; j <= c; j++) lgam += Math.log(j);
  const logPc = c * Math.log(lambda) - lambda - lgam;
  let sum = 1;
  let term = 1;
  for (let j = c + 1; j < c + 1000; j++) {
    term *= lambda / j;
    sum += term;
    if (term < 1e-17 * sum) break;
  }
  return logPc + Math.log(sum);
}

/**
 * Finds hot pixels.
 *
 * @param frame - raw counts frame (masked pixels are neither tested nor used as neighbours)
 * @param options - window, false-alarm probability, minimum excess, level floor
 * @returns hot-pixel indices and positions, their count, excess counts, diagnostics and warnings
 * @throws {RangeError} for a bad frame or options
 */
export function findHotPixels(frame: BenchFrame, options: HotPixelOptions = {}): HotPixelResult {
  requireFrame(frame);
  const radius = options.radius ?? 1;
  const alpha = options.alpha ?? 1e-3;
  const minExcess = options.minExcess ?? 5;
  const floor = options.floor ?? 0.05;
  if (!(Number.isInteger(radius) && radius >= 1 && radius <= 5)) throw new RangeError(`radius must be 1 … 5`);
  if (!(alpha > 0 && alpha < 1)) throw new RangeError(`alpha must lie in (0, 1), got ${alpha}`);
  if (!(minExcess >= 0) || !(floor > 0)) throw new RangeError('minExcess must be ≥ 0 and floor > 0');
  const { nX, nY, counts, mask } = frame;
  let tested = 0;
  for (let i = 0; i < nX * nY; i++) if (!mask || mask[i]) tested++;
  const pTail = alpha / Math.max(tested, 1);
  const logP = Math.log(pTail);
  const nb = new Float64Array((2 * radius + 1) ** 2);
  const indices: number[] = [];
  const pixels: [number, number][] = [];
  const excess: number[] = [];
  const level: number[] = [];
  for (let iy = 0; iy < nY; iy++) {
    for (let ix = 0; ix < nX; ix++) {
      const i = iy * nX + ix;
      if (mask && !mask[i]) continue;
      const c = counts[i]!;
      if (!(c >= 1)) continue;
      let m = 0;
      for (let dy = -radius; dy <= radius; dy++) {
        const y = iy + dy;
        if (y < 0 || y >= nY) continue;
        for (let dx = -radius; dx <= radius; dx++) {
          const x = ix + dx;
          if ((dx === 0 && dy === 0) || x < 0 || x >= nX) continue;
          const j = y * nX + x;
          if (mask && !mask[j]) continue;
          nb[m++] = counts[j]!;
        }
      }
      if (m < 3) continue;
      const arr = nb.subarray(0, m).sort();
      const med = m % 2 ? arr[(m - 1) >> 1]! : 0.5 * (arr[m / 2 - 1]! + arr[m / 2]!);
      // quick reject: nothing can be hot at or below the median plus the minimum excess
      if (c - med < minExcess) continue;
      const keep = m - 1;
      let s = 0;
      for (let k = 0; k < keep; k++) s += arr[k]!;
      const lambda = Math.max(med, s / keep, floor);
      if (c - lambda < minExcess) continue;
      if (logUpperTail(Math.ceil(c), lambda) < logP) {
        indices.push(i);
        pixels.push([ix, iy]);
        excess.push(c - lambda);
        level.push(lambda);
      }
    }
  }
  const warnings: string[] = [];
  if (indices.length > 0.01 * tested) {
    warnings.push(
      `${indices.length} pixels (more than 1 %) are flagged: the frame may have structure finer than the ${2 * radius + 1} × ${2 * radius + 1} window, or not be a counting frame (raise minExcess).`,
    );
  }
  let ss = 0;
  for (const e of excess) ss += e * e;
  return {
    value: { indices, pixels, count: indices.length },
    stdErr: { expectedFalseAlarms: alpha },
    residual: { excess, level, rms: indices.length ? Math.sqrt(ss / indices.length) : 0 },
    diagnostics: { alpha, pixelTailProbability: pTail, radius, pixelsTested: tested },
    warnings,
  };
}
