/**
 * The scan reducer: streams the steps of a scan through calibration → resampling → analysis chain → Poisson
 * bootstrap → lobe results (FORMATS §4), and for two-colour phase scans through the streaming per-pixel phase
 * analysis. Memory is bounded by the detector size and the grids (N6): per step only the current frame, the two
 * histograms and the phase sums are held; the pixel → bin maps are computed once and reused for every step.
 *
 * Conventions: FORMATS §1–4 and SCIENCE.md §0. Lobe `angle_deg` in (−180°, 180°]; `offset_deg` =
 * s·wrap(angle − expected) with s from §4.6 (null when the helicity is unknown); `transverse_shift_au` =
 * radius·sin(offset); step offset = inverse-variance weighted mean of the lobe offsets (plain mean without errors),
 * its error the bootstrap spread of that same weighted mean; step radius = mean of the lobe radii; intensity from
 * the step radius (§4.3, §5.1) with σ_I = 2 I σ_p / p (I ∝ p²). Errors are one standard deviation of the Poisson
 * bootstrap (null with `bootstrap.resamples` = 0).
 */
import { wrapDeg } from './angles';
import { type BootstrapStats, runPolarBootstrap } from './bootstrap-run';
import { backgroundScale, buildInverseGain, buildPixelMask, calibrationMatrix } from './calibration';
import { calibrationConsistencyWarnings } from './consistency';
import { intensityFromRadiusWcm2, offsetSense, simpleManDirectionsDeg } from './fields';
import {
  type AnalysisSettings,
  analysisSettingsSchema,
  type DetectorCalibration,
  describeIssues,
  detectorCalibrationSchema,
  type LobelineResult,
  type LobeResult,
  type PhaseRegionResult,
  type PhaseResult,
  SCAN_LIMITS,
  type ScanMetadata,
  SOFTWARE_VERSION,
  type StepResult,
} from './formats';
import { cartesianGrid, polarGrid } from './grids';
import { lobeCount } from './lobes';
import { delayToPhaseRad, fourierProjection, poissonWeightedPhaseFit, wholePeriodSampling } from './phase-estimators';
import { createPhaseAccumulator, type PhaseAccumulator, type PhaseMaps } from './phase-maps';
import { DEFAULT_PHASE_REGIONS, regionCells, sumCells } from './regions';
import { applyPixelBinMapKernel, buildPixelBinMaps } from './resample';
import { saturationWarning } from './saturation';
import { analysePolarHistogram, type ChainConfig, type ChainResult, ChainWorkspace } from './step-analysis';
import { requireInteger } from './validate';
import { WarningCollector } from './warnings';

// TYPES //

/** Arrays of one step handed to `onStepArrays` (for the result file, FORMATS §5). */
export interface StepArrays {
  /** Counts per grid cell, grid.n × grid.n, [py][px] row-major. */
  calibrated: Float32Array;
  /** Counts per angular bin in the radial window (bin centres `axes.thetaDeg`). */
  angular: Float64Array;
  /** dN/dp over all angles, counts per a.u. (ring centres `axes.pAu`). */
  radial: Float64Array;
}

export interface ScanReducerOptions {
  meta: ScanMetadata;
  calibration: DetectorCalibration;
  settings: AnalysisSettings;
  sha256?: string | null;
  onStepArrays?: (index: number, arrays: StepArrays) => void;
  /** Sub-pixels per axis for the resampling (1 … 8, default 4). */
  subsamples?: number;
  /**
   * Optional: the frames are histograms on the momentum grid (event files, reduction/events/reduce-events.ts), one
   * virtual pixel per grid cell; only the wording of the pixel warnings changes.
   */
  virtualFrame?: boolean;
}

export interface ReducerAxes {
  pxAu: Float64Array;
  pyAu: Float64Array;
  thetaDeg: Float64Array;
  pAu: Float64Array;
}

export interface ScanReducer {
  axes: ReducerAxes;
  /**
   * Reduces one step.
   * @param index - step index 0 … n_step − 1 (each once, any order)
   * @param counts - raw counts n_y × n_x row-major
   * @param background - background frame for this step (n_y × n_x), or null
   */
  addStep(index: number, counts: ArrayLike<number>, background: ArrayLike<number> | null): StepResult;
  finish(): { result: LobelineResult; phaseMaps: PhaseMaps | null };
}

