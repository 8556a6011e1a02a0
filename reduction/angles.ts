/**
 * Angle helpers: wrap rules and degree/radian conversion.
 *
 * Wrap rule (SCIENCE.md §4.4, FORMATS §4): lab azimuths and offsets are reported in (−180°, 180°];
 * `wrapDeg(x, period)` maps into (−period/2, period/2]. NaN and ±Infinity give NaN.
 */

// VARIABLES //

export const DEG_PER_RAD = 180 / Math.PI;
export const RAD_PER_DEG = Math.PI / 180;

// FUNCTIONS //

/**
 * Wraps an angle into (−period/2, period/2].
 *
 * @param angle - angle in any unit
 * @param period - period in the same unit (> 0), default 360
 * @returns wrapped angle; NaN for non-finite input
 * @example
 * wrapDeg(190); // returns -170
 * wrapDeg(-180); // returns 180
 */
export function wrapDeg(angle: number, period = 360): number {
  if (!Number.isFinite(angle)) return Number.NaN;
  const half = period / 2;
  let r = angle - period * Math.floor((angle + half) / period); // [−half, half)
  if (r <= -half) r += period;
  // rounding can leave r a hair above half
  if (r > half) r -= period;
  return r === 0 ? 0 : r; // no signed zero
}

/**
 * Wraps an angle in radians into (−π, π].
 *
 * @param angleRad - angle, rad
 * @returns wrapped angle, rad
 */
export function wrapRad(angleRad: number): number {
  return wrapDeg(angleRad, 2 * Math.PI);
}

/**
 * Wraps an angle into [0, period).
 *
 * @param angle - angle
 * @param period - period (> 0), default 360
 */
export function wrapPositive(angle: number, period = 360): number {
  if (!Number.isFinite(angle)) return Number.NaN;
  let r = angle % period;
  if (r < 0) r += period;
  if (r >= period) r -= period;
  return r;
}

/** Degrees → radians. */
export function degToRad(deg: number): number {
  return deg * RAD_PER_DEG;
}

/** Radians → degrees. */
export function radToDeg(rad: number): number {
  return rad * DEG_PER_RAD;
}
