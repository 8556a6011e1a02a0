/**
 * Detector rotation from a reference image taken with linear polarization at a known lab angle (SCIENCE.md §7.3):
 * the lobes of linear light lie along the polarization axis, so the two-fold harmonic direction of the counts
 * (SCIENCE.md §9.1 item 3, n = 2) in the mirror- and ellipticity-corrected detector frame gives the axis θ_det, and
 * the calibration's rotation is β = wrap₁₈₀(θ_lab − θ_det). Per-pixel Poisson error propagation of
 * θ = ½ atan2(S, C), S = Σ c_i sin 2φ_i, C = Σ c_i cos 2φ_i: σ_θ² = ¼ Σ c_i (C sin 2φ_i − S cos 2φ_i)² / (C² + S²)²
 * [derived]. A flat background adds nothing to S or C on average, only noise (which the formula includes).
 */
import { calibrationMatrix } from '../calibration';
import type { CentreCalibration } from './centre-symmetry';
import { type BenchFrame, type BenchToolResult, requireFrame } from './types';

// TYPES //

export interface RotationOptions {
  /** Candidate calibration: its mirror and ellipticity are undone first (its rotation is what is fitted). */
  calibration?: CentreCalibration;
  /** Lab azimuth of the polarization axis of the reference scan, degrees (default 0). */
  labAxisDeg?: number;
  /** Radial window about the centre (ellipticity-corrected px), default 0 … ∞. */
  rMinPx?: number;
  rMaxPx?: number;
  /** Angular bins of the residual curve (default 72). */
  bins?: number;
}

export type RotationResult = BenchToolResult<
  {
    /** β, degrees in (−90, 90]: the calibration's `rotation_deg`. */
    rotationDeg: number;
    /** Axis of the lobes in the corrected detector frame, degrees in (−90, 90]. */
    detectorAxisDeg: number;
  },
  { rotationDeg: number; detectorAxisDeg: number },
  /** Angular distribution (counts per bin, bin centres in degrees) minus its two-fold model a₀(1 + m cos 2(φ − θ)). */
  { angleDeg: number[]; counts: number[]; model: number[]; residual: number[]; rms: number },
  { counts: number; modulation: number; labAxisDeg: number }
>;

// FUNCTIONS //

function wrap180(d: number): number {
  let a = d % 180;
  if (a <= -90) a += 180;
  if (a > 90) a -= 180;
  return a;
}

/**
 * Fits the detector rotation from a linear-polarization reference image.
 *
 * @param frame - reference frame (background-subtracted or not)
 * @param centrePx - image centre (x0, y0), px
 * @param options - calibration, lab axis, radial window
 * @returns β and the detector axis with standard errors, the angular residual, diagnostics and warnings
 * @throws {RangeError} for a bad frame or window, or an image without counts in the window
 */
