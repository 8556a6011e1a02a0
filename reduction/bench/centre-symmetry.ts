/**
 * Image centre from a symmetry of the momentum distribution (SCIENCE.md §7.2). Only the symmetry that the
 * experiment kind guarantees is offered: point inversion p → −p for single-colour (elliptical or circular) light,
 * the mirror about the polarization axis for parallel linear ω–2ω, and the 120° rotation for bicircular light.
 *
 * Method: for a candidate centre c, every used pixel p is compared with the image at its partner T_c(p) = c + G(p − c),
 * sampled by Catmull–Rom bicubic interpolation (or bilinearly on request), where G = A⁻¹ T_lab A carries the lab-frame
 * symmetry T_lab through the candidate calibration's 2×2 map A (inversion: G = −1 whatever A is). The cost
 * S(c) = Σ_p [I(p) − Ĩ(T_c p)]² / v_p is Poisson-weighted with v_p = max(|I(p)| + Σ_i w_i² |I_i|, 1), the counting
 * variance of the difference (w_i the interpolation weights; using it and not I(p) + Ĩ keeps the expected noise part
 * of S independent of the sub-pixel phase of the partner, so the minimum is not pulled toward half-pixel positions).
 * A Nelder–Mead simplex finds the basin; Newton steps on the analytic gradient ∇S then find the minimum itself (a
 * quadratic surface through S over ±1 px, used before, put its vertex 0.03 px off on 2.6 px-wide rings).
 *
 * Errors (derived here, see scoreStatistics): the centre solves ∇S = 0, so to first order
 * Cov(c) = H⁻¹ Var(∇S) H⁻¹ (sandwich) with ∇S linear in the counts, ∇S = Σ_j a_j I_j, Var(∇S) = Σ_j a_j a_jᵀ |I_j|:
 * a_j collects pixel j as itself and as an interpolation tap of every partner it serves (one partner for a pair
 * symmetry, two rotated ones for the three-fold), so the pairing and the correlation that interpolation puts
 * between neighbouring samples are in it exactly; H = E[∂²S/∂c²] is the Gauss–Newton sum with the counting-noise
 * parts of (∂r/∂c)(∂r/∂c)ᵀ and r ∂²r/∂c² subtracted (their expectation is what makes a curvature from the data too
 * large at low counts per pixel). The fixed factors used before (Cov = 4 H_S⁻¹ pairs, 3 H_S⁻¹ triples) hold only
 * without interpolation and at high counts. The covariance is scaled up by the misfit per populated pixel when it
 * exceeds 1; checked against the scatter over 100 Poisson realisations per symmetry in
 * tests/unit/reduction/bench/centre-symmetry.test.ts. A mirror fixes only the coordinate across the axis: the
 * search is one-dimensional along that direction and the centre along the axis stays at the start.
 */
import { calibrationMatrix } from '../calibration';
import type { DetectorCalibration, ExperimentKind } from '../formats';
import { fitParabola } from '../parabola';
import { nelderMead2 } from './quadratic';
import {
  type BenchFrame,
  type BenchToolResult,
  interpolationStencil,
  inverse2,
  newStencil,
  requireFrame,
} from './types';

// TYPES //

export type CentreSymmetry = 'inversion' | 'mirror' | 'three-fold';

/** The parts of a calibration that shape the symmetry in detector space (the centre itself is what is fitted). */
export type CentreCalibration = Pick<
  DetectorCalibration,
  'momentum_per_pixel_au' | 'rotation_deg' | 'mirror' | 'detector_ellipticity'
>;

export interface CentreOptions {
  symmetry: CentreSymmetry;
  /** When given, the symmetry must be the one valid for this kind (see {@link symmetryForKind}). */
  kind?: ExperimentKind;
  /** Candidate calibration (scale, rotation, mirror, ellipticity); default: none of them. */
  calibration?: CentreCalibration;
  /** Lab azimuth of the polarization axis for the mirror symmetry, degrees (default 0). */
  axisDeg?: number;
  /** Start of the search, pixels (x, y); default: the intensity centroid of the used pixels. */
  startPx?: [number, number];
  /** Only pixels whose distance from the start lies in [rMinPx, rMaxPx] are compared (default 0 … ∞). */
  rMinPx?: number;
  rMaxPx?: number;
  /** Initial simplex size, pixels (default 3). */
  searchPx?: number;
  /**
   * How the partner Ĩ(T p) is sampled: 'bicubic' (Catmull–Rom, 4 × 4 pixels; default) or 'bilinear' (2 × 2; the
   * interpolation offset of narrow rings is several times larger).
   */
  sampling?: 'bicubic' | 'bilinear';
}

