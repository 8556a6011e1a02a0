/**
 * Test-only image synthesis from raw detector pixels: a known lab-frame momentum density is pushed through the
 * inverse of a calibration (centre offset, rotation, detector ellipticity, mirror) onto detector pixels, plus a
 * flat background, optionally with Poisson noise. Truth is invented for the tests (Harbor Point test scenario).
 */
import { calibrationMatrix, momentumToPixel, pixelToMomentumAu } from '@/reduction/calibration';
import type { DetectorCalibration, ScanMetadata } from '@/reduction/formats';
import { detectorCalibrationSchema } from '@/reduction/formats';
import type { Prng } from '@/reduction/prng';

export interface LobeTruth {
  angleDeg: number;
  sigmaDeg: number;
  weight: number;
}

export interface ImageTruth {
  nX: number;
  nY: number;
  calibration: DetectorCalibration;
  /** Radius of the ring (peak of the area density), a.u. */
  radiusAu: number;
  radialSigmaAu: number;
  lobes: LobeTruth[];
  /** Expected signal counts in the whole image. */
  signalCounts: number;
  /** Expected flat background counts per pixel. */
  backgroundPerPixel: number;
}

function wrap(d: number): number {
  return d - 360 * Math.floor((d + 180) / 360);
}

/** Unnormalised lab area density at (px, py). */
export function labDensity(t: ImageTruth, px: number, py: number): number {
  const p = Math.hypot(px, py);
  const th = (Math.atan2(py, px) * 180) / Math.PI;
  let ang = 0;
  for (const l of t.lobes) {
    const d = wrap(th - l.angleDeg);
    ang += l.weight * Math.exp((-0.5 * d * d) / (l.sigmaDeg * l.sigmaDeg));
  }
  const r = (p - t.radiusAu) / t.radialSigmaAu;
  return ang * Math.exp(-0.5 * r * r);
}

/** Expected counts per raw pixel (3×3 sub-sampling of the density times the pixel's momentum area). */
export function expectedImage(t: ImageTruth): Float64Array {
  const map = calibrationMatrix(t.calibration);
  const det = Math.abs(map.a[0]! * map.a[3]! - map.a[1]! * map.a[2]!);
  const out = new Float64Array(t.nX * t.nY);
  const q = new Float64Array(2);
  let sum = 0;
  for (let iy = 0; iy < t.nY; iy++) {
    for (let ix = 0; ix < t.nX; ix++) {
      let s = 0;
      for (let a = -1; a <= 1; a++) {
        for (let b = -1; b <= 1; b++) {
          pixelToMomentumAu(map, ix + a / 3, iy + b / 3, q);
          s += labDensity(t, q[0]!, q[1]!);
        }
      }
      const v = (s / 9) * det;
      out[iy * t.nX + ix] = v;
      sum += v;
    }
  }
  const k = t.signalCounts / sum;
  for (let i = 0; i < out.length; i++) out[i] = out[i]! * k + t.backgroundPerPixel;
  return out;
}

/** Poisson realisation of an expected image. */
export function poissonImage(expected: Float64Array, rng: Prng): Float64Array {
  const out = new Float64Array(expected.length);
  for (let i = 0; i < expected.length; i++) out[i] = rng.poisson(expected[i]!);
  return out;
}

/** Pixel position of a lab momentum (for placing features in tests). */
export function labToPixel(cal: DetectorCalibration, px: number, py: number): [number, number] {
  const r = momentumToPixel(calibrationMatrix(cal), px, py);
  return [r[0]!, r[1]!];
}

export function makeCalibration(
  c: Partial<DetectorCalibration> & Pick<DetectorCalibration, 'center_px' | 'momentum_per_pixel_au'>,
): DetectorCalibration {
  return detectorCalibrationSchema.parse(c);
}

/** Scan metadata for synthetic images (fictional Harbor Point Ultrafast Lab run). */
export function makeMeta(o: Partial<ScanMetadata> & { nX: number; nY: number; nStep?: number }): ScanMetadata {
  const nStep = o.nStep ?? 1;
  const { nX, nY, nStep: _n, ...rest } = o;
  return {
    experimentKind: 'angular_streaking',
    startTime: '2026-03-14T09:30:00-04:00',
    title: 'Harbor Point test image',
    target: 'He',
    ionizationEnergyEv: null,
    wavelengthNm: 800,
    ellipticity: 0.87,
    helicity: 1,
    majorAxisAngleDeg: 0,
    fieldRatio: null,
    relativePhaseRad: 0,
    pulseDurationFs: null,
    intensityConvention: 'cycle_averaged_total',
    delaySign: -1,
    detectorDescription: null,
    nominalMomentumPerPixelAu: null,
    shape: { nStep, nY, nX },
    countsIs3d: nStep > 1,
    countsDtype: 'float64',
    step: { quantity: 'index', units: '1', values: Array.from({ length: nStep }, (_, i) => i) },
    shots: Array.from({ length: nStep }, () => 1),
    xAxis: null,
    yAxis: null,
    background: null,
    events: null,
    extraPaths: [],
    ...rest,
  };
}
