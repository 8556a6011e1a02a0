// The calibration bench's computation (C7): one raw frame through the same reducer the server worker uses
// (reduction/pipeline.ts `reduceImage`), at full resolution or on a block-summed copy. Pure TypeScript on typed
// arrays, no DOM and no node: imports: the bench's web worker (bench.worker.ts) and the unit tests call it.
//
// Full resolution (factor 1): the frame, its background and the calibration go to `reduceImage` exactly as the
// reduction job hands them over (lib/jobs/engine.ts), so the numbers are the server's.
// Downsampled (factor f > 1): the pixel corrections that need single pixels are made first at full resolution with
// the reducer's own functions (bad pixels and low-gain pixels excluded, background subtracted with the shot ratio,
// flat field divided out), then f × f blocks are summed; each block is a pixel whose centre is the mean of its
// pixels' centres (`xAxis`/`yAxis` of the copy), so centre, scale, rotation and ellipticity keep their meaning in
// the detector's own pixel units. Excluding a pixel from a count histogram is the same as adding 0 for it.
import { backgroundScale, buildInverseGain, buildPixelMask } from '@/reduction/calibration';
import {
  type AnalysisSettings,
  analysisSettingsSchema,
  type DetectorCalibration,
  detectorCalibrationSchema,
  type ScanMetadata,
  type StepResult,
} from '@/reduction/formats';
import { polarGrid } from '@/reduction/grids';
import { createScanReducer, type StepArrays } from '@/reduction/pipeline';

/** Sub-pixels per axis of the downsampled copy's pixels. */
export const PREVIEW_SUBSAMPLES = 2;

/** Hartree energy in eV (CODATA 2018, SCIENCE.md §1.1). */
export const HARTREE_EV = 27.211386245988;

/** One raw frame as read by the server (lib/bench/raw-frame.ts). */
export interface BenchFrame {
  meta: ScanMetadata;
  step: number;
  counts: Float64Array;
  background: Float64Array | null;
}

export interface BenchRequest {
  calibration: DetectorCalibration;
  settings: AnalysisSettings;
  /** Block size of the copy (1 = full resolution). */
  factor: number;
  /** Keep the bootstrap of the settings (slow); false: no resampling, the errors shown are the fit's. */
  bootstrap: boolean;
}

export interface BenchOutput {
  step: StepResult;
  /** Settings actually used (grid and peak model after follow_data). */
  settings: AnalysisSettings;
  warnings: string[];
  /** Calibrated image on the momentum grid, n × n, [py][px]. */
  image: Float32Array;
  n: number;
  pMaxAu: number;
  thetaDeg: Float64Array;
  angular: Float64Array;
  pAu: Float64Array;
  /** dN/dp, counts per a.u. */
  radial: Float64Array;
  /** Energies of the rings (eV) and dN/dE (counts per eV). */
  energyEv: Float64Array;
  dNdE: Float64Array;
  /** Size of the frame that was reduced. */
  nX: number;
  nY: number;
  factor: number;
}

/** A copy of the frame with f × f blocks summed after the single-pixel corrections. */
export function downsampleFrame(
  frame: BenchFrame,
  calibration: DetectorCalibration,
  factor: number,
): { meta: ScanMetadata; counts: Float64Array; calibration: DetectorCalibration } {
  const f = Math.floor(factor);
  if (!(f >= 2)) throw new RangeError(`factor must be an integer ≥ 2, got ${factor}`);
  const { nX, nY } = frame.meta.shape;
  const nx = Math.floor(nX / f);
  const ny = Math.floor(nY / f);
  if (nx < 8 || ny < 8) throw new RangeError(`a ${nX} × ${nY} frame cannot be reduced ${f} times`);
  const { mask } = buildPixelMask(calibration, nX, nY);
  const invGain = buildInverseGain(calibration, nX, nY);
  const meta = frame.meta;
  let k = 0;
  if (frame.background && calibration.background.subtract) {
    const bg = meta.background;
    const bgShots = bg ? (bg.shots[bg.layout === 'per_step' ? frame.step : 0] ?? 1) : 1;
    k = backgroundScale(calibration, meta.shots[frame.step] ?? 1, bgShots);
  }
  const out = new Float64Array(nx * ny);
  const c = frame.counts;
  const b = frame.background;
  for (let iy = 0; iy < ny * f; iy++) {
    const row = iy * nX;
    const orow = Math.floor(iy / f) * nx;
    for (let ix = 0; ix < nx * f; ix++) {
      const p = row + ix;
      if (mask[p] === 0) continue;
      let v = c[p]!;
      if (k !== 0 && b) v -= k * b[p]!;
      if (invGain) v *= invGain[p]!;
      const o = orow + Math.floor(ix / f);
      out[o] = out[o]! + v;
    }
  }
  const axis = (given: number[] | null, n: number) =>
    Array.from({ length: n }, (_, j) => {
      let s = 0;
      for (let i = j * f; i < (j + 1) * f; i++) s += given ? given[i]! : i;
      return s / f;
    });
  return {
    meta: {
      ...meta,
      shape: { nStep: meta.shape.nStep, nY: ny, nX: nx },
      countsDtype: 'float64',
      xAxis: axis(meta.xAxis, nx),
      yAxis: axis(meta.yAxis, ny),
      background: null,
    },
    counts: out,
    calibration: {
      ...calibration,
      bad_pixels: [],
      flat_field: undefined,
      background: { subtract: false, scale_by: 'none' },
    },
  };
}