export interface CentreValue {
  /** Fitted centre (x0, y0), pixels. */
  x: number;
  y: number;
}

export interface CentreDiagnostics {
  symmetry: CentreSymmetry;
  /**
   * Misfit per pixel Σ(I − Ĩ)² / Σv over the compared pixels, a reduced χ² that is ≈ 1 when the image is symmetric
   * to counting noise at any count level (E[(I − Ĩ)²] = E[v] for Poisson counts; empty pixels add to neither sum).
   */
  chi2PerPixel: number;
  /** The same over pixels with at least 4 counts of variance (the misfit scale applied to the errors when > 1). */
  chi2PerPopulatedPixel: number;
  populatedPixels: number;
  pixelsUsed: number;
  evaluations: number;
  /** Expected Hessian of S at the minimum (Gauss–Newton, counting-noise parts removed), px⁻². */
  hessian: number[];
  /** Covariance of (x, y), px². */
  covariance: number[];
  startPx: [number, number];
  converged: boolean;
  /** Mirror only: the unit direction (pixels) along which the symmetry leaves the centre free; else null. */
  freeDirection: [number, number] | null;
}

export type CentreResult = BenchToolResult<
  CentreValue,
  CentreValue,
  /** Normalised residual (I − Ĩ(T p))/√v per pixel, NaN where not compared. */
  { image: Float64Array; rms: number },
  CentreDiagnostics
>;

// VARIABLES //

/**
 * Counting variance of each pixel: the frame's own `variance` when it carries one (a background-subtracted or
 * flat-fielded frame: raw counts + k² × background, times the gain correction squared), else |counts| (Poisson).
 */
function pixelVariance(frame: BenchFrame): Float64Array {
  if (frame.variance) return Float64Array.from(frame.variance as ArrayLike<number>, (v) => Math.max(0, v));
  return Float64Array.from(frame.counts as ArrayLike<number>, Math.abs);
}

/** Pixels whose difference has at least this counting variance count as populated (near-Gaussian noise). */
const POPULATED = 4;

const KIND_SYMMETRY: Record<ExperimentKind, CentreSymmetry | null> = {
  angular_streaking: 'inversion',
  two_color_phase: 'mirror',
  bicircular: 'three-fold',
  image: null,
};

/** Why each kind has (or has no) symmetry method (SCIENCE.md §7.2), for the page. */
export const SYMMETRY_REASONS: Record<ExperimentKind, string> = {
  angular_streaking:
    'Single-colour elliptical or circular light gives an inversion-symmetric distribution (p → −p about the centre).',
  two_color_phase:
    'Parallel ω–2ω light has no inversion symmetry; only the mirror about the polarization axis holds (never up–down).',
  bicircular: 'Bicircular light is only three-fold symmetric (rotation by 120° about the centre).',
  image:
    'A single image of unknown light has no guaranteed symmetry: use the circle fit to a round ring instead of a symmetry.',
};

// FUNCTIONS //

/**
 * The one symmetry valid for an experiment kind (SCIENCE.md §7.2), or null when no symmetry method is valid.
 *
 * @param kind - experiment kind of the scan
 * @returns the symmetry, or null
 * @example
 * symmetryForKind('bicircular'); // returns 'three-fold'
 */
export function symmetryForKind(kind: ExperimentKind): CentreSymmetry | null {
  if (!(kind in KIND_SYMMETRY)) throw new RangeError(`unknown experiment kind "${kind}"`);
  return KIND_SYMMETRY[kind];
}

/** G = A⁻¹ T A for the symmetry (row-major 2×2). */
function partnerMatrix(symmetry: CentreSymmetry, cal: CentreCalibration | undefined, axisDeg: number): Float64Array {
  if (symmetry === 'inversion') return Float64Array.of(-1, 0, 0, -1);
  let t: Float64Array;
  if (symmetry === 'mirror') {
    const a = (2 * axisDeg * Math.PI) / 180;
    t = Float64Array.of(Math.cos(a), Math.sin(a), Math.sin(a), -Math.cos(a));
  } else {
    const a = (2 * Math.PI) / 3;
    t = Float64Array.of(Math.cos(a), -Math.sin(a), Math.sin(a), Math.cos(a));
  }
  if (!cal) return t;
  const m = calibrationMatrix({
    center_px: [0, 0],
    bad_pixels: [],
    background: { subtract: false, scale_by: 'none' },
    ...cal,
  });
  const { a, inv } = m;
  // T·A
  const ta = Float64Array.of(
    t[0]! * a[0]! + t[1]! * a[2]!,
    t[0]! * a[1]! + t[1]! * a[3]!,
    t[2]! * a[0]! + t[3]! * a[2]!,
    t[2]! * a[1]! + t[3]! * a[3]!,
  );
  return Float64Array.of(
    inv[0]! * ta[0]! + inv[1]! * ta[2]!,
    inv[0]! * ta[1]! + inv[1]! * ta[3]!,
    inv[2]! * ta[0]! + inv[3]! * ta[2]!,
    inv[2]! * ta[1]! + inv[3]! * ta[3]!,
  );
}