export function fitRotationFromReference(
  frame: BenchFrame,
  centrePx: [number, number],
  options: RotationOptions = {},
): RotationResult {
  requireFrame(frame);
  const [cx, cy] = centrePx;
  if (!(Number.isFinite(cx) && Number.isFinite(cy))) throw new RangeError('the centre must be finite');
  const lab = options.labAxisDeg ?? 0;
  if (!Number.isFinite(lab)) throw new RangeError('labAxisDeg must be finite');
  const rMin = options.rMinPx ?? 0;
  const rMax = options.rMaxPx ?? Number.POSITIVE_INFINITY;
  if (!(rMin >= 0 && rMax > rMin)) throw new RangeError(`need 0 ≤ rMinPx < rMaxPx, got ${rMin}, ${rMax}`);
  const bins = options.bins ?? 72;
  if (!(Number.isInteger(bins) && bins >= 8 && bins <= 3600)) throw new RangeError('bins must be 8 … 3600');
  let m = Float64Array.of(1, 0, 0, 1);
  if (options.calibration) {
    const c = options.calibration;
    const map = calibrationMatrix({
      center_px: [0, 0],
      bad_pixels: [],
      background: { subtract: false, scale_by: 'none' },
      ...c,
      rotation_deg: 0,
    });
    m = map.a.map((v) => v / c.momentum_per_pixel_au);
  }
  const { nX, nY, counts, mask } = frame;
  const n = nX * nY;
  // per pixel: the mean of cos 2φ and sin 2φ over SUB × SUB sub-pixels (so that the square grid does not bias the
  // two-fold direction) and the pixel's azimuth for the residual curve
  const SUB = 4;
  const ac = new Float64Array(n).fill(Number.NaN);
  const as = new Float64Array(n);
  const phi = new Float64Array(n);
  let C = 0;
  let S = 0;
  let total = 0;
  for (let iy = 0; iy < nY; iy++) {
    for (let ix = 0; ix < nX; ix++) {
      const i = iy * nX + ix;
      if (mask && !mask[i]) continue;
      let sc = 0;
      let ss = 0;
      let inside = 0;
      for (let a = 0; a < SUB; a++) {
        for (let b = 0; b < SUB; b++) {
          const ux = ix - cx + (a + 0.5) / SUB - 0.5;
          const uy = iy - cy + (b + 0.5) / SUB - 0.5;
          const vx = m[0]! * ux + m[1]! * uy;
          const vy = m[2]! * ux + m[3]! * uy;
          const r2 = vx * vx + vy * vy;
          if (r2 < rMin * rMin || r2 > rMax * rMax || r2 === 0) continue;
          // cos 2φ = (x² − y²)/r², sin 2φ = 2xy/r²
          sc += (vx * vx - vy * vy) / r2;
          ss += (2 * vx * vy) / r2;
          inside++;
        }
      }
      if (inside === 0) continue;
      const w = inside / (SUB * SUB);
      const c = counts[i]! * w;
      ac[i] = sc / inside;
      as[i] = ss / inside;
      const ux = ix - cx;
      const uy = iy - cy;
      phi[i] = Math.atan2(m[2]! * ux + m[3]! * uy, m[0]! * ux + m[1]! * uy);
      C += c * ac[i]!;
      S += c * as[i]!;
      total += c;
    }
  }
  if (!(total > 0)) throw new RangeError('the image has no counts inside the radial window');
  const R2 = C * C + S * S;
  let v = 0;
  const hist = new Float64Array(bins);
  for (let i = 0; i < n; i++) {
    if (Number.isNaN(ac[i]!)) continue;
    const a = phi[i]!;
    const c = counts[i]!;
    const d = C * as[i]! - S * ac[i]!;
    v += Math.abs(c) * d * d;
    let k = Math.floor(((a + Math.PI) / (2 * Math.PI)) * bins);
    if (k >= bins) k = bins - 1;
    hist[k] = hist[k]! + c;
  }
  const thetaRad = 0.5 * Math.atan2(S, C);
  const errRad = R2 > 0 ? (0.5 * Math.sqrt(v)) / R2 : Number.NaN;
  const detAxis = wrap180((thetaRad * 180) / Math.PI);
  const errDeg = (errRad * 180) / Math.PI;
  const modulation = (2 * Math.sqrt(R2)) / total;
  const a0 = total / bins;
  const angleDeg: number[] = [];
  const model: number[] = [];
  const residual: number[] = [];
  let ss = 0;
  for (let k = 0; k < bins; k++) {
    const ang = -180 + ((k + 0.5) * 360) / bins;
    const mod = a0 * (1 + modulation * Math.cos(2 * ((ang * Math.PI) / 180 - thetaRad)));
    angleDeg.push(ang);
    model.push(mod);
    residual.push(hist[k]! - mod);
    ss += (hist[k]! - mod) ** 2;
  }
  const warnings: string[] = [];
  if (modulation < 0.05) {
    warnings.push(
      `The image is nearly isotropic in angle (two-fold modulation ${modulation.toFixed(3)}): is it a linear-polarization reference?`,
    );
  }
  warnings.push(
    'The axis is defined modulo 180°: a reference with lobes along the polarization fixes the rotation only within (−90°, 90°].',
  );
  return {
    value: { rotationDeg: wrap180(lab - detAxis), detectorAxisDeg: detAxis },
    stdErr: { rotationDeg: errDeg, detectorAxisDeg: errDeg },
    residual: { angleDeg, counts: Array.from(hist), model, residual, rms: Math.sqrt(ss / bins) },
    diagnostics: { counts: total, modulation, labAxisDeg: lab },
    warnings,
  };
}
