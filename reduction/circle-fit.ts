/**
 * Algebraic circle fit [paper: I. Kåsa, IEEE Trans. Instrum. Meas. IM-25, 8 (1976)] (SCIENCE.md §7.2):
 * linear least squares for x² + y² + D x + E y + F ≈ 0; centre (−D/2, −E/2), R = √(D²/4 + E²/4 − F).
 * Coordinates are shifted to their mean before the solve (better conditioning, same solution).
 * Biased for short arcs; refine geometrically when that matters.
 */
import { solveSmall } from './lm';

// FUNCTIONS //

/**
 * Kåsa circle fit.
 *
 * @param x - x coordinates (any unit)
 * @param y - y coordinates (same unit)
 * @returns centre and radius in the input unit
 * @throws {RangeError} with fewer than three points or collinear points
 * @example
 * fitCircleKasa([662.3, 627.206666, 486.252773, 364.578837, 415.881859, 587.3],
 *   [498.7, 595.118141, 646.421163, 524.747227, 383.793334, 368.796189]);
 * // returns { cx: 512.3, cy: 498.7, r: 150 } (SCIENCE.md §7.2)
 */
export function fitCircleKasa(x: ArrayLike<number>, y: ArrayLike<number>): { cx: number; cy: number; r: number } {
  const N = x.length;
  if (y.length !== N) throw new RangeError(`y must have ${N} elements, got ${y.length}`);
  if (N < 3) throw new RangeError(`the circle fit needs at least 3 points, got ${N}`);
  let mx = 0;
  let my = 0;
  for (let i = 0; i < N; i++) {
    mx += x[i]!;
    my += y[i]!;
  }
  mx /= N;
  my /= N;
  const a = new Float64Array(9);
  const b = new Float64Array(3);
  for (let i = 0; i < N; i++) {
    const u = x[i]! - mx;
    const v = y[i]! - my;
    const row = [u, v, 1];
    const rhs = -(u * u + v * v);
    for (let p = 0; p < 3; p++) {
      b[p] = b[p]! + row[p]! * rhs;
      for (let q = 0; q < 3; q++) a[p * 3 + q] = a[p * 3 + q]! + row[p]! * row[q]!;
    }
  }
  if (!solveSmall(3, a, b)) throw new RangeError('the circle fit is singular (points collinear or coincident)');
  const [D, E, F] = [b[0]!, b[1]!, b[2]!];
  const r2 = (D * D) / 4 + (E * E) / 4 - F;
  if (!(r2 > 0)) throw new RangeError('the circle fit gave no real radius');
  return { cx: mx - D / 2, cy: my - E / 2, r: Math.sqrt(r2) };
}