/**
 * Finds the centre of an image from the symmetry of its distribution.
 *
 * @param frame - raw frame (background-subtracted or not; a detector background that is not symmetric biases it)
 * @param options - symmetry, optional kind check, calibration, start, annulus
 * @returns centre (x0, y0) with standard errors, the normalised residual image, diagnostics and warnings
 * @throws {RangeError} for a bad frame, a symmetry not valid for `kind`, or fewer than 50 comparable pixels
 */
export function findCentreBySymmetry(frame: BenchFrame, options: CentreOptions): CentreResult {
  requireFrame(frame);
  const { symmetry } = options;
  if (symmetry !== 'inversion' && symmetry !== 'mirror' && symmetry !== 'three-fold') {
    throw new RangeError(`symmetry must be inversion, mirror or three-fold, got "${symmetry}"`);
  }
  if (options.kind !== undefined) {
    const valid = symmetryForKind(options.kind);
    if (valid !== symmetry) {
      throw new RangeError(
        valid === null
          ? `no symmetry method is valid for a "${options.kind}" scan. ${SYMMETRY_REASONS[options.kind]}`
          : `the ${symmetry} symmetry is not valid for a "${options.kind}" scan (use ${valid}). ${SYMMETRY_REASONS[options.kind]}`,
      );
    }
  }
  const axisDeg = options.axisDeg ?? 0;
  if (!Number.isFinite(axisDeg)) throw new RangeError(`axisDeg must be finite, got ${axisDeg}`);
  const g = partnerMatrix(symmetry, options.calibration, axisDeg);
  const { nX, nY, counts, mask } = frame;
  const warnings: string[] = [];

  let start = options.startPx;
  if (start === undefined) {
    let s = 0;
    let sx = 0;
    let sy = 0;
    for (let iy = 0; iy < nY; iy++) {
      for (let ix = 0; ix < nX; ix++) {
        const i = iy * nX + ix;
        if (mask && !mask[i]) continue;
        const c = Math.max(counts[i]!, 0);
        s += c;
        sx += c * ix;
        sy += c * iy;
      }
    }
    start = s > 0 ? [sx / s, sy / s] : [(nX - 1) / 2, (nY - 1) / 2];
  }
  if (!(Number.isFinite(start[0]) && Number.isFinite(start[1]))) throw new RangeError('startPx must be finite');
  const rMin = options.rMinPx ?? 0;
  const rMax = options.rMaxPx ?? Number.POSITIVE_INFINITY;
  if (!(rMin >= 0 && rMax > rMin)) throw new RangeError(`need 0 ≤ rMinPx < rMaxPx, got ${rMin}, ${rMax}`);
  const used: number[] = [];
  for (let iy = 0; iy < nY; iy++) {
    for (let ix = 0; ix < nX; ix++) {
      const i = iy * nX + ix;
      if (mask && !mask[i]) continue;
      const d = Math.hypot(ix - start[0], iy - start[1]);
      if (d >= rMin && d <= rMax) used.push(i);
    }
  }
  const idx = Int32Array.from(used);
  const sampling = options.sampling ?? 'bicubic';
  if (sampling !== 'bicubic' && sampling !== 'bilinear') {
    throw new RangeError(`sampling must be bicubic or bilinear, got "${sampling}"`);
  }
  const order = sampling === 'bicubic' ? 3 : 1;

  /** S(c) and the number of compared pixels; writes residuals when `res` is given. */
  // the cost's inner loop on typed copies (value and variance only; the stencil with derivatives is for the statistics)
  const cnt = Float64Array.from(counts as ArrayLike<number>);
  const acnt = pixelVariance(frame);
  const ok = new Uint8Array(nX * nY).fill(1);
  if (mask) for (let i = 0; i < ok.length; i++) ok[i] = mask[i] ? 1 : 0;
  const wx = new Float64Array(4);
  const wy = new Float64Array(4);
  const sampled = { value: 0, variance: 0 };
  /** Ĩ(q) and Σw²|I| into `sampled`; false outside the frame or next to a masked pixel. */
  const sample = (x: number, y: number): boolean => {
    if (!(x >= 0 && y >= 0 && x <= nX - 1 && y <= nY - 1)) return false;
    let ix = Math.floor(x);
    let iy = Math.floor(y);
    if (ix === nX - 1) ix--;
    if (iy === nY - 1) iy--;
    const fx = x - ix;
    const fy = y - iy;
    if (order === 1) {
      const i00 = iy * nX + ix;
      if (!(ok[i00] && ok[i00 + 1] && ok[i00 + nX] && ok[i00 + nX + 1])) return false;
      const w00 = (1 - fx) * (1 - fy);
      const w10 = fx * (1 - fy);
      const w01 = (1 - fx) * fy;
      const w11 = fx * fy;
      sampled.value = w00 * cnt[i00]! + w10 * cnt[i00 + 1]! + w01 * cnt[i00 + nX]! + w11 * cnt[i00 + nX + 1]!;
      sampled.variance =
        w00 * w00 * acnt[i00]! +
        w10 * w10 * acnt[i00 + 1]! +
        w01 * w01 * acnt[i00 + nX]! +
        w11 * w11 * acnt[i00 + nX + 1]!;
      return true;
    }
    if (ix < 1 || iy < 1 || ix + 2 > nX - 1 || iy + 2 > nY - 1) return false;
    catmullRomWeights(fx, wx);
    catmullRomWeights(fy, wy);
    let value = 0;
    let variance = 0;
    for (let j = 0; j < 4; j++) {
      const row = (iy - 1 + j) * nX + ix - 1;
      const wj = wy[j]!;
      for (let i = 0; i < 4; i++) {
        const p = row + i;
        if (!ok[p]) return false;
        const w = wx[i]! * wj;
        value += w * cnt[p]!;
        variance += w * w * acnt[p]!;
      }
    }
    sampled.value = value;
    sampled.variance = variance;
    return true;
  };

  /** S(c) and the number of compared pixels; writes residuals when `res` is given. */
  const evaluate = (cx: number, cy: number, res: Float64Array | null): [number, number] => {
    let s = 0;
    let n = 0;
    for (let k = 0; k < idx.length; k++) {
      const i = idx[k]!;
      const ux = (i % nX) - cx;
      const uy = Math.floor(i / nX) - cy;
      const qx = cx + g[0]! * ux + g[1]! * uy;
      const qy = cy + g[2]! * ux + g[3]! * uy;
      if (!sample(qx, qy)) continue;
      const c = cnt[i]!;
      const v = Math.max(acnt[i]! + sampled.variance, 1);
      const r = c - sampled.value;
      s += (r * r) / v;
      n++;
      if (res) res[i] = r / Math.sqrt(v);
    }
    return [s, n];
  };
  const minPixels = 50;
  const cost = (cx: number, cy: number): number => {
    const [s, n] = evaluate(cx, cy, null);
    // comparing fewer pixels must not look like a better fit: per-pixel cost scaled to the start's pixel count
    return n >= minPixels ? s * (nRef / n) : Number.POSITIVE_INFINITY;
  };
  const [, nStart] = evaluate(start[0], start[1], null);
  if (nStart < minPixels) {
    throw new RangeError(
      `only ${nStart} pixels have a partner inside the image at the start centre (need ${minPixels}): give a better start or a wider annulus`,
    );
  }
  const nRef = nStart;
  const searchPx = options.searchPx ?? 3;
  if (!(searchPx > 0)) throw new RangeError(`searchPx must be > 0, got ${searchPx}`);
  let x = start[0];
  let y = start[1];
  /** Whether the cost has a clear minimum (positive curvature of the sampled surface or parabola). */
  let hasMinimum = false;
  /** Mirror only: the unit direction across the axis (the one coordinate the symmetry fixes). */
  let across: [number, number] | null = null;
  let evaluations = 0;
  let converged = true;
  let freeDirection: [number, number] | null = null;
  if (symmetry === 'mirror') {
    // A mirror fixes only the coordinate across the axis: search along e−, the −1 eigenvector of G.
    const c0 = [g[0]! - 1, g[2]!];
    const c1 = [g[1]!, g[3]! - 1];
    const pick = Math.hypot(c0[0]!, c0[1]!) >= Math.hypot(c1[0]!, c1[1]!) ? c0 : c1;
    const norm = Math.hypot(pick[0]!, pick[1]!);
    const ex = pick[0]! / norm;
    const ey = pick[1]! / norm;
    // the +1 eigenvector (the axis direction in the detector): (G + I) v
    const d0 = [g[0]! + 1, g[2]!];
    const d1 = [g[1]!, g[3]! + 1];
    const pd = Math.hypot(d0[0]!, d0[1]!) >= Math.hypot(d1[0]!, d1[1]!) ? d0 : d1;
    const pn = Math.hypot(pd[0]!, pd[1]!);
    freeDirection = [pd[0]! / pn, pd[1]! / pn];
    const along = (t: number): number => cost(start[0] + t * ex, start[1] + t * ey);
    const span = Math.ceil(6 * searchPx);
    let bestT = 0;
    let bestC = Number.POSITIVE_INFINITY;
    for (let k = -2 * span; k <= 2 * span; k++) {
      const v = along(k / 2);
      evaluations++;
      if (v < bestC) [bestC, bestT] = [v, k / 2];
    }
    if (Math.abs(bestT) >= span) {
      converged = false;
      warnings.push('The minimum across the axis lies at the edge of the search range; the centre may be rough.');
    }
    const us = [-2, -1, 0, 1, 2].map((k) => bestT + k * 0.5);
    const vs = us.map((u) => along(u));
    evaluations += 5;
    const par = vs.every(Number.isFinite) ? fitParabola(5, us, vs, null) : null;
    let t = bestT;
    if (par && par.c > 0) {
      const h = 2 * par.c;
      if (Math.abs(par.vertex - bestT) <= 1) t = par.vertex;
      hasMinimum = h > 0;
    } else {
      warnings.push('The cost has no clear minimum across the axis: the image may not have this mirror symmetry.');
    }
    if (hasMinimum) {
      // Newton steps on ∂S/∂t = eᵀ∇S from the parabola's vertex (the vertex of a parabola through ±1 px is pulled by
      // the cost's cubic terms and its curvature is not the local one)
      const t0 = t;
      for (let it = 0; it < 12; it++) {
        const q = scoreStatistics(frame, idx, g, order, start[0] + t * ex, start[1] + t * ey);
        const gt = ex * q.gradient[0]! + ey * q.gradient[1]!;
        const h1 = ex * ex * q.hessian[0]! + 2 * ex * ey * q.hessian[1]! + ey * ey * q.hessian[3]!;
        const h2 = ex * ex * q.gaussNewton[0]! + 2 * ex * ey * q.gaussNewton[1]! + ey * ey * q.gaussNewton[3]!;
        const h = h1 > 0 ? h1 : h2;
        if (!(h > 0)) break;
        const step = Math.max(-0.25, Math.min(0.25, -gt / h));
        t += step;
        evaluations++;
        if (Math.abs(step) < 1e-5) break;
      }
      if (Math.abs(t - t0) > 1) t = t0;
    }
    x = start[0] + t * ex;
    y = start[1] + t * ey;
    across = [ex, ey];
    warnings.push(
      `A mirror fixes only the centre across the polarization axis; along the axis (direction ${freeDirection[0].toFixed(3)}, ${freeDirection[1].toFixed(3)} in pixels) it stays at the start: take that coordinate from a ring fit or the phase-averaged image.`,
    );
  } else {
    const nm = nelderMead2(cost, start[0], start[1], searchPx, 0.05, 600);
    evaluations = nm.evaluations;
    converged = nm.converged;
    if (!nm.converged) warnings.push('The simplex search did not settle within its budget; the centre may be rough.');
    x = nm.x;
    y = nm.y;
    // Newton steps on ∇S = 0 from the simplex minimum, with the analytic gradient and expected Hessian of S (see
    // scoreStatistics): the vertex of a quadratic surface through S is pulled by S's cubic terms (0.03 px on 2.6 px
    // wide rings over ±1 px), and its curvature, aliased by the higher terms, shrinks the centre's response to the
    // data (scatter 0.8 of the error)
    for (let it = 0; it < 12; it++) {
      const q = scoreStatistics(frame, idx, g, order, x, y);
      let hinv = positiveDefinite(q.hessian) ? inverse2(q.hessian) : null;
      if (!hinv) hinv = inverse2(q.gaussNewton);
      if (!hinv) break;
      let sx = -(hinv[0]! * q.gradient[0]! + hinv[1]! * q.gradient[1]!);
      let sy = -(hinv[2]! * q.gradient[0]! + hinv[3]! * q.gradient[1]!);
      const len = Math.hypot(sx, sy);
      if (len > 0.25) {
        sx *= 0.25 / len;
        sy *= 0.25 / len;
      }
      x += sx;
      y += sy;
      evaluations++;
      if (len < 1e-5) break;
    }
    if (!(Math.hypot(x - nm.x, y - nm.y) <= 1)) {
      x = nm.x;
      y = nm.y;
      warnings.push('The cost is not smooth about the simplex minimum; the centre is the simplex minimum.');
    }
  }
  const residual = new Float64Array(nX * nY).fill(Number.NaN);
  const [, nMin] = evaluate(x, y, residual);
  const stats = scoreStatistics(frame, idx, g, order, x, y);
  if (!across) {
    hasMinimum = positiveDefinite(stats.hessian);
    if (!hasMinimum) {
      warnings.push('The cost has no clear minimum (flat or saddle-shaped): the image may not have this symmetry.');
    }
  }
  // misfit: Σ(I − Ĩ)² / Σv, for Poisson counts E[(I − Ĩ)²] = E[v] exactly, so ≈ 1 at any count level
  const chi2 = stats.sumV > 0 ? stats.sumR2 / stats.sumV : Number.NaN;
  const chi2Scale = stats.popN >= 50 && stats.popSumV > 0 ? stats.popSumR2 / stats.popSumV : 1;
  // sandwich: Cov = H⁻¹ Var(∇S) H⁻¹ with H = E[∂²S/∂c²] = 2 Σ_p (∂r_p/∂c)(∂r_p/∂c)ᵀ / v_p (the Gauss–Newton form:
  // the noise part of S is flat in c by the choice of v; the curvature of the sampled cost surface is not used,
  // it carries the realisation's noise and, over ±1 px, the fall-off of narrow rings)
  const hgn = stats.hessian;
  const vs = stats.scoreCov;
  let cov: Float64Array | null = null;
  if (hasMinimum && across) {
    const [ex, ey] = across;
    const h = ex * ex * hgn[0]! + 2 * ex * ey * hgn[1]! + ey * ey * hgn[3]!;
    const ve = ex * ex * vs[0]! + 2 * ex * ey * vs[1]! + ey * ey * vs[3]!;
    const varE = h > 0 ? ve / (h * h) : Number.NaN;
    cov = Float64Array.of(varE * ex * ex, varE * ex * ey, varE * ex * ey, varE * ey * ey);
  } else if (hasMinimum) {
    const hinv = inverse2(hgn);
    if (hinv) {
      const t0 = hinv[0]! * vs[0]! + hinv[1]! * vs[2]!;
      const t1 = hinv[0]! * vs[1]! + hinv[1]! * vs[3]!;
      const t2 = hinv[2]! * vs[0]! + hinv[3]! * vs[2]!;
      const t3 = hinv[2]! * vs[1]! + hinv[3]! * vs[3]!;
      cov = Float64Array.of(
        t0 * hinv[0]! + t1 * hinv[2]!,
        t0 * hinv[1]! + t1 * hinv[3]!,
        t2 * hinv[0]! + t3 * hinv[2]!,
        t2 * hinv[1]! + t3 * hinv[3]!,
      );
    }
  }
  if (cov) {
    const k = Math.max(chi2Scale, 1);
    for (let i = 0; i < 4; i++) cov[i] = cov[i]! * k;
  }
  const nPop = stats.popN;
  if (chi2Scale > 1.5) {
    warnings.push(
      `The image differs from its ${symmetry} partner by more than counting noise (χ² per populated pixel ${chi2Scale.toFixed(2)}): a detector background, hot pixels, a wrong calibration or the wrong symmetry; the errors are scaled up by it.`,
    );
  }
  let negative = 0;
  for (let k = 0; k < idx.length; k++) if (cnt[idx[k]!]! < 0) negative++;
  if (!frame.variance && negative > 0.01 * idx.length) {
    warnings.push(
      `${negative} compared pixels are negative (a background-subtracted frame): the errors assume counting noise |I| per pixel, which is too small where a background was subtracted, so they are lower bounds and a background that is not symmetric moves the centre.`,
    );
  }
  const moved = Math.hypot(x - start[0], y - start[1]);
  if (moved > 10 * searchPx) {
    warnings.push(`The centre moved ${moved.toFixed(1)} px from the start; check it is not a different feature.`);
  }
  let rss = 0;
  for (let k = 0; k < idx.length; k++) {
    const v = residual[idx[k]!]!;
    if (Number.isFinite(v)) rss += v * v;
  }
  return {
    value: { x, y },
    stdErr: { x: cov ? Math.sqrt(cov[0]!) : Number.NaN, y: cov ? Math.sqrt(cov[3]!) : Number.NaN },
    residual: { image: residual, rms: Math.sqrt(rss / Math.max(nMin, 1)) },
    diagnostics: {
      symmetry,
      chi2PerPixel: chi2,
      chi2PerPopulatedPixel: chi2Scale,
      populatedPixels: nPop,
      pixelsUsed: nMin,
      evaluations,
      hessian: Array.from(hgn),
      covariance: cov ? Array.from(cov) : [Number.NaN, Number.NaN, Number.NaN, Number.NaN],
      startPx: [start[0], start[1]],
      converged,
      freeDirection,
    },
    warnings,
  };
}

