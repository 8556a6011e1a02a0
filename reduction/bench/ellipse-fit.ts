/**
 * Detector ellipticity from an ellipse fit to a feature known to be round in momentum space (SCIENCE.md §7.3):
 * the detector model r_det − r_c = s·R(β)·M·p with M = R(ψ) diag(q, 1) R(−ψ) maps a round ring of momentum radius
 * p₀ onto an ellipse with semi-axis s·q·p₀ along ψ and s·p₀ across it. Fitted parameters: centre (x, y), minor
 * semi-axis b = s·p₀ (px), ratio q ≥ 1 and major-axis direction ψ (degrees, (−90°, 90°]); they are the calibration's
 * `detector_ellipticity.ratio` and `axis_deg`.
 *
 * Method: a linear conic fit with the normalisation A + C = 1 (well defined for near-circles) gives the start; then
 * Levenberg–Marquardt (reduction/lm.ts) on the radial distance of each point from the ellipse along the ray from the
 * centre, e_i = |d_i|(1 − 1/|M⁻¹d_i/b|) (close to the geometric distance for q near 1). For the direct
 * ellipse-specific algebraic alternative see [paper: A. Fitzgibbon, M. Pilu, R. B. Fisher, IEEE Trans. PAMI 21,
 * 476 (1999)]. Errors: (JᵀJ)⁻¹ s², s² = Σe_i²/(N − 5) [common practice].
 *
 * The torus of circular (or elliptical) light is not a round feature: residual ellipticity of the light makes it
 * elliptical too (SCIENCE.md §7.3); the tool warns when the scan's kind says so.
 */
import type { ExperimentKind } from '../formats';
import { type LmModel, levenbergMarquardt, solveSmall } from '../lm';
import { type RingImageInput, type RingPoints, ringPointsFromImage } from './ring-fit';
import { type BenchToolResult, requireFrame } from './types';

// TYPES //

export interface EllipseOptions {
  /** Experiment kind of the scan the feature comes from (for the round-feature caution). */
  kind?: ExperimentKind;
  /** Light ellipticity ε of the scan, when known. */
  ellipticity?: number | null;
}

export interface EllipseValue {
  x: number;
  y: number;
  /** Minor semi-axis, px. */
  minorPx: number;
  /** q = major/minor ≥ 1. */
  ratio: number;
  /** Direction of the major axis, degrees in (−90, 90]. */
  axisDeg: number;
}

export type EllipseResult = BenchToolResult<
  EllipseValue,
  EllipseValue,
  { azimuthDeg: number[]; residualPx: number[]; rms: number },
  {
    points: number;
    iterations: number;
    converged: boolean;
    /** Covariance of (x, y, minorPx, ratio, axisRad) at the solution, row-major 5 × 5. */
    covariance: number[];
    /** The start from the linear conic fit. */
    start: EllipseValue;
    pointsX: number[];
    pointsY: number[];
  }
>;

// FUNCTIONS //

function wrapAxisDeg(d: number): number {
  let a = d % 180;
  if (a <= -90) a += 180;
  if (a > 90) a -= 180;
  return a;
}

