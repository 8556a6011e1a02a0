/**
 * Image centre from a symmetry of the momentum distribution (SCIENCE.md §7.2). Only the symmetry that the
 * experiment kind guarantees is offered: point inversion p → −p for single-colour (elliptical or circular) light,
 * the mirror about the polarization axis for parallel linear ω–2ω, and the 120° rotation for bicircular light.
 *
 * Method: for a candidate centre c, every used pixel p is compared with the image at its partner T_c(p) = c + G(p − c),
 * sampled bilinearly, where G = A⁻¹ T_lab A carries the lab-frame symmetry T_lab through the candidate calibration's
 * 2×2 map A (inversion: G = −1 whatever A is). The cost S(c) = Σ_p [I(p) − Ĩ(T_c p)]² / v_p is Poisson-weighted with
 * v_p = max(I(p) + Σ_i w_i² I_i, 1), the counting variance of the difference (w_i the four bilinear weights; using it
 * and not I(p) + Ĩ keeps the expected noise part of S independent of the sub-pixel phase of the partner, so the
 * minimum is not pulled toward half-pixel positions). S is minimised by a Nelder–Mead simplex, then a quadratic
 * surface through S on a 5 × 5 grid of ½-pixel spacing refines the minimum and gives the Hessian H_S.
 *
 * Errors: every pair (or triple) of symmetric pixels enters S two (three) times, so S = 2χ² for the pair symmetries
 * and 1.5χ² for the three-fold one, where χ² is the profile χ² over the unknown symmetric image; hence
 * Cov(c) = f·H_S⁻¹ with f = 4 (inversion, mirror) or 3 (three-fold) (derived here), scaled up by the reduced χ²
 * of the populated pixels when it exceeds 1 (model misfit); checked against the scatter over Poisson realisations
 * in tests/unit/reduction/bench/centre-symmetry.test.ts. A mirror fixes only the coordinate across the axis: the
 * search is one-dimensional along that direction and the centre along the axis stays at the start.
 */
import { calibrationMatrix } from '../calibration';
import type { DetectorCalibration, ExperimentKind } from '../formats';
import { fitParabola } from '../parabola';
import { nelderMead2, quadraticSurface } from './quadratic';
import { type BenchFrame, type BenchToolResult, bilinear, inverse2, requireFrame } from './types';

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
}

export interface CentreValue {
  /** Fitted centre (x0, y0), pixels. */
  x: number;
  y: number;
}

export interface CentreDiagnostics {
  symmetry: CentreSymmetry;
  /** S/n at the minimum (≈ 1 when the image is symmetric to counting noise). */
  chi2PerPixel: number;
  /** S/n over pixels with at least 4 counts of variance (the misfit scale applied to the errors when > 1). */
  chi2PerPopulatedPixel: number;
  populatedPixels: number;
  pixelsUsed: number;
  evaluations: number;
  /** Hessian of S at the minimum, px⁻². */
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
  const sample = { value: 0, variance: 0 };

  /** S(c) and the number of compared pixels; writes residuals when `res` is given. */
  const evaluate = (cx: number, cy: number, res: Float64Array | null): [number, number, number, number] => {
    let s = 0;
    let n = 0;
    let sPop = 0;
    let nPop = 0;
    for (let k = 0; k < idx.length; k++) {
      const i = idx[k]!;
      const ux = (i % nX) - cx;
      const uy = Math.floor(i / nX) - cy;
      const qx = cx + g[0]! * ux + g[1]! * uy;
      const qy = cy + g[2]! * ux + g[3]! * uy;
      if (!bilinear(frame, qx, qy, sample)) continue;
      const c = counts[i]!;
      const raw = Math.abs(c) + sample.variance;
      const v = Math.max(raw, 1);
      const r = c - sample.value;
      s += (r * r) / v;
      n++;
      if (raw >= POPULATED) {
        sPop += (r * r) / v;
        nPop++;
      }
      if (res) res[i] = r / Math.sqrt(v);
    }
    return [s, n, sPop, nPop];
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
  let hess: Float64Array = new Float64Array(4).fill(Number.NaN);
  let hinv: Float64Array | null = null;
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
      hess = Float64Array.of(h * ex * ex, h * ex * ey, h * ex * ey, h * ey * ey);
      // covariance confined to e−: (1/h) e− e−ᵀ
      hinv = Float64Array.of((ex * ex) / h, (ex * ey) / h, (ex * ey) / h, (ey * ey) / h);
    } else {
      warnings.push('The cost has no clear minimum across the axis: the image may not have this mirror symmetry.');
    }
    x = start[0] + t * ex;
    y = start[1] + t * ey;
    warnings.push(
      `A mirror fixes only the centre across the polarization axis; along the axis (direction ${freeDirection[0].toFixed(3)}, ${freeDirection[1].toFixed(3)} in pixels) it stays at the start: take that coordinate from a ring fit or the phase-averaged image.`,
    );
  } else {
    const nm = nelderMead2(cost, start[0], start[1], searchPx, 0.02, 600);
    evaluations = nm.evaluations + 25;
    converged = nm.converged;
    if (!nm.converged) warnings.push('The simplex search did not settle within its budget; the centre may be rough.');
    const quad = quadraticSurface(cost, nm.x, nm.y, 0.5, 2);
    x = nm.x;
    y = nm.y;
    if (quad?.positiveDefinite) {
      hess = quad.hessian;
      hinv = inverse2(hess);
      if (Math.hypot(quad.x - nm.x, quad.y - nm.y) <= 1) {
        x = quad.x;
        y = quad.y;
      } else {
        warnings.push('The cost is not quadratic about the simplex minimum; the centre is the simplex minimum.');
      }
    } else {
      warnings.push('The cost has no clear minimum (flat or saddle-shaped): the image may not have this symmetry.');
    }
  }
  const residual = new Float64Array(nX * nY).fill(Number.NaN);
  const [sMin, nMin, sPop, nPop] = evaluate(x, y, residual);
  const chi2 = sMin / nMin;
  // misfit scale from the pixels where counting noise is near-Gaussian (the floor v ≥ 1 makes sparse pixels count
  // less than 1 each in S, so S/n over all pixels says nothing about misfit)
  const chi2Scale = nPop >= 50 ? sPop / nPop : 1;
  const f = symmetry === 'three-fold' ? 3 : 4;
  const cov = hinv ? hinv.map((v) => v * f * Math.max(chi2Scale, 1) * (nRef / nMin)) : null;
  if (chi2Scale > 1.5) {
    warnings.push(
      `The image differs from its ${symmetry} partner by more than counting noise (χ² per populated pixel ${chi2Scale.toFixed(2)}): a detector background, hot pixels, a wrong calibration or the wrong symmetry; the errors are scaled up by it.`,
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
      hessian: Array.from(hess),
      covariance: cov ? Array.from(cov) : [Number.NaN, Number.NaN, Number.NaN, Number.NaN],
      startPx: [start[0], start[1]],
      converged,
      freeDirection,
    },
    warnings,
  };
}