function positiveDefinite(h: ArrayLike<number>): boolean {
  return h[0]! > 0 && h[0]! * h[3]! - h[1]! * h[2]! > 0;
}

/** Catmull–Rom weights of the samples at −1, 0, 1, 2 for a phase t ∈ [0, 1] (as in {@link interpolationStencil}). */
function catmullRomWeights(t: number, w: Float64Array): void {
  const t2 = t * t;
  const t3 = t2 * t;
  w[0] = 0.5 * (-t3 + 2 * t2 - t);
  w[1] = 0.5 * (3 * t3 - 5 * t2 + 2);
  w[2] = 0.5 * (-3 * t3 + 4 * t2 + t);
  w[3] = 0.5 * (t3 - t2);
}

/**
 * Counting statistics of S at a centre: the covariance of its gradient ∇S = Σ_p 2 r_p ∂r_p/∂c / v_p under Poisson
 * noise, and the misfit sums. ∇S is linear in the counts through r_p = I_p − Σ_j w_pj I_j (first order, v_p and
 * ∂r_p/∂c held at their values): ∇S = Σ_j a_j I_j with a_j = Σ_p (2 ∂r_p/∂c / v_p)(δ_jp − w_pj), so
 * Var(∇S) = Σ_j a_j a_jᵀ Var(I_j), Var(I_j) = |I_j|. Every pixel enters as itself and as a tap of the partners of
 * the pixels it is a partner of (two for a pair symmetry, two rotations for the three-fold one), with its
 * interpolation weights: this is what makes the errors honest where a fixed factor on the curvature is not.
 */
