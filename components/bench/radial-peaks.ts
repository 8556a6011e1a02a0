// Ring suggestions for the bench's momentum-scale tool (SCIENCE.md §7.1): the count density per pixel in bins of
// the ellipticity-corrected radius about the centre (the same radius the ring fit of reduction/bench/ati-scale.ts
// uses), and the local maxima of that density that stand above their surroundings by more than a few standard
// errors of Poisson counting. The analyst ticks, unticks or adds rings from these; nothing here decides a scale.
// Pure TypeScript on typed arrays (no DOM): runs in the bench worker and in the unit tests.
import { calibrationMatrix } from '@/reduction/calibration';
import type { DetectorCalibration } from '@/reduction/formats';

export interface RadialDensity {
  /** Bin centres, px of the ellipticity-corrected frame. */
  rPx: Float64Array;
  /** Counts per pixel in each bin (NaN where no pixel falls). */
  density: Float64Array;
  /** Standard error of the density, √(counts)/pixels (Poisson; √1 for an empty bin). */
  error: Float64Array;
  binPx: number;
}

export interface RingSuggestion {
  /** Radius of the local maximum (bin centre refined by a parabola through the three bins), px. */
  radiusPx: number;
  /** Height above the higher of the two minima on either side, in standard errors. */
  significance: number;
}

/** Maps detector offsets to ellipticity-corrected pixels (mirror and stretch undone; rotation keeps radii). */
function offsetMatrix(cal: Pick<DetectorCalibration, 'mirror' | 'detector_ellipticity' | 'momentum_per_pixel_au'>) {
  const map = calibrationMatrix({
    center_px: [0, 0],
    momentum_per_pixel_au: cal.momentum_per_pixel_au,
    rotation_deg: 0,
    mirror: cal.mirror,
    detector_ellipticity: cal.detector_ellipticity,
    bad_pixels: [],
    background: { subtract: false, scale_by: 'none' },
  });
  return map.a.map((v) => v / cal.momentum_per_pixel_au);
}

/**
 * The azimuthally averaged count density about a centre.
 *
 * @param frame - counts n_y × n_x (row-major) and an optional mask (1 = use)
 * @param centrePx - centre (x, y), px
 * @param calibration - mirror, stretch and scale of the candidate calibration (null: plain pixel radius)
 * @param binPx - bin width, px (default 1)
 * @throws {RangeError} for a bad bin width or centre
 */
export function radialDensity(
  frame: { nX: number; nY: number; counts: ArrayLike<number>; mask?: ArrayLike<number> | null },
  centrePx: [number, number],
  calibration: Pick<DetectorCalibration, 'mirror' | 'detector_ellipticity' | 'momentum_per_pixel_au'> | null,
  binPx = 1,
): RadialDensity {
  if (!(binPx > 0)) throw new RangeError(`the bin width must be > 0 px, got ${binPx}`);
  const [cx, cy] = centrePx;
  if (!(Number.isFinite(cx) && Number.isFinite(cy))) throw new RangeError('the centre must be finite');
  const m = calibration ? offsetMatrix(calibration) : Float64Array.of(1, 0, 0, 1);
  const { nX, nY, counts, mask } = frame;
  // the largest corrected radius: the frame's corners
  let rMax = 0;
  for (const [x, y] of [
    [0, 0],
    [nX - 1, 0],
    [0, nY - 1],
    [nX - 1, nY - 1],
  ] as const) {
    const ux = x - cx;
    const uy = y - cy;
    rMax = Math.max(rMax, Math.hypot(m[0]! * ux + m[1]! * uy, m[2]! * ux + m[3]! * uy));
  }
  const nb = Math.ceil(rMax / binPx) + 1;
  const cnt = new Float64Array(nb);
  const pix = new Float64Array(nb);
  for (let iy = 0; iy < nY; iy++) {
    for (let ix = 0; ix < nX; ix++) {
      const i = iy * nX + ix;
      if (mask && !mask[i]) continue;
      const ux = ix - cx;
      const uy = iy - cy;
      const k = Math.floor(Math.hypot(m[0]! * ux + m[1]! * uy, m[2]! * ux + m[3]! * uy) / binPx);
      if (k >= nb) continue;
      cnt[k] = cnt[k]! + counts[i]!;
      pix[k] = pix[k]! + 1;
    }
  }
  const rPx = new Float64Array(nb);
  const density = new Float64Array(nb);
  const error = new Float64Array(nb);
  for (let k = 0; k < nb; k++) {
    rPx[k] = (k + 0.5) * binPx;
    density[k] = pix[k]! > 0 ? cnt[k]! / pix[k]! : Number.NaN;
    error[k] = pix[k]! > 0 ? Math.sqrt(Math.max(cnt[k]!, 1)) / pix[k]! : Number.NaN;
  }
  return { rPx, density, error, binPx };
}