/** Linear conic fit with A + C = 1 on centred coordinates; null when degenerate or not an ellipse. */
function conicStart(x: ArrayLike<number>, y: ArrayLike<number>): EllipseValue | null {
  const N = x.length;
  let mx = 0;
  let my = 0;
  for (let i = 0; i < N; i++) {
    mx += x[i]!;
    my += y[i]!;
  }
  mx /= N;
  my /= N;
  const a = new Float64Array(25);
  const b = new Float64Array(5);
  for (let i = 0; i < N; i++) {
    const u = x[i]! - mx;
    const v = y[i]! - my;
    const row = [u * u - v * v, u * v, u, v, 1];
    const rhs = -v * v;
    for (let p = 0; p < 5; p++) {
      b[p] = b[p]! + row[p]! * rhs;
      for (let q = 0; q < 5; q++) a[p * 5 + q] = a[p * 5 + q]! + row[p]! * row[q]!;
    }
  }
  if (!solveSmall(5, a, b)) return null;
  const A = b[0]!;
  const B = b[1]!;
  const C = 1 - A;
  const D = b[2]!;
  const E = b[3]!;
  const F = b[4]!;
  if (!(4 * A * C - B * B > 0)) return null;
  // centre: [2A B; B 2C] c = −[D; E]
  const det = 4 * A * C - B * B;
  const u0 = (-2 * C * D + B * E) / det;
  const v0 = (B * D - 2 * A * E) / det;
  const f0 = A * u0 * u0 + B * u0 * v0 + C * v0 * v0 + D * u0 + E * v0 + F;
  // eigenvalues of [[A, B/2], [B/2, C]]
  const tr = A + C;
  const disc = Math.sqrt(Math.max(((A - C) / 2) ** 2 + (B / 2) ** 2, 0));
  const l1 = tr / 2 - disc; // smaller eigenvalue → major axis
  const l2 = tr / 2 + disc;
  if (!(l1 > 0) || !(-f0 > 0)) return null;
  const major = Math.sqrt(-f0 / l1);
  const minor = Math.sqrt(-f0 / l2);
  // eigenvector of l1
  const ang = B === 0 && A <= C ? 0 : B === 0 ? Math.PI / 2 : Math.atan2(l1 - A, B / 2);
  return { x: mx + u0, y: my + v0, minorPx: minor, ratio: major / minor, axisDeg: wrapAxisDeg((ang * 180) / Math.PI) };
}

/**
 * Fits the detector ellipse to points on a round feature, or to a ring in an image inside an annulus.
 *
 * @param input - points `{ x, y }` (px), or `{ frame, annulus, sectors? }`
 * @param options - the scan's kind and light ellipticity (for the caution), optional
 * @returns centre, minor semi-axis, ratio q and axis ψ with standard errors, residual curve, diagnostics, warnings
 * @throws {RangeError} with fewer than 6 points or points that do not outline an ellipse
 * @example
 * // points of a unit circle mapped by M(q = 1.05, ψ = 30°) (SCIENCE.md §7.3) → ratio 1.05, axisDeg 30
 */