function scoreStatistics(
  frame: BenchFrame,
  idx: Int32Array,
  g: Float64Array,
  order: 1 | 3,
  cx: number,
  cy: number,
): {
  scoreCov: Float64Array;
  hessian: Float64Array;
  gaussNewton: Float64Array;
  gradient: Float64Array;
  sumR2: number;
  sumV: number;
  popSumR2: number;
  popSumV: number;
  popN: number;
} {
  const { nX, nY, counts } = frame;
  const pv = pixelVariance(frame);
  const ax = new Float64Array(nX * nY);
  const ay = new Float64Array(nX * nY);
  const st = newStencil();
  // ∂(T p)/∂c = 1 − G
  const m0 = 1 - g[0]!;
  const m1 = -g[1]!;
  const m2 = -g[2]!;
  const m3 = 1 - g[3]!;
  let sumR2 = 0;
  let sumV = 0;
  let popSumR2 = 0;
  let popSumV = 0;
  let popN = 0;
  let hxx = 0;
  let hxy = 0;
  let hyy = 0;
  let extraXX = 0;
  let extraXY = 0;
  let extraYY = 0;
  let gnXX = 0;
  let gnXY = 0;
  let gnYY = 0;
  let gradX = 0;
  let gradY = 0;
  for (let k = 0; k < idx.length; k++) {
    const i = idx[k]!;
    const ux = (i % nX) - cx;
    const uy = Math.floor(i / nX) - cy;
    const qx = cx + g[0]! * ux + g[1]! * uy;
    const qy = cy + g[2]! * ux + g[3]! * uy;
    if (!interpolationStencil(frame, qx, qy, order, st)) continue;
    let value = 0;
    let variance = 0;
    let gx = 0;
    let gy = 0;
    // counting covariance of ∇Ĩ, and ½∇(Σ w² I) (the change of the partner's variance with its position)
    let cxx = 0;
    let cxy = 0;
    let cyy = 0;
    let wx = 0;
    let wy = 0;
    // ∇∇Ĩ and its counting covariance with Ĩ (Σ w ∇∇w |I|)
    let qxx = 0;
    let qxy = 0;
    let qyy = 0;
    let nxx = 0;
    let nxy = 0;
    let nyy = 0;
    for (let t = 0; t < st.n; t++) {
      const c = counts[st.index[t]!]!;
      const a = pv[st.index[t]!]!;
      const w = st.weight[t]!;
      const ddx = st.dx[t]!;
      const ddy = st.dy[t]!;
      value += w * c;
      variance += w * w * a;
      gx += ddx * c;
      gy += ddy * c;
      cxx += ddx * ddx * a;
      cxy += ddx * ddy * a;
      cyy += ddy * ddy * a;
      wx += w * ddx * a;
      wy += w * ddy * a;
      const exx = st.dxx[t]!;
      const exy = st.dxy[t]!;
      const eyy = st.dyy[t]!;
      qxx += exx * c;
      qxy += exy * c;
      qyy += eyy * c;
      nxx += w * exx * a;
      nxy += w * exy * a;
      nyy += w * eyy * a;
    }
    const c = counts[i]!;
    const raw = pv[i]! + variance;
    const v = Math.max(raw, 1);
    const r = c - value;
    sumR2 += r * r;
    sumV += raw;
    if (raw >= POPULATED) {
      popSumR2 += r * r;
      popSumV += raw;
      popN++;
    }
    // ∂r/∂c = −(1 − G)ᵀ ∇Ĩ
    const dx = -(m0 * gx + m2 * gy);
    const dy = -(m1 * gx + m3 * gy);
    const sx = (2 * dx) / v;
    const sy = (2 * dy) / v;
    // E[d dᵀ] = d̄ d̄ᵀ + Cov(d), Cov(d) = (1 − G)ᵀ Cov(∇Ĩ) (1 − G): the noise part is taken off the curvature
    const kxx = m0 * m0 * cxx + 2 * m0 * m2 * cxy + m2 * m2 * cyy;
    const kxy = m0 * m1 * cxx + (m0 * m3 + m1 * m2) * cxy + m2 * m3 * cyy;
    const kyy = m1 * m1 * cxx + 2 * m1 * m3 * cxy + m3 * m3 * cyy;
    // r ∂²r/∂c∂cᵀ with ∂²r = −Mᵀ ∇∇Ĩ M (M = 1 − G), less its counting expectation +Mᵀ (Σ w ∇∇w |I|) M
    const bxx = r * qxx + nxx;
    const bxy = r * qxy + nxy;
    const byy = r * qyy + nyy;
    const uxx = m0 * m0 * bxx + 2 * m0 * m2 * bxy + m2 * m2 * byy;
    const uxy = m0 * m1 * bxx + (m0 * m3 + m1 * m2) * bxy + m2 * m3 * byy;
    const uyy = m1 * m1 * bxx + 2 * m1 * m3 * bxy + m3 * m3 * byy;
    gnXX += sx * dx;
    gnXY += sx * dy;
    gnYY += sy * dy;
    hxx += sx * dx - (2 * kxx + 2 * uxx) / v;
    hxy += sx * dy - (2 * kxy + 2 * uxy) / v;
    hyy += sy * dy - (2 * kyy + 2 * uyy) / v;
    gradX += sx * r;
    gradY += sy * r;
    if (raw >= 1) {
      // ∂v/∂c = 2 (1 − G)ᵀ Σ w ∇w |I|; the term −r² ∂v/∂c / v² of ∇S adds Var(r²)(∂v)²/v⁴ = 2 (∂v)²/v²
      const vx = 2 * (m0 * wx + m2 * wy);
      const vy = 2 * (m1 * wx + m3 * wy);
      gradX -= (r * r * vx) / (v * v);
      gradY -= (r * r * vy) / (v * v);
      extraXX += (2 * vx * vx) / (v * v);
      extraXY += (2 * vx * vy) / (v * v);
      extraYY += (2 * vy * vy) / (v * v);
    }
    ax[i] = ax[i]! + sx;
    ay[i] = ay[i]! + sy;
    for (let t = 0; t < st.n; t++) {
      const j = st.index[t]!;
      const w = st.weight[t]!;
      ax[j] = ax[j]! - sx * w;
      ay[j] = ay[j]! - sy * w;
    }
  }
  let vxx = 0;
  let vxy = 0;
  let vyy = 0;
  for (let j = 0; j < ax.length; j++) {
    const x = ax[j]!;
    const y = ay[j]!;
    if (x === 0 && y === 0) continue;
    const c = pv[j]!;
    vxx += x * x * c;
    vxy += x * y * c;
    vyy += y * y * c;
  }
  return {
    scoreCov: Float64Array.of(vxx + extraXX, vxy + extraXY, vxy + extraXY, vyy + extraYY),
    hessian: Float64Array.of(hxx, hxy, hxy, hyy),
    gaussNewton: Float64Array.of(gnXX, gnXY, gnXY, gnYY),
    gradient: Float64Array.of(gradX, gradY),
    sumR2,
    sumV,
    popSumR2,
    popSumV,
    popN,
  };
}
