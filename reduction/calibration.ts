/**
 * Detector → lab momentum map of FORMATS §2 and the per-pixel corrections (bad pixels, background, flat field).
 *
 * Order (FORMATS §2): u = (x − x0, y − y0); if `mirror`, u_x → −u_x; undo the detector ellipticity (rotate by
 * −axis_deg, divide the first component by `ratio`, rotate back); rotate by `rotation_deg` counter-clockwise;
 * multiply by `momentum_per_pixel_au`. Every step is linear, so the map is p = A·u with one 2×2 matrix A
 * (`calibrationMatrix`), which the resampler applies to each sub-pixel.
 *
 * Units: pixels (x = column, y = row, right-handed, y up) in, a.u. of momentum out; angles in degrees.
 * A mirror has det A < 0: it flips helicity and the sign of every offset angle (SCIENCE.md C2).
 */
import type { DetectorCalibration } from './formats';
import { requireFiniteNumber, requireLength } from './validate';

// TYPES //

/** The affine detector → lab map p = A·(x − x0, y − y0), A row-major [a00, a01, a10, a11] in a.u. px⁻¹. */
export interface CalibrationMap {
  x0: number;
  y0: number;
  /** Row-major 2×2: px = a[0]·ux + a[1]·uy, py = a[2]·ux + a[3]·uy. */
  a: Float64Array;
  /** Inverse of `a` (px⁻¹ → px per a.u.). */
  inv: Float64Array;
}

// FUNCTIONS //

function mul2(m: Float64Array, n: Float64Array): Float64Array {
  return Float64Array.of(
    m[0]! * n[0]! + m[1]! * n[2]!,
    m[0]! * n[1]! + m[1]! * n[3]!,
    m[2]! * n[0]! + m[3]! * n[2]!,
    m[2]! * n[1]! + m[3]! * n[3]!,
  );
}

function rot2(deg: number): Float64Array {
  const r = (deg * Math.PI) / 180;
  const c = Math.cos(r);
  const s = Math.sin(r);
  return Float64Array.of(c, -s, s, c);
}

/**
 * Builds the 2×2 map of a calibration (FORMATS §2 order) and its inverse.
 *
 * @param cal - detector calibration (parsed)
 * @returns centre, matrix and inverse
 * @throws {RangeError} for a non-positive scale or ellipticity ratio
 * @example
 * const m = calibrationMatrix({ ...cal, rotation_deg: 90, momentum_per_pixel_au: 0.01 });
 * // m.a ≈ [0, −0.01, 0.01, 0]
 */
export function calibrationMatrix(cal: DetectorCalibration): CalibrationMap {
  const x0 = requireFiniteNumber('calibration.center_px[0]', cal.center_px[0]);
  const y0 = requireFiniteNumber('calibration.center_px[1]', cal.center_px[1]);
  const scale = requireFiniteNumber('calibration.momentum_per_pixel_au', cal.momentum_per_pixel_au);
  if (scale <= 0) throw new RangeError(`calibration.momentum_per_pixel_au must be > 0, got ${scale}`);
  const ratio = requireFiniteNumber('calibration.detector_ellipticity.ratio', cal.detector_ellipticity.ratio);
  if (ratio <= 0) throw new RangeError(`calibration.detector_ellipticity.ratio must be > 0, got ${ratio}`);
  const axis = requireFiniteNumber('calibration.detector_ellipticity.axis_deg', cal.detector_ellipticity.axis_deg);
  const rotation = requireFiniteNumber('calibration.rotation_deg', cal.rotation_deg);

  const mirror = Float64Array.of(cal.mirror ? -1 : 1, 0, 0, 1);
  const squeeze = mul2(mul2(rot2(axis), Float64Array.of(1 / ratio, 0, 0, 1)), rot2(-axis));
  let a = mul2(squeeze, mirror);
  a = mul2(rot2(rotation), a);
  for (let i = 0; i < 4; i++) a[i] = a[i]! * scale;
  const det = a[0]! * a[3]! - a[1]! * a[2]!;
  const inv = Float64Array.of(a[3]! / det, -a[1]! / det, -a[2]! / det, a[0]! / det);
  return { x0, y0, a, inv };
}

/**
 * Maps one detector position (pixel coordinates) to lab momentum.
 *
 * @param map - from {@link calibrationMatrix}
 * @param x - column coordinate, px
 * @param y - row coordinate, px
 * @param out - [px, py] output, a.u. (default new Float64Array(2))
 * @returns `out`
 */
