/**
 * Saturated detector images: a pixel whose stored value is the largest its integer data type holds (65535 for
 * uint16) has almost certainly been clipped by the camera or the acquisition software, so the counts there are a
 * lower bound, not a measurement. Float data have no such ceiling and are not checked.
 *
 * Pure: no I/O.
 */

// VARIABLES //

/** Largest value of each integer counts dtype of FORMATS §1. */
export const DTYPE_MAXIMUM: Readonly<Record<string, number>> = {
  uint8: 255,
  uint16: 65535,
  uint32: 4294967295,
  int16: 32767,
  int32: 2147483647,
};

/** Share of the (unmasked) pixels at the ceiling from which the whole image counts as saturated. */
export const SATURATED_SHARE = 0.5;

// FUNCTIONS //

/**
 * Counts the pixels at the ceiling of the dtype.
 *
 * @param counts - raw counts of one frame, as stored
 * @param dtype - the counts dtype (`ScanMetadata.countsDtype`)
 * @param mask - optional pixel mask (0 = excluded, e.g. a bad pixel)
 * @returns the number of saturated pixels and of pixels looked at, or null for float dtypes
 */
export function countSaturated(
  counts: ArrayLike<number>,
  dtype: string,
  mask: ArrayLike<number> | null = null,
): { saturated: number; pixels: number; ceiling: number } | null {
  const ceiling = DTYPE_MAXIMUM[dtype];
  if (ceiling === undefined) return null;
  let saturated = 0;
  let pixels = 0;
  for (let p = 0; p < counts.length; p++) {
    if (mask !== null && mask[p] === 0) continue;
    pixels++;
    if (counts[p] === ceiling) saturated++;
  }
  return { saturated, pixels, ceiling };
}

/**
 * A plain-sentence warning about saturation, the same on every step with the same kind of defect, or null.
 *
 * @param counts - raw counts of one frame
 * @param dtype - the counts dtype
 * @param mask - optional pixel mask (0 = excluded)
 */
export function saturationWarning(
  counts: ArrayLike<number>,
  dtype: string,
  mask: ArrayLike<number> | null = null,
): string | null {
  const s = countSaturated(counts, dtype, mask);
  if (s === null || s.saturated === 0 || s.pixels === 0) return null;
  const ceiling = `${s.ceiling}, the largest ${dtype} value`;
  if (s.saturated >= SATURATED_SHARE * s.pixels) {
    return `The detector image is saturated: ${s.saturated === s.pixels ? 'every pixel sits' : 'most pixels sit'} at ${ceiling}, so the counts are clipped and the results of this step mean nothing. Check the camera's gain and exposure or the detector voltage settings, following the lab's own procedures for the detector's high voltage.`;
  }
  return `Some detector pixels sit at ${ceiling}: their counts are clipped, so the image is saturated there and lobe shapes and yields near them are too low. Lower the camera gain or exposure, or mark isolated hot pixels as bad pixels in the calibration.`;
}
