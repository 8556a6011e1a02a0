/**
 * Circle fit to a ring known to be round on the detector (SCIENCE.md §7.2): Kåsa's algebraic fit [paper: I. Kåsa,
 * IEEE Trans. Instrum. Meas. IM-25, 8 (1976)] refined geometrically by Levenberg–Marquardt on d_i − R
 * (`fitCircleGeometric` in reduction/circle-fit.ts, reused here). Standard errors: the usual least-squares covariance
 * (JᵀJ)⁻¹ s² at the solution, s² = Σ(d_i − R)²/(N − 3) [common practice; the same formula scipy users apply to
 * `least_squares(...).jac`].
 *
 * From an image: the ring's points are the count-weighted mean radius and angle of the counts in each of `sectors`
 * angular sectors of an annulus the analyst marks; the annulus follows the fitted centre for `passes` passes so
 * that a rough start does not cut the ring unevenly.
 */
import { fitCircleGeometric } from '../circle-fit';
import { invertSmall } from '../lm';
import { type BenchFrame, type BenchToolResult, requireFrame } from './types';

// TYPES //

export interface RingPoints {
  /** x coordinates, px. */
  x: ArrayLike<number>;
  /** y coordinates, px. */
  y: ArrayLike<number>;
}

export interface Annulus {
  /** Centre of the annulus (a first guess of the ring centre), px. */
  centrePx: [number, number];
  rMinPx: number;
  rMaxPx: number;
}

export interface RingImageInput {
  frame: BenchFrame;
  annulus: Annulus;
  /** Angular sectors (default 72). */
  sectors?: number;
  /** Passes of "points → fit → re-centre the annulus" (default 3). */
  passes?: number;
}

export interface RingValue {
  x: number;
  y: number;
  r: number;
}

export interface RingDiagnostics {
  points: number;
  /** Angular coverage of the points, degrees (largest gap subtracted from 360°). */
  coverageDeg: number;
  iterations: number;
  converged: boolean;
  /** Covariance of (x, y, r), row-major 3 × 3, px². */
  covariance: number[];
  /** The points used (px), for drawing. */
  pointsX: number[];
  pointsY: number[];
}

export type RingResult = BenchToolResult<
  RingValue,
  RingValue,
  /** Residual curve d_i − R against the point's azimuth (degrees), and its rms. */
  { azimuthDeg: number[]; residualPx: number[]; rms: number },
  RingDiagnostics
>;

// FUNCTIONS //

function isImageInput(input: RingPoints | RingImageInput): input is RingImageInput {
  return (input as RingImageInput).frame !== undefined;
}

/**
 * Points on a ring from an image: per angular sector, the count-weighted mean position of the counts inside the
 * annulus (negative counts are ignored).
 *
 * @param frame - raw frame
 * @param annulus - centre and radii of the annulus, px
 * @param sectors - number of sectors
 * @returns point coordinates, their azimuths (deg) and counts behind each point
 */
export function ringPointsFromImage(
  frame: BenchFrame,
  annulus: Annulus,
  sectors = 72,
): { x: number[]; y: number[]; counts: number[] } {
  const [cx, cy] = annulus.centrePx;
  const { rMinPx, rMaxPx } = annulus;
  if (!(Number.isFinite(cx) && Number.isFinite(cy))) throw new RangeError('the annulus centre must be finite');
  if (!(rMinPx >= 0 && rMaxPx > rMinPx)) throw new RangeError(`need 0 ≤ rMinPx < rMaxPx, got ${rMinPx}, ${rMaxPx}`);
  if (!(Number.isInteger(sectors) && sectors >= 6 && sectors <= 3600)) {
    throw new RangeError(`sectors must be a whole number 6 … 3600, got ${sectors}`);
  }
  const s = new Float64Array(sectors);
  const sx = new Float64Array(sectors);
  const sy = new Float64Array(sectors);
  const { nX, nY, counts, mask } = frame;
  const y0 = Math.max(0, Math.floor(cy - rMaxPx));
  const y1 = Math.min(nY - 1, Math.ceil(cy + rMaxPx));
  const x0 = Math.max(0, Math.floor(cx - rMaxPx));
  const x1 = Math.min(nX - 1, Math.ceil(cx + rMaxPx));
  for (let iy = y0; iy <= y1; iy++) {
    for (let ix = x0; ix <= x1; ix++) {
      const i = iy * nX + ix;
      if (mask && !mask[i]) continue;
      const c = counts[i]!;
      if (!(c > 0)) continue;
      const dx = ix - cx;
      const dy = iy - cy;
      const d = Math.hypot(dx, dy);
      if (d < rMinPx || d > rMaxPx) continue;
      let k = Math.floor(((Math.atan2(dy, dx) + Math.PI) / (2 * Math.PI)) * sectors);
      if (k >= sectors) k = sectors - 1;
      s[k] = s[k]! + c;
      sx[k] = sx[k]! + c * ix;
      sy[k] = sy[k]! + c * iy;
    }
  }
  const x: number[] = [];
  const y: number[] = [];
  const n: number[] = [];
  for (let k = 0; k < sectors; k++) {
    if (s[k]! > 0) {
      x.push(sx[k]! / s[k]!);
      y.push(sy[k]! / s[k]!);
      n.push(s[k]!);
    }
  }
  return { x, y, counts: n };
}