// VARIABLES //

/** Counts in the radial window below which a step gets the low-counts warning (per lobe). */
const LOW_COUNTS_PER_LOBE = 2000;

const DEG = Math.PI / 180;

// FUNCTIONS //

/**
 * The settings actually used (recorded in the result): with `follow_data.grid`, cells and rings no finer than a
 * detector pixel in momentum (never finer than the given grid); with `follow_data.peak_model`, the von Mises shape.
 */
export function effectiveSettings(s: AnalysisSettings, pixelAu: number): AnalysisSettings {
  const f = s.follow_data;
  if (!f) return s;
  const out: AnalysisSettings = { ...s, grid: { ...s.grid } };
  if (f.grid && pixelAu > 0 && Number.isFinite(pixelAu)) {
    const p = s.grid.p_max_au;
    out.grid.n = Math.max(16, Math.min(s.grid.n, 2 * Math.floor(p / pixelAu) + 1));
    out.radial_bins = Math.max(8, Math.min(s.radial_bins, Math.floor(p / pixelAu)));
  }
  if (f.peak_model) out.peak_model = 'von_mises';
  return out;
}

function parseOrThrow<T>(
  what: 'calibration' | 'settings',
  schema: { safeParse(v: unknown): { success: true; data: T } | { success: false; error: import('zod').ZodError } },
  value: unknown,
): T {
  const r = schema.safeParse(value);
  if (!r.success) throw new TypeError(describeIssues(what, r.error).join('; '));
  return r.data;
}

function validateMeta(meta: ScanMetadata): void {
  const { nStep, nY, nX } = meta.shape;
  requireInteger('meta.shape.nX', nX, 1, SCAN_LIMITS.maxNx);
  requireInteger('meta.shape.nY', nY, 1, SCAN_LIMITS.maxNy);
  requireInteger('meta.shape.nStep', nStep, 1, SCAN_LIMITS.maxSteps);
  if (nStep * nX * nY > SCAN_LIMITS.maxElements) {
    throw new RangeError(`meta.shape: n_step·n_y·n_x must be ≤ 2^31, got ${nStep * nX * nY}`);
  }
  if (meta.step.values.length !== nStep) {
    throw new RangeError(`meta.step.values must have ${nStep} values (n_step), got ${meta.step.values.length}`);
  }
  if (meta.shots.length !== nStep) {
    throw new RangeError(`meta.shots must have ${nStep} values (n_step), got ${meta.shots.length}`);
  }
  if (!(meta.wavelengthNm > 0)) throw new RangeError(`meta.wavelengthNm must be > 0, got ${meta.wavelengthNm}`);
}

/**
 * Default calibration for a file without one: centre of the image, scale from the file's nominal
 * `instrument/detector/momentum_per_pixel`, no rotation, mirror or ellipticity.
 *
 * @param meta - scan metadata
 * @returns a complete calibration
 * @throws {RangeError} when the file has no nominal scale
 */
export function defaultCalibrationFor(meta: ScanMetadata): DetectorCalibration {
  const s = meta.nominalMomentumPerPixelAu;
  if (s === null || !(s > 0)) {
    throw new RangeError(
      'The scan file has no instrument/detector/momentum_per_pixel, so there is no default calibration: ' +
        'give a detector calibration with momentum_per_pixel_au.',
    );
  }
  const { nX, nY } = meta.shape;
  const cx = meta.xAxis && meta.xAxis.length === nX ? (meta.xAxis[0]! + meta.xAxis[nX - 1]!) / 2 : (nX - 1) / 2;
  const cy = meta.yAxis && meta.yAxis.length === nY ? (meta.yAxis[0]! + meta.yAxis[nY - 1]!) / 2 : (nY - 1) / 2;
  return detectorCalibrationSchema.parse({ center_px: [cx, cy], momentum_per_pixel_au: s });
}

/** Phase of the ω–2ω (or bicircular) field at a step, rad. */
function stepPhaseRad(meta: ScanMetadata, index: number): number {
  const v = meta.step.values[index]!;
  if (meta.step.quantity === 'relative_phase') return v;
  if (meta.step.quantity === 'delay') return delayToPhaseRad(v, meta.wavelengthNm, meta.delaySign);
  return meta.relativePhaseRad;
}

