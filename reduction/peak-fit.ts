/**
 * Sub-bin peak refinement by least squares (peak + constant), with a robust parabola fallback.
 *
 * Angular peaks (SCIENCE.md §9.1 items 1–2): the data are the bins within ±`halfWidthDeg` of a candidate, taken as
 * wrapped differences d = wrap(θ − candidate) so that a lobe straddling ±180° is one contiguous window. Models
 * (weights 1/max(N, 1), Poisson-like):
 * - `gaussian`: Y = B + A exp(−(d − μ)²/(2σ²)); width = σ;
 * - `von_mises`: Y = B + A exp(κ(cos(d − μ) − 1)); width = 1/√κ (rad → deg, the small-angle rms);
 * - `parabola`: y = a + b d + c d² over ±halfWidth/2 of the smoothed maximum; width null.
 * A fit is accepted when it converges with A > 0, a width between a quarter bin and 4·halfWidth, and the centre inside
 * the window; otherwise the three-point parabola through the maximum of the smoothed distribution is used
 * (`method = 'parabola_fallback'`) and the caller warns.
 *
 * Radial peaks: the same Gaussian + constant model on the momentum-area density along a ray, weights from the counts
 * behind each density value, fitted over the contiguous region above 20 % of the (3-bin smoothed) maximum.
 */
import { wrapDeg } from './angles';
import { type LmModel, levenbergMarquardt } from './lm';
import { fitParabola, parabolaVertexThreePoint } from './parabola';

// TYPES //

export type PeakModel = 'gaussian' | 'von_mises' | 'parabola';

export interface AngularPeakFit {
  /** Peak direction, degrees in (−180, 180]. */
  angleDeg: number;
  /** Fitted rms width, degrees; null for the parabola methods. */
  widthDeg: number | null;
  method: PeakModel | 'parabola_fallback';
  /** σ(angle) from the fit covariance, degrees (diagnostic; the reported error is the bootstrap one). */
  fitSigmaDeg: number | null;
  /** True when the centre lies within 10 % of the window half-width from its edge. */
  nearEdge: boolean;
}

export interface RadialPeakFit {
  radiusAu: number;
  method: 'gaussian' | 'parabola_fallback';
  /** True when the peak is at the first/last ring of the search range. */
  nearEdge: boolean;
}

// VARIABLES //

const RAD = Math.PI / 180;

const gaussianModel: LmModel = {
  nParams: 4,
  evaluate(x, t, g) {
    const s = t[2]!;
    const z = (x - t[1]!) / s;
    const e = Math.exp(-0.5 * z * z);
    const a = t[0]!;
    g[0] = e;
    g[1] = (a * e * z) / s;
    g[2] = (a * e * z * z) / s;
    g[3] = 1;
    return t[3]! + a * e;
  },
  valid: (t) => t[2]! > 0,
};

const vonMisesModel: LmModel = {
  nParams: 4,
  evaluate(x, t, g) {
    const u = (x - t[1]!) * RAD;
    const k = t[2]!;
    const cu = Math.cos(u);
    const e = Math.exp(k * (cu - 1));
    const a = t[0]!;
    g[0] = e;
    g[1] = a * e * k * Math.sin(u) * RAD;
    g[2] = a * e * (cu - 1);
    g[3] = 1;
    return t[3]! + a * e;
  },
  valid: (t) => t[2]! > 0,
};

// FUNCTIONS //

/** Workspace reused across fits (no allocation per fit after the first). */
export class PeakFitWorkspace {
  d: Float64Array;
  y: Float64Array;
  ys: Float64Array;
  w: Float64Array;
  constructor(capacity: number) {
    this.d = new Float64Array(capacity);
    this.y = new Float64Array(capacity);
    this.ys = new Float64Array(capacity);
    this.w = new Float64Array(capacity);
  }
}

/**
 * Refines one angular peak.
 *
 * @param thetaDeg - bin centres, degrees (equally spaced over 360°)
 * @param y - raw angular distribution (counts per bin)
 * @param ySmooth - smoothed distribution (candidate and fallback)
 * @param candidateDeg - starting direction, degrees
 * @param model - peak model
 * @param halfWidthDeg - fit half-window, degrees
 * @param ws - workspace (capacity ≥ number of bins)
 * @returns the refined peak
 */