function coverage(az: number[]): number {
  if (az.length < 2) return 0;
  const a = [...az].sort((p, q) => p - q);
  let gap = a[0]! + 360 - a[a.length - 1]!;
  for (let i = 1; i < a.length; i++) gap = Math.max(gap, a[i]! - a[i - 1]!);
  return 360 - gap;
}

/**
 * Fits a circle to points, or to a ring in an image inside an annulus.
 *
 * @param input - points `{ x, y }` (px), or `{ frame, annulus, sectors?, passes? }`
 * @returns centre and radius with standard errors, the residual curve, diagnostics and warnings
 * @throws {RangeError} with fewer than 4 points, collinear points, or a bad annulus
 * @example
 * fitRing({ x: [662.3, 627.206666, 486.252773, 364.578837, 415.881859, 587.3],
 *           y: [498.7, 595.118141, 646.421163, 524.747227, 383.793334, 368.796189] });
 * // value ≈ { x: 512.3, y: 498.7, r: 150 } (SCIENCE.md §7.2)
 */
export function fitRing(input: RingPoints | RingImageInput): RingResult {
  const warnings: string[] = [];
  let px: ArrayLike<number>;
  let py: ArrayLike<number>;
  if (isImageInput(input)) {
    requireFrame(input.frame);
    const passes = input.passes ?? 3;
    if (!(Number.isInteger(passes) && passes >= 1 && passes <= 10)) {
      throw new RangeError(`passes must be 1 … 10, got ${passes}`);
    }
    let annulus = input.annulus;
    let pts = ringPointsFromImage(input.frame, annulus, input.sectors ?? 72);
    for (let pass = 1; pass < passes; pass++) {
      if (pts.x.length < 4) break;
      const c = fitCircleGeometric(pts.x, pts.y);
      annulus = { ...annulus, centrePx: [c.cx, c.cy] };
      pts = ringPointsFromImage(input.frame, annulus, input.sectors ?? 72);
    }
    px = pts.x;
    py = pts.y;
    const low = pts.counts.filter((c) => c < 20).length;
    if (low > 0) warnings.push(`${low} sector(s) hold fewer than 20 counts; their points are noisy.`);
  } else {
    px = input.x;
    py = input.y;
  }
  const N = px.length;
  if (py.length !== N) throw new RangeError(`x and y must have the same length, got ${N} and ${py.length}`);
  if (N < 4) throw new RangeError(`the ring fit needs at least 4 points, got ${N}`);
  for (let i = 0; i < N; i++) {
    if (!(Number.isFinite(px[i]!) && Number.isFinite(py[i]!))) throw new RangeError(`point ${i} is not finite`);
  }
  const fit = fitCircleGeometric(px, py);
  const jtj = new Float64Array(9);
  const az: number[] = [];
  const res: number[] = [];
  let ss = 0;
  for (let i = 0; i < N; i++) {
    const dx = px[i]! - fit.cx;
    const dy = py[i]! - fit.cy;
    const d = Math.hypot(dx, dy);
    const r = d - fit.r;
    ss += r * r;
    az.push((Math.atan2(dy, dx) * 180) / Math.PI);
    res.push(r);
    if (d === 0) continue;
    const j = [-dx / d, -dy / d, -1];
    for (let p = 0; p < 3; p++) for (let q = 0; q < 3; q++) jtj[p * 3 + q] = jtj[p * 3 + q]! + j[p]! * j[q]!;
  }
  const s2 = ss / (N - 3);
  const inv = invertSmall(3, jtj);
  const cov = inv ? Array.from(inv, (v) => v * s2) : new Array<number>(9).fill(Number.NaN);
  const cover = coverage(az);
  if (cover < 180) {
    warnings.push(
      `The points cover only ${cover.toFixed(0)}° of the ring: the centre and radius are strongly correlated.`,
    );
  }
  if (!fit.converged) warnings.push('The geometric refinement did not converge; the result is the last step.');
  return {
    value: { x: fit.cx, y: fit.cy, r: fit.r },
    stdErr: { x: Math.sqrt(cov[0]!), y: Math.sqrt(cov[4]!), r: Math.sqrt(cov[8]!) },
    residual: { azimuthDeg: az, residualPx: res, rms: fit.rms },
    diagnostics: {
      points: N,
      coverageDeg: cover,
      iterations: fit.iterations,
      converged: fit.converged,
      covariance: cov,
      pointsX: Array.from(px),
      pointsY: Array.from(py),
    },
    warnings,
  };
}
