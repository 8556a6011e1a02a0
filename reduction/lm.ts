/**
 * Levenberg–Marquardt weighted least squares for small models (≤ 6 parameters), written for the peak fits:
 * minimises χ² = Σ w_i (y_i − f(x_i; θ))² with Marquardt's diagonal damping (K. Levenberg, Q. Appl. Math. 2, 164
 * (1944); D. W. Marquardt, J. SIAM 11, 431 (1963)).
 *
 * The model supplies its value and gradient at one point. A trial step that makes the model invalid (`valid`
 * returns false, e.g. a negative width) is treated as a failed step. Returns the parameters, χ², convergence flag
 * and the unscaled covariance (JᵀWJ)⁻¹ at the solution (the right one for weights 1/σ_i²).
 */

// TYPES //

export interface LmModel {
  /** Number of parameters. */
  nParams: number;
  /** f(x; θ), writing ∂f/∂θ_k into grad[k]. */
  evaluate(x: number, theta: Float64Array, grad: Float64Array): number;
  /** Optional feasibility check of θ. */
  valid?(theta: Float64Array): boolean;
}

export interface LmResult {
  theta: Float64Array;
  chi2: number;
  converged: boolean;
  iterations: number;
  /** (JᵀWJ)⁻¹, row-major nParams², or null when singular. */
  covariance: Float64Array | null;
}

export interface LmOptions {
  maxIterations?: number;
  /** Stop when the relative χ² decrease is below this (default 1e-10). */
  tolerance?: number;
}

// FUNCTIONS //

/**
 * Solves the K×K system a·x = b in place by Gaussian elimination with partial pivoting.
 *
 * @param K - size
 * @param a - matrix, row-major, destroyed
 * @param b - right-hand side, replaced by the solution
 * @returns false when singular
 */
export function solveSmall(K: number, a: Float64Array, b: Float64Array): boolean {
  for (let c = 0; c < K; c++) {
    let piv = c;
    let best = Math.abs(a[c * K + c]!);
    for (let r = c + 1; r < K; r++) {
      const v = Math.abs(a[r * K + c]!);
      if (v > best) {
        best = v;
        piv = r;
      }
    }
    if (!(best > 0) || !Number.isFinite(best)) return false;
    if (piv !== c) {
      for (let k = 0; k < K; k++) {
        const t = a[c * K + k]!;
        a[c * K + k] = a[piv * K + k]!;
        a[piv * K + k] = t;
      }
      const t = b[c]!;
      b[c] = b[piv]!;
      b[piv] = t;
    }
    const d = a[c * K + c]!;
    for (let r = c + 1; r < K; r++) {
      const f = a[r * K + c]! / d;
      if (f === 0) continue;
      for (let k = c; k < K; k++) a[r * K + k] = a[r * K + k]! - f * a[c * K + k]!;
      b[r] = b[r]! - f * b[c]!;
    }
  }
  for (let r = K - 1; r >= 0; r--) {
    let s = b[r]!;
    for (let k = r + 1; k < K; k++) s -= a[r * K + k]! * b[k]!;
    b[r] = s / a[r * K + r]!;
  }
  return true;
}

/**
 * Inverts a K×K matrix (row-major) by solving for each unit vector.
 *
 * @param K - size
 * @param a - matrix (not modified)
 * @returns inverse, or null when singular
 */
export function invertSmall(K: number, a: Float64Array): Float64Array | null {
  const inv = new Float64Array(K * K);
  const work = new Float64Array(K * K);
  const col = new Float64Array(K);
  for (let c = 0; c < K; c++) {
    work.set(a);
    col.fill(0);
    col[c] = 1;
    if (!solveSmall(K, work, col)) return null;
    for (let r = 0; r < K; r++) inv[r * K + c] = col[r]!;
  }
  return inv;
}

function chiSquare(
  model: LmModel,
  n: number,
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  w: ArrayLike<number>,
  theta: Float64Array,
  grad: Float64Array,
): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    const r = y[i]! - model.evaluate(x[i]!, theta, grad);
    s += w[i]! * r * r;
  }
  return s;
}

/**
 * Fits a model by Levenberg–Marquardt.
 *
 * @param model - model with gradient
 * @param n - number of points
 * @param x - abscissae
 * @param y - data
 * @param w - weights (1/σ²)
 * @param theta0 - starting parameters (not modified)
 * @param options - iteration limits
 * @returns the fit
 */
export function levenbergMarquardt(
  model: LmModel,
  n: number,
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  w: ArrayLike<number>,
  theta0: ArrayLike<number>,
  options: LmOptions = {},
): LmResult {
  const K = model.nParams;
  const maxIt = options.maxIterations ?? 100;
  const tol = options.tolerance ?? 1e-10;
  const theta = Float64Array.from(theta0);
  const trial = new Float64Array(K);
  const grad = new Float64Array(K);
  const jtj = new Float64Array(K * K);
  const jtr = new Float64Array(K);
  const a = new Float64Array(K * K);
  const step = new Float64Array(K);
  let lambda = 1e-3;
  let chi2 = chiSquare(model, n, x, y, w, theta, grad);
  let converged = false;
  let it = 0;
  if (!Number.isFinite(chi2)) return { theta, chi2, converged: false, iterations: 0, covariance: null };
  for (; it < maxIt; it++) {
    jtj.fill(0);
    jtr.fill(0);
    for (let i = 0; i < n; i++) {
      const r = y[i]! - model.evaluate(x[i]!, theta, grad);
      const wi = w[i]!;
      for (let p = 0; p < K; p++) {
        const gp = grad[p]! * wi;
        jtr[p] = jtr[p]! + gp * r;
        for (let q = 0; q <= p; q++) jtj[p * K + q] = jtj[p * K + q]! + gp * grad[q]!;
      }
    }
    for (let p = 0; p < K; p++) for (let q = p + 1; q < K; q++) jtj[p * K + q] = jtj[q * K + p]!;
    let accepted = false;
    let newChi2 = chi2;
    while (lambda < 1e12) {
      a.set(jtj);
      for (let p = 0; p < K; p++) a[p * K + p] = jtj[p * K + p]! * (1 + lambda) + 1e-300;
      step.set(jtr);
      if (solveSmall(K, a, step)) {
        for (let p = 0; p < K; p++) trial[p] = theta[p]! + step[p]!;
        if (!model.valid || model.valid(trial)) {
          newChi2 = chiSquare(model, n, x, y, w, trial, grad);
          if (Number.isFinite(newChi2) && newChi2 <= chi2) {
            accepted = true;
            break;
          }
        }
      }
      lambda *= 10;
    }
    if (!accepted) {
      converged = true; // no downhill step left: at a minimum to machine precision
      break;
    }
    const dec = chi2 - newChi2;
    theta.set(trial);
    chi2 = newChi2;
    lambda = Math.max(lambda / 10, 1e-12);
    if (dec <= tol * Math.max(chi2, 1e-300)) {
      converged = true;
      break;
    }
  }
  // covariance at the solution
  jtj.fill(0);
  for (let i = 0; i < n; i++) {
    model.evaluate(x[i]!, theta, grad);
    const wi = w[i]!;
    for (let p = 0; p < K; p++) for (let q = 0; q < K; q++) jtj[p * K + q] = jtj[p * K + q]! + wi * grad[p]! * grad[q]!;
  }
  const covariance = invertSmall(K, jtj);
  return { theta, chi2, converged, iterations: it, covariance };
}