export function fitAngularPeak(
  thetaDeg: ArrayLike<number>,
  y: ArrayLike<number>,
  ySmooth: ArrayLike<number>,
  candidateDeg: number,
  model: PeakModel,
  halfWidthDeg: number,
  ws: PeakFitWorkspace,
): AngularPeakFit {
  const M = thetaDeg.length;
  const bin = 360 / M;
  const hw = Math.max(halfWidthDeg, 1.5 * bin);
  // collect the window in increasing d
  let n = 0;
  let jStart = 0;
  {
    // first bin at or after candidate − hw
    let best = Number.POSITIVE_INFINITY;
    for (let j = 0; j < M; j++) {
      const d = wrapDeg(thetaDeg[j]! - candidateDeg);
      if (d >= -hw && d < best) {
        best = d;
        jStart = j;
      }
    }
  }
  for (let k = 0; k < M; k++) {
    const j = (jStart + k) % M;
    const d = wrapDeg(thetaDeg[j]! - candidateDeg);
    if (d < -hw || d > hw) break;
    if (k > 0 && d <= ws.d[n - 1]!) break;
    ws.d[n] = d;
    ws.y[n] = y[j]!;
    ws.ys[n] = ySmooth[j]!;
    ws.w[n] = 1 / Math.max(Math.abs(y[j]!), 1);
    n++;
  }
  // maximum of the smoothed distribution in the window
  let iMax = 0;
  for (let i = 1; i < n; i++) if (ws.ys[i]! > ws.ys[iMax]!) iMax = i;
  const fallback = (): AngularPeakFit => {
    let v: number;
    if (iMax > 0 && iMax < n - 1) {
      v = parabolaVertexThreePoint(ws.d[iMax]!, bin, ws.ys[iMax - 1]!, ws.ys[iMax]!, ws.ys[iMax + 1]!);
    } else {
      v = ws.d[iMax] ?? 0;
    }
    const edge = Math.abs(v) > 0.9 * hw;
    return {
      angleDeg: wrapDeg(candidateDeg + v),
      widthDeg: null,
      method: 'parabola_fallback',
      fitSigmaDeg: null,
      nearEdge: edge,
    };
  };
  if (n < 5) return fallback();

  if (model === 'parabola') {
    const c = ws.d[iMax]!;
    let lo = iMax;
    let hi = iMax;
    while (lo > 0 && ws.d[lo - 1]! >= c - hw / 2) lo--;
    while (hi < n - 1 && ws.d[hi + 1]! <= c + hw / 2) hi++;
    const m = hi - lo + 1;
    const fit =
      m >= 3 ? fitParabola(m, ws.d.subarray(lo, hi + 1), ws.y.subarray(lo, hi + 1), ws.w.subarray(lo, hi + 1)) : null;
    if (!fit || !(fit.c < 0) || !(Math.abs(fit.vertex) <= hw)) return fallback();
    return {
      angleDeg: wrapDeg(candidateDeg + fit.vertex),
      widthDeg: null,
      method: 'parabola',
      fitSigmaDeg: Number.isFinite(fit.vertexSigma) ? fit.vertexSigma : null,
      nearEdge: Math.abs(fit.vertex) > 0.9 * hw,
    };
  }

  // starting values
  let yMin = Number.POSITIVE_INFINITY;
  for (let i = 0; i < n; i++) yMin = Math.min(yMin, ws.ys[i]!);
  const B0 = Math.max(0, yMin);
  const A0 = Math.max(ws.ys[iMax]! - B0, 1e-12);
  let s0 = 0;
  let s1 = 0;
  for (let i = 0; i < n; i++) {
    const v = Math.max(ws.ys[i]! - B0, 0);
    s0 += v;
    s1 += v * (ws.d[i]! - ws.d[iMax]!) ** 2;
  }
  let sig0 = s0 > 0 ? Math.sqrt(s1 / s0) : hw / 2;
  sig0 = Math.min(Math.max(sig0, bin), hw);
  const theta0 = model === 'gaussian' ? [A0, ws.d[iMax]!, sig0, B0] : [A0, ws.d[iMax]!, 1 / (sig0 * RAD) ** 2, B0];
  const res = levenbergMarquardt(model === 'gaussian' ? gaussianModel : vonMisesModel, n, ws.d, ws.y, ws.w, theta0, {
    maxIterations: 60,
  });
  const [A, mu, p2] = [res.theta[0]!, res.theta[1]!, res.theta[2]!];
  const width = model === 'gaussian' ? Math.abs(p2) : 1 / Math.sqrt(p2) / RAD;
  const ok =
    Number.isFinite(res.chi2) &&
    A > 0 &&
    Number.isFinite(mu) &&
    Math.abs(mu) <= hw &&
    width >= bin / 4 &&
    width <= 4 * hw;
  if (!ok) return fallback();
  const cov = res.covariance;
  const varMu = cov ? cov[5]! : Number.NaN;
  return {
    angleDeg: wrapDeg(candidateDeg + mu),
    widthDeg: width,
    method: model,
    fitSigmaDeg: varMu >= 0 ? Math.sqrt(varMu) : null,
    nearEdge: Math.abs(mu) > 0.9 * hw,
  };
}