export function pixelToMomentumAu(
  map: CalibrationMap,
  x: number,
  y: number,
  out: Float64Array | number[] = new Float64Array(2),
): Float64Array | number[] {
  const ux = x - map.x0;
  const uy = y - map.y0;
  out[0] = map.a[0]! * ux + map.a[1]! * uy;
  out[1] = map.a[2]! * ux + map.a[3]! * uy;
  return out;
}

/**
 * Inverse map: lab momentum → detector position (pixel coordinates).
 *
 * @param map - from {@link calibrationMatrix}
 * @param px - lab momentum x, a.u.
 * @param py - lab momentum y, a.u.
 * @param out - [x, y] output, px
 * @returns `out`
 */
export function momentumToPixel(
  map: CalibrationMap,
  px: number,
  py: number,
  out: Float64Array | number[] = new Float64Array(2),
): Float64Array | number[] {
  out[0] = map.x0 + map.inv[0]! * px + map.inv[1]! * py;
  out[1] = map.y0 + map.inv[2]! * px + map.inv[3]! * py;
  return out;
}

/**
 * Validity mask of the raw pixels: 1 = used, 0 = excluded (bad pixel, or flat-field gain below `min_gain`).
 * Bad pixels outside the image are ignored and counted in `outside`.
 *
 * @param cal - calibration
 * @param nX - columns
 * @param nY - rows
 * @returns mask [iy][ix] row-major, the number of bad-pixel entries outside the image, the number masked by gain
 * @throws {RangeError} when the flat-field map does not have n_y rows of n_x values
 */
export function buildPixelMask(
  cal: DetectorCalibration,
  nX: number,
  nY: number,
): { mask: Uint8Array; outside: number; lowGain: number } {
  const mask = new Uint8Array(nX * nY).fill(1);
  let outside = 0;
  for (const [x, y] of cal.bad_pixels) {
    if (x < nX && y < nY) mask[y * nX + x] = 0;
    else outside++;
  }
  let lowGain = 0;
  if (cal.flat_field) {
    const g = cal.flat_field.gain;
    if (g.length !== nY) {
      throw new RangeError(`calibration.flat_field.gain must have ${nY} rows (n_y), got ${g.length}`);
    }
    for (let iy = 0; iy < nY; iy++) {
      const row = g[iy]!;
      if (row.length !== nX) {
        throw new RangeError(`calibration.flat_field.gain[${iy}] must have ${nX} values (n_x), got ${row.length}`);
      }
      for (let ix = 0; ix < nX; ix++) {
        if (!(row[ix]! >= cal.flat_field.min_gain) || row[ix]! <= 0) {
          if (mask[iy * nX + ix]) lowGain++;
          mask[iy * nX + ix] = 0;
        }
      }
    }
  }
  return { mask, outside, lowGain };
}

/**
 * Inverse gain 1/G per pixel (row-major), or null without a flat field. Masked pixels get 0.
 *
 * @param cal - calibration
 * @param nX - columns
 * @param nY - rows
 */
export function buildInverseGain(cal: DetectorCalibration, nX: number, nY: number): Float64Array | null {
  if (!cal.flat_field) return null;
  const g = cal.flat_field.gain;
  const out = new Float64Array(nX * nY);
  for (let iy = 0; iy < nY; iy++) {
    const row = g[iy];
    if (!row || row.length !== nX) {
      throw new RangeError(`calibration.flat_field.gain[${iy}] must have ${nX} values (n_x)`);
    }
    for (let ix = 0; ix < nX; ix++) {
      const v = row[ix]!;
      out[iy * nX + ix] = v >= cal.flat_field.min_gain && v > 0 ? 1 / v : 0;
    }
  }
  return out;
}

/**
 * Background scale factor k = shots / background shots (FORMATS §2, `scale_by = "shots"`), or the calibration's
 * fitted `background.factor` when it has one; 0 when the calibration says not to subtract (`subtract = false` or
 * `scale_by = "none"`).
 *
 * @param cal - calibration
 * @param shots - laser shots behind the signal frame (> 0)
 * @param backgroundShots - shots behind the background frame (> 0)
 * @returns k (dimensionless)
 * @throws {RangeError} for non-positive shot numbers
 * @example
 * backgroundScale(cal, 1e5, 5e4); // returns 2
 */
