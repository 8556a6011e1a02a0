/**
 * Parabola estimators of a peak position (SCIENCE.md §9.1 item 2, [common practice]).
 *
 * Three-point vertex for equally spaced bins of width Δ: φ_v = φ_i + Δ(y_{i−1} − y_{i+1})/(2(y_{i−1} − 2y_i + y_{i+1})).
 * Least-squares version: y = a + b x + c x², vertex −b/(2c), variance
 * σ²(x_v) = [σ_b² + (b/c)² σ_c² − 2(b/c) cov(b, c)]/(4c²).
 */
import { invertSmall, solveSmall } from './lm';

// FUNCTIONS //

/**
 * Vertex of the parabola through three equally spaced points (x_c − Δ, y_m), (x_c, y_c), (x_c + Δ, y_p).
 *
 * @param xc - centre abscissa
 * @param delta - spacing Δ (> 0)
 * @param ym - value at x_c − Δ
 * @param yc - value at x_c
 * @param yp - value at x_c + Δ
 * @returns the vertex abscissa; x_c when the three points are collinear (no curvature)
 * @example
 * parabolaVertexThreePoint(10, 2, 950, 1000, 990); // returns 10.666666666666666 (SCIENCE.md §9.1)
 */
export function parabolaVertexThreePoint(xc: number, delta: number, ym: number, yc: number, yp: number): number {
  const den = ym - 2 * yc + yp;
  if (den === 0 || !Number.isFinite(den)) return xc;
  return xc + (delta * (ym - yp)) / (2 * den);
}

/** Least-squares parabola. */
export interface ParabolaFit {
  a: number;
  b: number;
  c: number;
  /** −b/(2c), or NaN when c = 0. */
  vertex: number;
  /** σ(vertex) from the fit covariance (weights = 1/σ²), or NaN. */
  vertexSigma: number;
}

/**
 * Weighted least-squares parabola y = a + b x + c x² through N points.
 *
 * @param N - number of points (≥ 3)
 * @param x - abscissae
 * @param y - values
 * @param w - weights 1/σ² (null: all 1)
 * @returns coefficients, vertex and its σ; null when singular or N < 3
 */
export function fitParabola(
  N: number,
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  w: ArrayLike<number> | null,
): ParabolaFit | null {
  if (N < 3) return null;
  const m = new Float64Array(9);
  const r = new Float64Array(3);
  for (let i = 0; i < N; i++) {
    const xi = x[i]!;
    const wi = w ? w[i]! : 1;
    const v = [1, xi, xi * xi];
    for (let p = 0; p < 3; p++) {
      r[p] = r[p]! + wi * v[p]! * y[i]!;
      for (let q = 0; q < 3; q++) m[p * 3 + q] = m[p * 3 + q]! + wi * v[p]! * v[q]!;
    }
  }
  const cov = invertSmall(3, m);
  const sol = Float64Array.from(r);
  if (!solveSmall(3, Float64Array.from(m), sol) || !cov) return null;
  const [a, b, c] = [sol[0]!, sol[1]!, sol[2]!];
  const vertex = c === 0 ? Number.NaN : -b / (2 * c);
  const q = b / c;
  const varV = (cov[4]! + q * q * cov[8]! - 2 * q * cov[5]!) / (4 * c * c);
  return { a, b, c, vertex, vertexSigma: varV >= 0 ? Math.sqrt(varV) : Number.NaN };
}