/**
 * Refines the peak of the momentum-area density along a ray.
 *
 * @param pAu - ring centres, a.u.
 * @param density - density (counts per a.u.²)
 * @param counts - counts behind each density value
 * @param areaAu2 - momentum area behind each density value (density = counts/area), a.u.²
 * @param iLo - first ring of the search range
 * @param iHi - one past the last ring
 * @param ws - workspace (capacity ≥ number of rings)
 * @returns radius of the peak, or null when the range holds no positive density
 */
export function fitRadialPeak(
  pAu: ArrayLike<number>,
  density: ArrayLike<number>,
  counts: ArrayLike<number>,
  areaAu2: ArrayLike<number>,
  iLo: number,
  iHi: number,
  ws: PeakFitWorkspace,
): RadialPeakFit | null {
  const R = pAu.length;
  iLo = Math.max(0, iLo);
  iHi = Math.min(R, iHi);
  if (iHi - iLo < 1) return null;
  // 3-bin smoothing inside the range
  for (let i = iLo; i < iHi; i++) {
    const a = density[Math.max(iLo, i - 1)]!;
    const b = density[i]!;
    const c = density[Math.min(iHi - 1, i + 1)]!;
    ws.ys[i] = (a + b + c) / 3;
  }
  let iMax = iLo;
  for (let i = iLo + 1; i < iHi; i++) if (ws.ys[i]! > ws.ys[iMax]!) iMax = i;
  const peak = ws.ys[iMax]!;
  if (!(peak > 0)) return null;
  const dp = R > 1 ? pAu[1]! - pAu[0]! : 1;
  const nearEdge = iMax === iLo || iMax === iHi - 1;
  const fallback = (): RadialPeakFit => {
    let r = pAu[iMax]!;
    if (iMax > iLo && iMax < iHi - 1) {
      r = parabolaVertexThreePoint(pAu[iMax]!, dp, ws.ys[iMax - 1]!, ws.ys[iMax]!, ws.ys[iMax + 1]!);
    }
    return { radiusAu: r, method: 'parabola_fallback', nearEdge };
  };
  let lo = iMax;
  let hi = iMax;
  while (lo > iLo && ws.ys[lo - 1]! > 0.2 * peak) lo--;
  while (hi < iHi - 1 && ws.ys[hi + 1]! > 0.2 * peak) hi++;
  while (hi - lo + 1 < 7 && (lo > iLo || hi < iHi - 1)) {
    if (lo > iLo) lo--;
    if (hi < iHi - 1) hi++;
  }
  const n = hi - lo + 1;
  if (n < 5) return fallback();
  let yMin = Number.POSITIVE_INFINITY;
  for (let i = lo; i <= hi; i++) {
    const k = i - lo;
    ws.d[k] = pAu[i]!;
    ws.y[k] = density[i]!;
    const area = areaAu2[i]!;
    ws.w[k] = (area * area) / Math.max(Math.abs(counts[i]!), 1); // var(density) = counts/area²
    yMin = Math.min(yMin, ws.ys[i]!);
  }
  const B0 = Math.max(0, yMin);
  let s0 = 0;
  let s1 = 0;
  for (let i = lo; i <= hi; i++) {
    const v = Math.max(ws.ys[i]! - B0, 0);
    s0 += v;
    s1 += v * (pAu[i]! - pAu[iMax]!) ** 2;
  }
  const sig0 = Math.min(Math.max(s0 > 0 ? Math.sqrt(s1 / s0) : n * dp * 0.25, dp), n * dp);
  const res = levenbergMarquardt(gaussianModel, n, ws.d, ws.y, ws.w, [peak - B0, pAu[iMax]!, sig0, B0], {
    maxIterations: 60,
  });
  const [A, mu, s] = [res.theta[0]!, res.theta[1]!, res.theta[2]!];
  const ok = Number.isFinite(res.chi2) && A > 0 && mu >= pAu[lo]! && mu <= pAu[hi]! && s > dp / 4 && s < 4 * n * dp;
  if (!ok) return fallback();
  return { radiusAu: mu, method: 'gaussian', nearEdge };
}