export function backgroundScale(cal: DetectorCalibration, shots: number, backgroundShots: number): number {
  if (!cal.background.subtract || cal.background.scale_by === 'none') return 0;
  // a scale fitted on the bench (optional `factor`) replaces the shot ratio
  if (cal.background.factor !== undefined) return cal.background.factor;
  if (!(shots > 0) || !Number.isFinite(shots)) throw new RangeError(`shots must be > 0, got ${shots}`);
  if (!(backgroundShots > 0) || !Number.isFinite(backgroundShots)) {
    throw new RangeError(`background shots must be > 0, got ${backgroundShots}`);
  }
  return shots / backgroundShots;
}

/**
 * Kernel: corrected counts out[i] = (c[i] − k·b[i])·g[i] over N elements with strides and offsets (negative values
 * kept, SCIENCE.md §7.4); `b` and `g` share the layout (stride, offset) of `c`. `b` or `g` may be null (no background / no flat field). Allocates nothing, validates
 * nothing; N ≤ 0 does nothing.
 *
 * @param N - number of elements
 * @param c - counts
 * @param strideC - stride of c
 * @param offsetC - offset of c
 * @param b - background (or null)
 * @param k - background scale
 * @param g - inverse gain 1/G (or null)
 * @param out - output
 * @param strideOut - stride of out
 * @param offsetOut - offset of out
 * @returns out
 */
export function correctCountsKernel(
  N: number,
  c: ArrayLike<number>,
  strideC: number,
  offsetC: number,
  b: ArrayLike<number> | null,
  k: number,
  g: ArrayLike<number> | null,
  out: Float64Array,
  strideOut: number,
  offsetOut: number,
): Float64Array {
  let ic = offsetC;
  let io = offsetOut;
  for (let i = 0; i < N; i++) {
    // background and gain share the index of the counts (same layout)
    let v = c[ic]!;
    if (b !== null) v -= k * b[ic]!;
    if (g !== null) v *= g[ic]!;
    out[io] = v;
    ic += strideC;
    io += strideOut;
  }
  return out;
}

/**
 * Shot-normalised background-subtracted signal and its Poisson uncertainty (SCIENCE.md §7.4):
 * S = C_sig/N_sig − C_bg/N_bg, σ_S² = C_sig/N_sig² + C_bg/N_bg².
 *
 * @param cSig - signal counts
 * @param nSig - signal shots (> 0)
 * @param cBg - background counts
 * @param nBg - background shots (> 0)
 * @returns `{ signal, sigma }` in counts per shot
 * @example
 * backgroundSubtractedRate(1200, 1e5, 300, 5e4); // returns { signal: 0.006, sigma: ≈4.899e-4 }
 */
export function backgroundSubtractedRate(
  cSig: number,
  nSig: number,
  cBg: number,
  nBg: number,
): { signal: number; sigma: number } {
  for (const [n, v] of [
    ['nSig', nSig],
    ['nBg', nBg],
  ] as const) {
    if (requireFiniteNumber(n, v) <= 0) throw new RangeError(`${n} must be > 0, got ${v}`);
  }
  requireFiniteNumber('cSig', cSig);
  requireFiniteNumber('cBg', cBg);
  return {
    signal: cSig / nSig - cBg / nBg,
    sigma: Math.sqrt(cSig / (nSig * nSig) + Math.abs(cBg) / (nBg * nBg)),
  };
}

/**
 * Public layer of {@link correctCountsKernel} for whole frames.
 *
 * @param counts - raw counts, n_y × n_x row-major
 * @param background - background frame of the same shape, or null
 * @param k - background scale from {@link backgroundScale}
 * @param inverseGain - from {@link buildInverseGain}, or null
 * @param out - output of the same length (default new Float64Array)
 * @returns corrected counts
 * @throws {RangeError} when lengths differ
 */
export function correctCounts(
  counts: ArrayLike<number>,
  background: ArrayLike<number> | null,
  k: number,
  inverseGain: ArrayLike<number> | null,
  out: Float64Array = new Float64Array(counts.length),
): Float64Array {
  const n = counts.length;
  if (background !== null) requireLength('background', background, n);
  if (inverseGain !== null) requireLength('inverseGain', inverseGain, n);
  requireLength('out', out, n);
  requireFiniteNumber('k', k);
  return correctCountsKernel(n, counts, 1, 0, background, k, inverseGain, out, 1, 0);
}