export function fitDetectorEllipse(input: RingPoints | RingImageInput, options: EllipseOptions = {}): EllipseResult {
  const warnings: string[] = [];
  let px: ArrayLike<number>;
  let py: ArrayLike<number>;
  if ((input as RingImageInput).frame !== undefined) {
    const im = input as RingImageInput;
    requireFrame(im.frame);
    const pts = ringPointsFromImage(im.frame, im.annulus, im.sectors ?? 72);
    px = pts.x;
    py = pts.y;
  } else {
    px = (input as RingPoints).x;
    py = (input as RingPoints).y;
  }
  const N = px.length;
  if (py.length !== N) throw new RangeError(`x and y must have the same length, got ${N} and ${py.length}`);
  if (N < 6) throw new RangeError(`the ellipse fit needs at least 6 points, got ${N}`);
  for (let i = 0; i < N; i++) {
    if (!(Number.isFinite(px[i]!) && Number.isFinite(py[i]!))) throw new RangeError(`point ${i} is not finite`);
  }
  if (options.kind === 'angular_streaking') {
    const e = options.ellipticity;
    warnings.push(
      e != null && Math.abs(e) >= 0.95
        ? 'The torus of circular light is not a round feature: residual ellipticity of the light makes it elliptical too. Fit an isotropic ring (e.g. ATI rings of linear light) unless the light is verified circular.'
        : 'The distribution of elliptical light is not round: fit an isotropic ring (e.g. ATI rings of linear light) instead.',
    );
  } else if (options.kind === 'bicircular') {
    warnings.push('A bicircular distribution is three-fold, not round: fit an isotropic ring instead.');
  }
  const start = conicStart(px, py);
  if (!start) throw new RangeError('the points do not outline an ellipse (linear conic fit failed)');
  // parameters θ = (x, y, b, q, ψ rad); start q slightly off 1 so that ψ has a gradient
  const theta0 = [start.x, start.y, start.minorPx, Math.max(start.ratio, 1 + 1e-6), (start.axisDeg * Math.PI) / 180];
  const resid = (i: number, t: ArrayLike<number>): number => {
    const dx = px[i]! - t[0]!;
    const dy = py[i]! - t[1]!;
    const c = Math.cos(t[4]!);
    const s = Math.sin(t[4]!);
    const u = (c * dx + s * dy) / t[3]!;
    const v = -s * dx + c * dy;
    const d = Math.hypot(dx, dy);
    const w = Math.hypot(u, v) / t[2]!;
    return w > 0 ? d * (1 - 1 / w) : -t[2]!;
  };
  const trial = new Float64Array(5);
  const model: LmModel = {
    nParams: 5,
    evaluate(x, theta, grad) {
      const i = x;
      const f = resid(i, theta);
      for (let k = 0; k < 5; k++) {
        const h = k < 3 ? 1e-6 * Math.max(1, Math.abs(theta[k]!)) : 1e-7;
        trial.set(theta);
        trial[k] = theta[k]! + h;
        const fp = resid(i, trial);
        trial[k] = theta[k]! - h;
        const fm = resid(i, trial);
        grad[k] = (fp - fm) / (2 * h);
      }
      return f;
    },
    valid: (t) => t[2]! > 0 && t[3]! > 0,
  };
  const xs = Float64Array.from({ length: N }, (_, i) => i);
  const zeros = new Float64Array(N);
  const ones = new Float64Array(N).fill(1);
  const lm = levenbergMarquardt(model, N, xs, zeros, ones, theta0, { maxIterations: 200, tolerance: 1e-15 });
  let [x, y, b, q, psi] = Array.from(lm.theta) as [number, number, number, number, number];
  const s2 = lm.chi2 / Math.max(N - 5, 1);
  let cov = lm.covariance ? Array.from(lm.covariance, (v) => v * s2) : new Array<number>(25).fill(Number.NaN);
  if (q < 1) {
    // the axis along ψ is the shorter one: swap to the major-axis convention (q' = 1/q, b' = b q, ψ' = ψ + 90°)
    const jac = [
      [1, 0, 0, 0, 0],
      [0, 1, 0, 0, 0],
      [0, 0, q, b, 0],
      [0, 0, 0, -1 / (q * q), 0],
      [0, 0, 0, 0, 1],
    ];
    const c2 = new Array<number>(25).fill(0);
    for (let i = 0; i < 5; i++)
      for (let j = 0; j < 5; j++) {
        let s = 0;
        for (let k = 0; k < 5; k++) for (let l = 0; l < 5; l++) s += jac[i]![k]! * cov[k * 5 + l]! * jac[j]![l]!;
        c2[i * 5 + j] = s;
      }
    cov = c2;
    b *= q;
    q = 1 / q;
    psi += Math.PI / 2;
  }
  const axisDeg = wrapAxisDeg((psi * 180) / Math.PI);
  const az: number[] = [];
  const res: number[] = [];
  const tFinal = [x, y, b, q, (axisDeg * Math.PI) / 180];
  for (let i = 0; i < N; i++) {
    az.push((Math.atan2(py[i]! - y, px[i]! - x) * 180) / Math.PI);
    res.push(resid(i, tFinal));
  }
  const qErr = Math.sqrt(cov[18]!);
  if (Number.isFinite(qErr) && q - 1 < 2 * qErr) {
    warnings.push(
      `The feature is round to within its errors (q − 1 = ${(q - 1).toExponential(2)} ± ${qErr.toExponential(1)}): the axis direction is not determined.`,
    );
  }
  if (!lm.converged) warnings.push('The ellipse fit did not converge; the result is the last step.');
  return {
    value: { x, y, minorPx: b, ratio: q, axisDeg },
    stdErr: {
      x: Math.sqrt(cov[0]!),
      y: Math.sqrt(cov[6]!),
      minorPx: Math.sqrt(cov[12]!),
      ratio: qErr,
      axisDeg: (Math.sqrt(cov[24]!) * 180) / Math.PI,
    },
    residual: { azimuthDeg: az, residualPx: res, rms: Math.sqrt(lm.chi2 / N) },
    diagnostics: {
      points: N,
      iterations: lm.iterations,
      converged: lm.converged,
      covariance: cov,
      start,
      pointsX: Array.from(px),
      pointsY: Array.from(py),
    },
    warnings,
  };
}