/**
 * Local maxima of a radial density that stand out of the counting noise: a bin higher than its neighbours within
 * ± `neighbourBins`, whose height above the higher of the minima found on each side (out to the next higher bin,
 * or `reachBins`) exceeds `minSignificance` standard errors of the difference.
 *
 * @param d - the density (from {@link radialDensity})
 * @param options - radial range (px), neighbourhood, reach, threshold (default 5 σ), most peaks returned
 * @returns suggestions sorted by radius
 */
export function suggestRingPeaks(
  d: RadialDensity,
  options: {
    rMinPx?: number;
    rMaxPx?: number;
    neighbourBins?: number;
    reachBins?: number;
    minSignificance?: number;
    maxPeaks?: number;
  } = {},
): RingSuggestion[] {
  const { rPx, density, error, binPx } = d;
  const n = density.length;
  const rMin = options.rMinPx ?? 3 * binPx;
  const rMax = options.rMaxPx ?? Number.POSITIVE_INFINITY;
  const nbh = options.neighbourBins ?? 2;
  const reach = options.reachBins ?? 40;
  const zMin = options.minSignificance ?? 5;
  const maxPeaks = options.maxPeaks ?? 12;
  const ok = (k: number) => k >= 0 && k < n && Number.isFinite(density[k]!);
  const found: RingSuggestion[] = [];
  for (let k = 0; k < n; k++) {
    if (!ok(k) || rPx[k]! < rMin || rPx[k]! > rMax) continue;
    const v = density[k]!;
    let isMax = true;
    for (let j = k - nbh; j <= k + nbh && isMax; j++) {
      if (j === k || !ok(j)) continue;
      // ties go to the first bin of a plateau
      if (density[j]! > v || (j < k && density[j]! === v)) isMax = false;
    }
    if (!isMax) continue;
    // the lowest bin on each side before the density rises above this peak again
    const low = (dir: 1 | -1) => {
      let best = -1;
      for (let j = k + dir, s = 0; ok(j) && s < reach; j += dir, s++) {
        if (density[j]! > v) break;
        if (best < 0 || density[j]! < density[best]!) best = j;
      }
      return best;
    };
    const lo = low(-1);
    const hi = low(1);
    if (lo < 0 || hi < 0) continue;
    const base = density[lo]! > density[hi]! ? lo : hi;
    const z = (v - density[base]!) / Math.hypot(error[k]!, error[base]!);
    if (!(z > zMin)) continue;
    // parabola through the three bins about the maximum
    let r = rPx[k]!;
    if (ok(k - 1) && ok(k + 1)) {
      const a = density[k - 1]!;
      const c = density[k + 1]!;
      const den = a - 2 * v + c;
      if (den < 0) r += (0.5 * binPx * (a - c)) / den;
    }
    found.push({ radiusPx: r, significance: z });
  }
  found.sort((a, b) => b.significance - a.significance);
  return found.slice(0, maxPeaks).sort((a, b) => a.radiusPx - b.radiusPx);
}

/**
 * Half-width (px) of the window the ring fit uses about each chosen radius: less than half the closest spacing of
 * neighbouring rings (so that a window never holds two rings), at least 3 bins and at most 12 px.
 *
 * @param radiiPx - chosen ring radii, px
 * @param binPx - bin width of the ring fit, px
 */
export function ringWindowPx(radiiPx: number[], binPx: number): number {
  const s = [...radiiPx].sort((a, b) => a - b);
  let gap = Number.POSITIVE_INFINITY;
  for (let i = 1; i < s.length; i++) gap = Math.min(gap, s[i]! - s[i - 1]!);
  const w = Number.isFinite(gap) ? 0.45 * gap : 12;
  return Math.min(12, Math.max(3.01 * binPx, w));
}
