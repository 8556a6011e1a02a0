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

/**
 * Circle fit refined geometrically (SCIENCE.md §7.2): Kåsa's algebraic fit as the start, then Levenberg–Marquardt
 * on the geometric residuals d_i − R, d_i = √((x_i − a)² + (y_i − b)²), minimising Σ(d_i − R)². The algebraic fit is
 * biased toward small circles when the points cover a short arc; the geometric one is not.
 *
 * @param x - x coordinates (any unit)
 * @param y - y coordinates (same unit)
 * @param options - iteration limit (default 100) and relative tolerance on the sum of squares (default 1e-14)
 * @returns centre, radius, the rms geometric residual, and whether the refinement converged
 * @throws {RangeError} as {@link fitCircleKasa}
 */
export function fitCircleGeometric(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  options: { maxIterations?: number; tolerance?: number } = {},
): { cx: number; cy: number; r: number; rms: number; converged: boolean; iterations: number } {
  const start = fitCircleKasa(x, y);
  const N = x.length;
  const maxIt = options.maxIterations ?? 100;
  const tol = options.tolerance ?? 1e-14;
  const cost = (a: number, b: number, r: number): number => {
    let s = 0;
    for (let i = 0; i < N; i++) {
      const d = Math.hypot(x[i]! - a, y[i]! - b) - r;
      s += d * d;
    }
    return s;
  };
  let [a, b, r] = [start.cx, start.cy, start.r];
  let c = cost(a, b, r);
  let lambda = 1e-3;
  let converged = false;
  let it = 0;
  const jtj = new Float64Array(9);
  const jtr = new Float64Array(3);
  const m = new Float64Array(9);
  const step = new Float64Array(3);
  for (; it < maxIt && !converged; it++) {
    jtj.fill(0);
    jtr.fill(0);
    for (let i = 0; i < N; i++) {
      const dx = x[i]! - a;
      const dy = y[i]! - b;
      const d = Math.hypot(dx, dy);
      if (d === 0) continue; // a point on the centre has no direction; it adds nothing to the gradient
      const res = d - r;
      const jr = [-dx / d, -dy / d, -1];
      for (let p = 0; p < 3; p++) {
        jtr[p] = jtr[p]! + jr[p]! * res;
        for (let q = 0; q < 3; q++) jtj[p * 3 + q] = jtj[p * 3 + q]! + jr[p]! * jr[q]!;
      }
    }
    let improved = false;
    for (let tries = 0; tries < 30 && !improved; tries++) {
      m.set(jtj);
      for (let p = 0; p < 3; p++) {
        m[p * 4] = m[p * 4]! * (1 + lambda);
        step[p] = -jtr[p]!;
      }
      if (!solveSmall(3, m, step)) {
        lambda *= 10;
        continue;
      }
      const [na, nb, nr] = [a + step[0]!, b + step[1]!, r + step[2]!];
      const nc = cost(na, nb, nr);
      if (nc <= c) {
        const rel = c > 0 ? (c - nc) / c : 0;
        [a, b, r, c] = [na, nb, nr, nc];
        lambda = Math.max(lambda / 10, 1e-12);
        improved = true;
        if (rel < tol) converged = true;
      } else {
        lambda *= 10;
      }
    }
    if (!improved) converged = true; // no step lowers the sum of squares: at the minimum to rounding
  }
  if (r < 0) r = -r;
  return { cx: a, cy: b, r, rms: Math.sqrt(c / N), converged, iterations: it };
}