/** The factor that brings the larger side of an nX × nY frame to at most `maxSide` (1 when it already fits). */
export function factorFor(nX: number, nY: number, maxSide: number): number {
  return Math.max(1, Math.ceil(Math.max(nX, nY) / maxSide));
}

/**
 * Reduces the frame with the bench's calibration and settings.
 *
 * @throws TypeError/RangeError from the reducer (invalid calibration or settings, bad frame)
 */
export function computeBench(frame: BenchFrame, req: BenchRequest): BenchOutput {
  const calibration = detectorCalibrationSchema.parse(req.calibration);
  const parsed = analysisSettingsSchema.parse(req.settings);
  const settings: AnalysisSettings = req.bootstrap
    ? parsed
    : { ...parsed, bootstrap: { ...parsed.bootstrap, resamples: 0 } };
  const f = Math.floor(req.factor);
  // The step keeps its index in the scan: the bootstrap seed of step i is derived from i (reduction/README.md).
  const d = f <= 1 ? null : downsampleFrame(frame, calibration, f);
  let arrays: StepArrays | null = null;
  const reducer = createScanReducer({
    meta: d ? d.meta : frame.meta,
    calibration: d ? d.calibration : calibration,
    settings,
    onStepArrays: (_k, a) => {
      arrays = a;
    },
    // the copy's pixels are split 2 × 2 (the reducer's default, 2…8 per axis from the pixel size, is for the
    // detector's own pixels): the pixel → bin maps are most of the preview's time
    subsamples: d ? PREVIEW_SUBSAMPLES : undefined,
  });
  const stepResult = reducer.addStep(
    frame.step,
    d ? d.counts : frame.counts,
    d || !calibration.background.subtract ? null : frame.background,
  );
  const { result } = reducer.finish();
  const r = { step: stepResult, result, arrays: arrays as unknown as StepArrays };
  const meta = d ? d.meta : frame.meta;
  const used = r.result.settings;
  const n = used.grid.n;
  const radial = r.arrays.radial;
  const polar = polarGrid(used);
  const pAu = polar.pCentresAu;
  const energyEv = new Float64Array(radial.length);
  const dNdE = new Float64Array(radial.length);
  for (let i = 0; i < radial.length; i++) {
    const p = pAu[i]!;
    energyEv[i] = (p * p * HARTREE_EV) / 2;
    // dN/dE = (dN/dp)/p per hartree; per eV divide by E_h
    dNdE[i] = radial[i]! / p / HARTREE_EV;
  }
  return {
    step: r.step,
    settings: used,
    // the other steps of the scan are not on the bench
    warnings: r.result.warnings.filter((w) => !w.startsWith('Not every step was reduced')),
    image: r.arrays.calibrated,
    n,
    pMaxAu: used.grid.p_max_au,
    thetaDeg: polar.thetaCentresDeg,
    angular: r.arrays.angular,
    pAu,
    radial,
    energyEv,
    dNdE,
    nX: meta.shape.nX,
    nY: meta.shape.nY,
    factor: Math.max(1, f),
  };
}
