/**
 * Small numerical helpers of the bench tools: a two-parameter Nelder–Mead simplex search
 * [paper: J. A. Nelder, R. Mead, Comput. J. 7, 308 (1965)] and a least-squares quadratic surface through cost values
 * on a grid (its vertex and Hessian give the refined minimum and the curvature used for the errors).
 */
import { solveSmall } from '../lm';

// TYPES //

export interface SimplexResult {
  x: number;
  y: number;
  cost: number;
  evaluations: number;
  converged: boolean;
}

export interface QuadraticSurface {
  /** Vertex (minimum when the Hessian is positive definite), in the cost function's coordinates. */
  x: number;
  y: number;
  /** Cost at the vertex from the surface. */
  cost: number;
  /** Hessian [h_xx, h_xy, h_xy, h_yy] of the cost. */
  hessian: Float64Array;
  positiveDefinite: boolean;
  /** rms of the cost values about the surface. */
  rms: number;
}

// FUNCTIONS //

/**
 * Nelder–Mead minimisation of f(x, y) (standard coefficients 1, 2, ½, ½).
 *
 * @param f - cost (may return Infinity for infeasible points)
 * @param x0 - start x
 * @param y0 - start y
 * @param step - initial simplex size (same unit as x, y)
 * @param tolerance - stop when the simplex is smaller than this
 * @param maxEvaluations - evaluation budget
 */
export function nelderMead2(
  f: (x: number, y: number) => number,
  x0: number,
  y0: number,
  step: number,
  tolerance: number,
  maxEvaluations = 400,
): SimplexResult {
  const px = [x0, x0 + step, x0];
  const py = [y0, y0, y0 + step];
  const fv = [f(px[0]!, py[0]!), f(px[1]!, py[1]!), f(px[2]!, py[2]!)];
  let evals = 3;
  let converged = false;
  while (evals < maxEvaluations) {
    // order: 0 best, 2 worst
    const idx = [0, 1, 2].sort((a, b) => fv[a]! - fv[b]!);
    const [b, m, w] = idx as [number, number, number];
    const size = Math.max(Math.hypot(px[m]! - px[b]!, py[m]! - py[b]!), Math.hypot(px[w]! - px[b]!, py[w]! - py[b]!));
    if (size < tolerance) {
      converged = true;
      break;
    }
    const cx = (px[b]! + px[m]!) / 2;
    const cy = (py[b]! + py[m]!) / 2;
    const rx = cx + (cx - px[w]!);
    const ry = cy + (cy - py[w]!);
    const fr = f(rx, ry);
    evals++;
    if (fr < fv[b]!) {
      const ex = cx + 2 * (cx - px[w]!);
      const ey = cy + 2 * (cy - py[w]!);
      const fe = f(ex, ey);
      evals++;
      if (fe < fr) [px[w], py[w], fv[w]] = [ex, ey, fe];
      else [px[w], py[w], fv[w]] = [rx, ry, fr];
    } else if (fr < fv[m]!) {
      [px[w], py[w], fv[w]] = [rx, ry, fr];
    } else {
      const outside = fr < fv[w]!;
      const kx = outside ? cx + 0.5 * (rx - cx) : cx + 0.5 * (px[w]! - cx);
      const ky = outside ? cy + 0.5 * (ry - cy) : cy + 0.5 * (py[w]! - cy);
      const fk = f(kx, ky);
      evals++;
      if (fk < Math.min(fr, fv[w]!)) {
        [px[w], py[w], fv[w]] = [kx, ky, fk];
      } else {
        for (const j of [m, w]) {
          px[j] = px[b]! + 0.5 * (px[j]! - px[b]!);
          py[j] = py[b]! + 0.5 * (py[j]! - py[b]!);
          fv[j] = f(px[j]!, py[j]!);
          evals++;
        }
      }
    }
  }
  let best = 0;
  for (let j = 1; j < 3; j++) if (fv[j]! < fv[best]!) best = j;
  return { x: px[best]!, y: py[best]!, cost: fv[best]!, evaluations: evals, converged };
}

/**
 * Least-squares quadratic surface c + g·d + ½ dᵀ H d through the cost on a (2k + 1)² grid of spacing h about
 * (x0, y0).
 *
 * @param f - cost
 * @param x0 - grid centre x
 * @param y0 - grid centre y
 * @param h - spacing
 * @param k - half-width in steps (default 2: a 5 × 5 grid)
 * @returns the surface, or null when the fit is singular or a cost is not finite
 */
export function quadraticSurface(
  f: (x: number, y: number) => number,
  x0: number,
  y0: number,
  h: number,
  k = 2,
): QuadraticSurface | null {
  const a = new Float64Array(36);
  const b = new Float64Array(6);
  const pts: [number, number, number][] = [];
  for (let i = -k; i <= k; i++) {
    for (let j = -k; j <= k; j++) {
      const v = f(x0 + i * h, y0 + j * h);
      if (!Number.isFinite(v)) return null;
      pts.push([i, j, v]);
    }
  }
  // unknowns in grid units: c, gx, gy, hxx, hxy, hyy with value = c + gx u + gy v + ½hxx u² + hxy u v + ½hyy v²
  const row = new Float64Array(6);
  const c0 = pts[Math.floor(pts.length / 2)]![2];
  for (const [u, v, val] of pts) {
    row.set([1, u, v, 0.5 * u * u, u * v, 0.5 * v * v]);
    for (let p = 0; p < 6; p++) {
      b[p] = b[p]! + row[p]! * (val - c0);
      for (let q = 0; q < 6; q++) a[p * 6 + q] = a[p * 6 + q]! + row[p]! * row[q]!;
    }
  }
  const sol = Float64Array.from(b);
  const work = Float64Array.from(a);
  if (!solveSmall(6, work, sol)) return null;
  const [c, gx, gy, hxx, hxy, hyy] = [sol[0]! + c0, sol[1]!, sol[2]!, sol[3]!, sol[4]!, sol[5]!];
  let ss = 0;
  for (const [u, v, val] of pts) {
    const m = c + gx * u + gy * v + 0.5 * hxx * u * u + hxy * u * v + 0.5 * hyy * v * v;
    ss += (val - m) ** 2;
  }
  const det = hxx * hyy - hxy * hxy;
  const positiveDefinite = hxx > 0 && det > 0;
  // vertex: H d = −g (grid units)
  let du = 0;
  let dv = 0;
  if (det !== 0) {
    du = (-(hyy * gx) + hxy * gy) / det;
    dv = (hxy * gx - hxx * gy) / det;
  }
  const cost = c + gx * du + gy * dv + 0.5 * hxx * du * du + hxy * du * dv + 0.5 * hyy * dv * dv;
  const h2 = h * h;
  return {
    x: x0 + du * h,
    y: y0 + dv * h,
    cost,
    hessian: Float64Array.of(hxx / h2, hxy / h2, hxy / h2, hyy / h2),
    positiveDefinite,
    rms: Math.sqrt(ss / pts.length),
  };
}