function listSteps(steps: number[]): string {
  return steps.length === 1 ? `step ${steps[0]}` : `steps ${steps.join(', ')}`;
}

/**
 * Creates a streaming reducer for one scan.
 *
 * @param options - metadata, calibration, settings, optional checksum and per-step array callback
 * @returns the reducer with its axes
 * @throws {TypeError} for an invalid calibration or settings object (the message lists every problem)
 * @throws {RangeError} for inconsistent metadata
 */
export function createScanReducer(options: ScanReducerOptions): ScanReducer {
  const meta = options.meta;
  validateMeta(meta);
  const calibration = parseOrThrow<DetectorCalibration>('calibration', detectorCalibrationSchema, options.calibration);
  const given = parseOrThrow<AnalysisSettings>('settings', analysisSettingsSchema, options.settings);
  const { nX, nY, nStep } = meta.shape;
  const nPix = nX * nY;
  const kind = meta.experimentKind;
  const warnings = new WarningCollector();

  const calMap = calibrationMatrix(calibration);
  const pixelAu = Math.sqrt(Math.abs(calMap.a[0]! * calMap.a[3]! - calMap.a[1]! * calMap.a[2]!));
  const settings = effectiveSettings(given, pixelAu);
  const { mask, outside, lowGain } = buildPixelMask(calibration, nX, nY);
  const invGain = buildInverseGain(calibration, nX, nY);
  if (outside > 0)
    warnings.global(
      `${outside} bad-pixel entr${outside === 1 ? 'y lies' : 'ies lie'} outside the image and were ignored.`,
    );
  if (lowGain > 0)
    warnings.global(
      `${lowGain} pixel(s) with flat-field gain below ${calibration.flat_field?.min_gain} were excluded.`,
    );
  const cart = cartesianGrid(settings);
  const polar = polarGrid(settings);
  const maps = buildPixelBinMaps({
    nX,
    nY,
    map: calMap,
    cartesian: cart,
    polar,
    mask,
    xAxis: meta.xAxis,
    yAxis: meta.yAxis,
    subsamples: options.subsamples,
  });
  if (pixelAu > polar.dpAu && kind !== 'two_color_phase') {
    warnings.global(
      options.virtualFrame
        ? `The momentum grid cells (${pixelAu.toPrecision(3)} a.u.) are larger than the radial bins (${polar.dpAu.toPrecision(3)} a.u.): neighbouring bins share cells, so the bootstrap errors come out conservative; a finer grid (more grid points) avoids it.`
        : `Detector pixels (${pixelAu.toPrecision(3)} a.u.) are larger than the radial bins (${polar.dpAu.toPrecision(3)} a.u.): neighbouring bins share pixels, so the bootstrap errors come out conservative.`,
    );
  }
  const nLobes = lobeCount(kind, settings.lobes);
  const chainCfg: ChainConfig = {
    polar,
    nLobes,
    window: settings.radial_window_au,
    smoothingDeg: settings.angular_smoothing_deg,
    peakModel: settings.peak_model,
    fitHalfWidthDeg: settings.follow_data?.fit_window ? 'follow' : settings.fit_half_width_deg,
  };
  const ws = new ChainWorkspace(chainCfg);
  const wsBoot = new ChainWorkspace(chainCfg);
  const needsHelicity = kind === 'angular_streaking' || kind === 'bicircular';
  /** Two-colour phase scans have no lobes: no lobe fit, simple-man direction, lobe warnings or bootstrap. */
  const lobesApply = kind !== 'two_color_phase';
  if (needsHelicity && meta.helicity === null) {
    warnings.global('The file gives no helicity, so offset angles are not signed and are left empty.');
  }
  if (calibration.mirror) {
    warnings.global(
      'The calibration mirrors the detector image (det < 0): helicity and offset signs refer to the mirrored frame as the lab frame.',
    );
  }

  // per-step buffers (reused)
  const corrected = new Float64Array(nPix);
  const hPolar = new Float64Array(maps.polar.nBins + 1);
  const hCart = new Float64Array(maps.cartesian.nBins + 1);
  const done = new Map<number, StepResult>();

  // phase analysis
  let phaseAcc: PhaseAccumulator | null = null;
  const regions = settings.phase.regions ?? DEFAULT_PHASE_REGIONS;
  let regionCellLists: Int32Array[] = [];
  let regionYields: Float64Array[] = [];
  const phaseOfStep = new Float64Array(nStep).fill(Number.NaN);
  if (kind === 'two_color_phase') {
    if (meta.step.quantity !== 'relative_phase' && meta.step.quantity !== 'delay') {
      warnings.global(
        `A two-colour phase scan needs steps of relative_phase or delay, but this file scans ${meta.step.quantity}; no phase analysis was done.`,
      );
    } else if (nStep < 3) {
      warnings.global(`The phase analysis needs at least 3 phases, got ${nStep}; no phase analysis was done.`);
    } else {
      // unequal or partial phase steps: the least-squares maps get Poisson weights in low-count cells (§6.2 (b))
      const stepPhases = Array.from({ length: nStep }, (_, i) => stepPhaseRad(meta, i));
      const poisson = wholePeriodSampling(stepPhases).equal ? {} : { poissonHarmonics: 8 };
      phaseAcc = createPhaseAccumulator(cart.n * cart.n, settings.phase.harmonics, poisson);
      regionCellLists = regions.map((r) => regionCells(r, cart));
      regionYields = regions.map(() => new Float64Array(nStep).fill(Number.NaN));
      regionCellLists.forEach((cells, k) => {
        if (cells.length === 0) warnings.global(`Phase region "${regions[k]!.name}" contains no grid cell.`);
      });
    }
  }

  function expectedFor(index: number): { expected: number[]; sense: 1 | -1 } {
    const params = {
      kind,
      majorAxisDeg: meta.majorAxisAngleDeg,
      helicity: meta.helicity,
      fieldRatio: meta.fieldRatio,
      relativePhaseRad: kind === 'bicircular' ? stepPhaseRad(meta, index) : meta.relativePhaseRad,
    };
    return { expected: simpleManDirectionsDeg(params), sense: offsetSense(params) };
  }

  function addStep(index: number, counts: ArrayLike<number>, background: ArrayLike<number> | null): StepResult {
    requireInteger('index', index, 0, nStep - 1);
    if (done.has(index)) throw new RangeError(`step ${index} was already added`);
    if (!(ArrayBuffer.isView(counts) || Array.isArray(counts))) {
      throw new TypeError(`counts must be a typed array of n_y·n_x = ${nPix} values, got ${typeof counts}`);
    }
    if (counts.length !== nPix) {
      throw new RangeError(`counts of step ${index} must have n_y·n_x = ${nPix} values, got ${counts.length}`);
    }
    let k = 0;
    if (background !== null) {
      if (background.length !== nPix) {
        throw new RangeError(`background of step ${index} must have ${nPix} values, got ${background.length}`);
      }
      const bgShots = meta.background
        ? (meta.background.shots[meta.background.layout === 'per_step' ? index : 0] ?? 1)
        : 1;
      k = backgroundScale(calibration, meta.shots[index]!, bgShots);
    } else if (meta.background && calibration.background.subtract && calibration.background.scale_by !== 'none') {
      warnings.add(
        'The file has background frames but none was passed to the reducer, so nothing was subtracted.',
        index,
      );
    }
    // corrections (bad pixels and low gain excluded)
    let negatives = 0;
    let total = 0;
    for (let p = 0; p < nPix; p++) {
      const c = counts[p]!;
      if (!Number.isFinite(c)) {
        throw new RangeError(
          `counts of step ${index} at pixel (x=${p % nX}, y=${Math.floor(p / nX)}) is ${c}; counts must be finite`,
        );
      }
      if (mask[p] === 0) {
        corrected[p] = 0;
        continue;
      }
      if (c < 0) negatives++;
      let v = c;
      if (k !== 0 && background !== null) v -= k * background[p]!;
      if (invGain) v *= invGain[p]!;
      corrected[p] = v;
      total += v;
    }
    const saturated = saturationWarning(counts, meta.countsDtype, mask);
    if (saturated !== null) warnings.add(saturated, index);
    if (negatives > 0)
      warnings.add(`Some raw pixel counts are negative (${negatives} pixels); they were kept as they are.`, index);
    hPolar.fill(0);
    hCart.fill(0);
    applyPixelBinMapKernel(maps.polar, corrected, hPolar);
    applyPixelBinMapKernel(maps.cartesian, corrected, hCart);
    const offGrid = hCart[maps.cartesian.nBins]!;
    if (total > 0 && offGrid / total > 0.01) {
      warnings.add(
        `${((100 * offGrid) / total).toFixed(1)} % of the counts fell outside the momentum grid; raise “Momentum grid half-width” in the analysis settings to keep them.`,
        index,
      );
    }
    const polarBins = hPolar.subarray(0, maps.polar.nBins);
    const { expected, sense } = expectedFor(index);
    const seeds = expected.length === nLobes ? expected : null;
    const chainAll = analysePolarHistogram(polarBins, chainCfg, seeds, ws);
    const chain: ChainResult = lobesApply ? chainAll : { ...chainAll, lobes: [] }; // fills angular and dN/dp only
    const angular = Float64Array.from(ws.angular);
    const radial = Float64Array.from(ws.dNdp);

    // bootstrap
    const B = settings.bootstrap.resamples;
    let boot: BootstrapStats | null = null;
    if (lobesApply && chain.ok && B > 0) {
      const repSeeds = seeds ?? chain.lobes.map((l) => l.angleDeg);
      boot = runPolarBootstrap(polarBins, chainCfg, repSeeds, chain, wsBoot, B, settings.bootstrap.seed, index);
      if (boot.failed / B > 0.1) {
        warnings.add(
          `${boot.failed} of ${B} bootstrap replicates found no usable peak; the errors are less reliable.`,
          index,
        );
      }
    }
    const step = assembleStep(index, total, chain, expected, sense, boot);
    const consistency = {
      kind,
      lobes: step.lobes,
      radiusErrAu: step.radius_err_au,
      angular,
      momentumPerPixelAu: pixelAu,
    };
    for (const w of calibrationConsistencyWarnings({ ...consistency, thetaDeg: polar.thetaCentresDeg }))
      warnings.add(nStep === 1 ? w.detailed : w.sentence, index);

    // warnings of this step
    if (lobesApply && !chain.ok) warnings.add(`No lobe could be found: ${chain.reason}.`, index);
    if (lobesApply && chain.ok && chain.countsInWindow < LOW_COUNTS_PER_LOBE * nLobes) {
      warnings.add(
        `Low counts: fewer than ${LOW_COUNTS_PER_LOBE * nLobes} counts in the radial window, so the lobe angles are poorly determined.`,
        index,
      );
    }
    if (lobesApply && chain.ok && settings.radial_window_au === 'auto' && !chain.windowResolved) {
      warnings.add(
        'The automatic radial window did not reach half the peak of dN/dp on both sides; it stops at the grid edge.',
        index,
      );
    }
    if (chain.ok && chain.jointFitFailure !== null) {
      warnings.add(
        `The joint Poisson fit of the lobes could not be used (${chain.jointFitFailure}), so each lobe was fitted alone; more counts, a wider radial window or an explicit lobes count usually let the joint fit hold.`,
        index,
      );
    }
    chain.lobes.forEach((l, i) => {
      if (l.method === 'parabola_fallback') {
        warnings.add(
          `The peak fit of lobe ${i + 1} fell back to the parabola through the maximum; its angle is less precise. More counts, or a wider fit_half_width_deg (about twice the lobe width), let the fit hold.`,
          index,
        );
      }
      const fit = l.fitSigmaDeg;
      const bs = boot ? boot.angleStd[i] : undefined;
      if (fit !== null && bs !== undefined && Number.isFinite(bs) && bs > 0 && Math.abs(fit / bs - 1) > 0.25) {
        warnings.add(
          `For lobe ${i + 1} the fit-covariance error (${fit.toPrecision(2)}°) and the bootstrap error (${bs.toPrecision(2)}°) differ by more than 25 %: the lobe shape may not fit, the counts may not be Poisson (flat field, background subtraction) or the window is unstable; trust the bootstrap error.`,
          index,
        );
      }
      if (chainCfg.fitHalfWidthDeg !== 'follow' && l.widthDeg !== null && l.widthDeg > settings.fit_half_width_deg) {
        warnings.add(
          `The fitted width of lobe ${i + 1} exceeds the “Fit half-width” of the analysis settings; set it to about twice the lobe width for a stabler width and background.`,
          index,
        );
      }
      if (l.angleNearEdge) warnings.add(`Lobe ${i + 1} lies near the edge of its angular fit window.`, index);
      if (l.radiusNearEdge) warnings.add(`The radius of lobe ${i + 1} lies near the edge of the radial window.`, index);
      if (l.radiusAu === null) warnings.add(`No radius could be found for lobe ${i + 1}.`, index);
    });
    if (chain.ok && seeds === null && expected.length > 0) {
      warnings.add(
        `${nLobes} lobe(s) were searched but the field gives ${expected.length} simple-man directions; each lobe is matched to the nearest one.`,
        index,
      );
    }

    // phase
    if (phaseAcc) {
      const phi = stepPhaseRad(meta, index);
      phaseOfStep[index] = phi;
      const img = hCart.subarray(0, maps.cartesian.nBins);
      phaseAcc.addFrame(img, phi);
      regionCellLists.forEach((cells, r) => {
        regionYields[r]![index] = sumCells(cells, img);
      });
    }
    if (options.onStepArrays) {
      options.onStepArrays(index, {
        calibrated: Float32Array.from(hCart.subarray(0, maps.cartesian.nBins)),
        angular,
        radial,
      });
    }
    done.set(index, step);
    return step;
  }

  /**
   * Systematic σ of a lobe angle from the calibration uncertainties (optional `rotation_err_deg`,
   * `center_err_px`): a rotation error moves every angle by itself; a centre error δ (each coordinate, px) moves a
   * lobe at radius r by δ⊥·scale/r rad. Null when the calibration states neither.
   */
  function lobeSystematicDeg(radiusAu: number | null): number | null {
    const rot = calibration.rotation_err_deg;
    const cen = calibration.center_err_px;
    if (rot === undefined && cen === undefined) return null;
    let v = (rot ?? 0) ** 2;
    if (cen !== undefined && cen > 0) {
      if (radiusAu === null || !(radiusAu > 0)) return null;
      v += ((cen * pixelAu) / radiusAu / DEG) ** 2;
    }
    return Math.sqrt(v);
  }

  /**
   * Systematic σ of the weighted step offset: the rotation error enters once (all lobes move together); the centre
   * error through c = Σ_k w_k (−ê⊥,k) scale/r_k (opposite lobes cancel), σ = center_err_px·|c|.
   */
  function offsetSystematicDeg(anglesDeg: number[], radii: (number | null)[], weights: number[]): number | null {
    const rot = calibration.rotation_err_deg;
    const cen = calibration.center_err_px;
    if (rot === undefined && cen === undefined) return null;
    let v = (rot ?? 0) ** 2;
    if (cen !== undefined && cen > 0) {
      let cx = 0;
      let cy = 0;
      for (let k = 0; k < anglesDeg.length; k++) {
        const r = radii[k];
        if (r === null || r === undefined || !(r > 0)) return null;
        const t = anglesDeg[k]! * DEG;
        cx += (weights[k]! * Math.sin(t) * pixelAu) / r;
        cy -= (weights[k]! * Math.cos(t) * pixelAu) / r;
      }
      v += ((cen * Math.hypot(cx, cy)) / DEG) ** 2;
    }
    return Math.sqrt(v);
  }

  function assembleStep(
    index: number,
    total: number,
    chain: ChainResult,
    expected: number[],
    sense: 1 | -1,
    boot: BootstrapStats | null,
  ): StepResult {
    const signed = !(needsHelicity && meta.helicity === null);
    const lobes: LobeResult[] = [];
    const offsets: number[] = [];
    const offsetErrs: number[] = [];
    const nL = chain.lobes.length;
    const matched: (number | null)[] = chain.lobes.map((l, i) => {
      if (expected.length === 0) return null;
      if (expected.length === nL) return expected[i]!;
      let best = expected[0]!;
      for (const e of expected) if (Math.abs(wrapDeg(l.angleDeg - e)) < Math.abs(wrapDeg(l.angleDeg - best))) best = e;
      return best;
    });
    chain.lobes.forEach((l, i) => {
      const angleErr = boot ? boot.angleStd[i]! : Number.NaN;
      const radiusAu = l.radiusAu;
      const exp = matched[i]!;
      const offset = exp !== null && signed ? sense * wrapDeg(l.angleDeg - exp) : null;
      const errOrNull = Number.isFinite(angleErr) ? angleErr : null;
      if (offset !== null) {
        offsets.push(offset);
        offsetErrs.push(errOrNull ?? Number.NaN);
      }
      lobes.push({
        angle_deg: l.angleDeg,
        angle_err_deg: errOrNull,
        expected_deg: exp,
        offset_deg: offset,
        offset_err_deg: offset !== null ? errOrNull : null,
        radius_au: radiusAu,
        transverse_shift_au:
          offset !== null && radiusAu !== null ? radiusAu * Math.sin((offset * Math.PI) / 180) : null,
        width_deg: l.widthDeg,
        angle_fit_err_deg: l.fitSigmaDeg,
        angle_sys_err_deg: lobeSystematicDeg(radiusAu),
        fit_window_deg: l.windowDeg,
      });
    });
    // step offset: inverse-variance weights when every lobe has an error
    let stepOffset: number | null = null;
    let stepOffsetErr: number | null = null;
    let stepOffsetFitErr: number | null = null;
    let stepOffsetSysErr: number | null = null;
    if (offsets.length > 0) {
      const allErr = offsetErrs.every((e) => Number.isFinite(e) && e > 0);
      const w = offsets.map((_, i) => (allErr ? 1 / offsetErrs[i]! ** 2 : 1));
      const sw = w.reduce((a, b) => a + b, 0);
      stepOffset = offsets.reduce((a, o, i) => a + w[i]! * o, 0) / sw;
      // the lobes with an offset are those with a matched expected direction (all of them when signed)
      const withOffset = chain.lobes.filter((_, i) => matched[i] !== null);
      if (withOffset.length === offsets.length) {
        const fitErrs = withOffset.map((l) => l.fitSigmaDeg);
        if (fitErrs.every((e) => e !== null && Number.isFinite(e))) {
          stepOffsetFitErr = Math.sqrt(fitErrs.reduce((a: number, e, i) => a + (w[i]! / sw) ** 2 * e! ** 2, 0));
        }
        stepOffsetSysErr = offsetSystematicDeg(
          withOffset.map((l) => l.angleDeg),
          withOffset.map((l) => l.radiusAu),
          w.map((x) => x / sw),
        );
      }
      if (boot && allErr) {
        const e = boot.weightedOffsetStd(
          w.map((x) => x / sw),
          matched.filter((m): m is number => m !== null),
          sense,
          chain.lobes.map((l) => l.angleDeg),
        );
        stepOffsetErr = Number.isFinite(e) ? e : null;
      }
    }
    // step radius: mean of the lobe radii
    const radii = chain.lobes.map((l) => l.radiusAu).filter((r): r is number => r !== null && Number.isFinite(r));
    const stepRadius = radii.length > 0 ? radii.reduce((a, b) => a + b, 0) / radii.length : null;
    const stepRadiusErr = boot && stepRadius !== null ? boot.meanRadiusStd : Number.NaN;
    const eps = meta.step.quantity === 'ellipticity' ? meta.step.values[index]! : meta.ellipticity;
    const intensity =
      stepRadius !== null
        ? intensityFromRadiusWcm2({
            kind,
            radiusAu: stepRadius,
            wavelengthNm: meta.wavelengthNm,
            ellipticity: eps,
            fieldRatio: meta.fieldRatio,
            intensityConvention: meta.intensityConvention,
          })
        : null;
    const intensityErr =
      intensity !== null && stepRadius !== null && Number.isFinite(stepRadiusErr)
        ? (2 * intensity * stepRadiusErr) / stepRadius
        : null;
    return {
      index,
      value: meta.step.values[index]!,
      total_counts: total,
      radius_au: stepRadius,
      radius_err_au: Number.isFinite(stepRadiusErr) ? stepRadiusErr : null,
      intensity_from_radius_Wcm2: intensity,
      intensity_from_radius_err_Wcm2: intensityErr,
      lobes,
      offset_deg: stepOffset,
      offset_err_deg: stepOffsetErr,
      offset_fit_err_deg: stepOffsetFitErr,
      offset_sys_err_deg: stepOffsetSysErr,
    };
  }

  function finish(): { result: LobelineResult; phaseMaps: PhaseMaps | null } {
    const indices = [...done.keys()].sort((a, b) => a - b);
    const missing: number[] = [];
    for (let i = 0; i < nStep; i++) if (!done.has(i)) missing.push(i);
    if (missing.length > 0) warnings.global(`Not every step was reduced: ${listSteps(missing)} missing.`);
    let phase: PhaseResult | null = null;
    let phaseMaps: PhaseMaps | null = null;
    if (phaseAcc) {
      if (phaseAcc.phases.length < 3) {
        warnings.global('Fewer than 3 phases were reduced; no phase analysis was done.');
      } else {
        try {
          const r = phaseAcc.finish({ minCounts: settings.phase.min_counts });
          phaseMaps = r.maps;
          if (r.harmonicsUsed < settings.phase.harmonics) {
            warnings.global(
              `The phase sampling resolves only ${r.harmonicsUsed} harmonic(s) of the ${settings.phase.harmonics} asked for.`,
            );
          }
          if (r.masked === phaseAcc.nPixels) {
            warnings.global(
              `Every pixel of the phase maps has a mean below phase.min_counts = ${settings.phase.min_counts} and is masked.`,
            );
          }
          const phases = indices.map((i) => phaseOfStep[i]!);
          const regionResults: PhaseRegionResult[] = regions.map((reg, k) => {
            const y = indices.map((i) => regionYields[k]![i]!);
            const fit =
              r.method === 'fourier' ? fourierProjection(y, phases, 1) : poissonWeightedPhaseFit(y, phases, 1);
            return {
              name: reg.name,
              phase_rad: phases,
              yield: y,
              a0: fit.a0,
              a1: fit.amplitude[0]!,
              phase_of_max_rad: fit.phase[0]!,
              contrast: fit.contrast,
            };
          });
          phase = {
            method: r.method,
            n_phases: r.nPhases,
            periods: wholePeriodSampling(phases).periods,
            phase_offset_rad: 0,
            regions: regionResults,
          };
        } catch (e) {
          warnings.global(`The phase analysis failed: ${(e as Error).message}.`);
        }
      }
    }
    const result: LobelineResult = {
      format: 'lobeline.result',
      version: 1,
      input: {
        sha256: options.sha256 ?? null,
        experiment_kind: kind,
        target: meta.target,
        wavelength_nm: meta.wavelengthNm,
        ellipticity: meta.ellipticity,
        helicity: meta.helicity,
        major_axis_angle_deg: meta.majorAxisAngleDeg,
        field_ratio: meta.fieldRatio,
        shape: meta.countsIs3d ? [nStep, nY, nX] : [nY, nX],
        step_quantity: meta.step.quantity,
        step_units: meta.step.units,
      },
      calibration,
      settings,
      software: { name: 'lobeline', version: SOFTWARE_VERSION },
      steps: indices.map((i) => done.get(i)!),
      phase,
      warnings: warnings.sentences(listSteps),
    };
    return { result, phaseMaps };
  }

  return {
    axes: {
      pxAu: cart.centresAu,
      pyAu: cart.centresAu.slice(),
      thetaDeg: polar.thetaCentresDeg,
      pAu: polar.pCentresAu,
    },
    addStep,
    finish,
  };
}

/**
 * Reduces a single frame (convenience over {@link createScanReducer}).
 *
 * @param o - metadata, calibration, settings, the frame, an optional background and step index (default 0)
 * @returns the result, the step and the step's arrays
 */
export function reduceImage(o: {
  meta: ScanMetadata;
  calibration: DetectorCalibration;
  settings: AnalysisSettings;
  counts: ArrayLike<number>;
  background?: ArrayLike<number> | null;
  stepIndex?: number;
  sha256?: string | null;
}): { result: LobelineResult; step: StepResult; arrays: StepArrays } {
  let arrays: StepArrays | null = null;
  const reducer = createScanReducer({
    meta: o.meta,
    calibration: o.calibration,
    settings: o.settings,
    sha256: o.sha256 ?? null,
    onStepArrays: (_i, a) => {
      arrays = a;
    },
  });
  const step = reducer.addStep(o.stepIndex ?? 0, o.counts, o.background ?? null);
  const { result } = reducer.finish();
  return { result, step, arrays: arrays! };
}
