/**
 * Event scans through the image reducer (FORMATS §1.1, §3; SCIENCE.md §7.7–7.8, §9.2).
 *
 * Per step the events are converted chunk by chunk (kinematics.ts: t₀, detector centre, single region or
 * Wiley–McLaren drift, magnetic field, node margin), gated along the laser axis and counted on the Cartesian
 * momentum grid of the settings. That histogram is then handed to the unchanged image reducer as a "virtual frame":
 * one virtual pixel per grid cell, on a calibration whose centre is the grid centre, scale one cell, no rotation,
 * mirror or ellipticity, so pixel ix of the frame is exactly cell ix of the grid. Lobes, offsets, radius, intensity,
 * phase maps and the Poisson bootstrap then run as for images.
 *
 * Jacobians (§7.8): every event is converted to its own momentum and counted once, so the Cartesian cells (equal
 * areas Δu·Δv) hold counts with no Jacobian; the reducer's polar re-binning turns them into counts per (p, θ) cell
 * and into the area density counts/(p Δp Δθ) where a density is needed. The component along the laser is gated,
 * not integrated over, when `events.gate_au` is given (§7.8, attoclock images are the polarization plane).
 *
 * Bootstrap (§9.2): Poisson resampling of the histogram bins, the binned equivalent of resampling the events with
 * replacement; the bins of a virtual frame are independent Poisson counts, which is what the bootstrap assumes.
 *
 * Chunking: counting is in float64, exact for integers below 2⁵³, so any chunking gives the same histogram as one
 * pass over the whole step (tests/unit/events/reduce-events.test.ts).
 */
import {
  type AnalysisSettings,
  type AnyCalibration,
  analysisSettingsSchema,
  DEFAULT_EVENT_SETTINGS,
  type DetectorCalibration,
  detectorCalibrationSchema,
  type EventResultInfo,
  type EventSettings,
  type EventStepTally,
  type LobelineResult,
  type ScanMetadata,
  type StepResult,
} from '../formats';
import { type CartesianGrid, cartesianGrid } from '../grids';
import { createScanReducer, type ReducerAxes, type StepArrays } from '../pipeline';
import { WarningCollector } from '../warnings';
import {
  addTally,
  auToNs,
  cyclotronPeriodAu,
  type EventConversion,
  type EventTally,
  emptyTally,
  histogramEvents,
  NODE_FRACTION,
  type SpectrometerSi,
  spectrometerAu,
} from './kinematics';

// TYPES //

/** One chunk of events in the file's units (mm, mm, ns). */
export interface EventArrays {
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  tof: ArrayLike<number>;
}

export interface EventReducerOptions {
  /** Scan metadata of the event file (steps, shots, kind, source); its shape's n_y × n_x is not used. */
  meta: ScanMetadata;
  /** Spectrometer values used (the reader's: file values with the calibration's over them). */
  spectrometer: SpectrometerSi;
  /** Where each spectrometer value came from (recorded in the result). */
  spectrometerSource?: Record<string, 'file' | 'calibration' | 'default'>;
  /** The calibration version chosen (recorded in the result; only its `spectrometer` applies to events). */
  calibration: AnyCalibration;
  settings: AnalysisSettings;
  sha256?: string | null;
  onStepArrays?: (index: number, arrays: StepArrays) => void;
}

export interface EventReducer {
  axes: ReducerAxes;
  grid: CartesianGrid;
  /** Event settings used (defaults completed). */
  eventSettings: EventSettings;
  /** Counts a chunk of step `index` into that step's histogram (steps may be filled in any order). */
  addChunk(index: number, chunk: EventArrays): EventTally;
  /**
   * Adds a partial histogram of step `index` made elsewhere (e.g. by another process from a range of the step's
   * events with `histogramChunk`), with its tally. Sums of integer counts in float64 are exact, so any split and any
   * order of merging give the one-pass histogram.
   */
  addHistogram(index: number, hist: Float64Array, tally: EventTally): void;
  /** Hands step `index`'s histogram to the image reducer and frees it. */
  finishStep(index: number): StepResult;
  /** Histogram of a step not yet finished (read-only view; for tests and merging). */
  histogram(index: number): Float64Array;
  finish(): { result: LobelineResult; phaseMaps: import('../phase-maps').PhaseMaps | null };
}

// FUNCTIONS //

/** Event settings of an analysis settings object, with the defaults of FORMATS §3. */
export function eventSettingsOf(settings: AnalysisSettings): EventSettings {
  return settings.events ?? { ...DEFAULT_EVENT_SETTINGS };
}

/** The conversion of a spectrometer and event settings (kinematics.ts). */
export function eventConversion(spectrometer: SpectrometerSi, ev: EventSettings): EventConversion {
  return {
    spectrometer: spectrometerAu(spectrometer),
    laserAxis: ev.laser_axis,
    gateAu: ev.gate_au === null ? null : ev.gate_au.range,
  };
}

/**
 * The histogram of one chunk on its own (the work of one chunk of a split file), on the grid of `settings`.
 *
 * @returns the chunk's counts per cell and what became of its events
 */
export function histogramChunk(
  chunk: EventArrays,
  spectrometer: SpectrometerSi,
  settings: AnalysisSettings,
): { hist: Float64Array; tally: EventTally } {
  const grid = cartesianGrid(settings);
  const hist = new Float64Array(grid.n * grid.n);
  const tally = histogramEvents(
    chunk.x,
    chunk.y,
    chunk.tof,
    eventConversion(spectrometer, eventSettingsOf(settings)),
    grid,
    hist,
  );
  return { hist, tally };
}

/**
 * The virtual-frame calibration of a grid: pixel (ix, iy) ↦ cell centre (c_ix, c_iy).
 *
 * @param grid - the Cartesian grid of the settings
 */
export function virtualCalibration(grid: CartesianGrid): DetectorCalibration {
  const c = (grid.n - 1) / 2;
  return detectorCalibrationSchema.parse({ center_px: [c, c], momentum_per_pixel_au: grid.stepAu });
}

/**
 * Creates the reducer of one event scan.
 *
 * @throws {TypeError} for invalid calibration or settings (from the image reducer)
 */
export function createEventReducer(options: EventReducerOptions): EventReducer {
  const given = analysisSettingsSchema.parse(options.settings);
  const ev = eventSettingsOf(given);
  // The grid is the user's: there is no detector pixel for it to follow.
  const settings: AnalysisSettings = {
    ...given,
    follow_data: { ...(given.follow_data ?? { fit_window: false, peak_model: false }), grid: false },
  };
  const grid = cartesianGrid(settings);
  const n = grid.n;
  const nStep = options.meta.shape.nStep;
  const virtualMeta: ScanMetadata = {
    ...options.meta,
    shape: { nStep, nY: n, nX: n },
    countsIs3d: nStep > 1,
    countsDtype: 'float64',
    xAxis: null,
    yAxis: null,
    background: null,
  };
  const reducer = createScanReducer({
    meta: virtualMeta,
    calibration: virtualCalibration(grid),
    settings,
    sha256: options.sha256 ?? null,
    onStepArrays: options.onStepArrays,
    virtualFrame: true,
  });
  const conv = eventConversion(options.spectrometer, ev);
  const sp = conv.spectrometer;
  const hists = new Map<number, Float64Array>();
  const tallies = new Map<number, EventTally>();
  const finished = new Set<number>();
  const stepTallies: EventStepTally[] = [];
  const warnings = new WarningCollector();

  function checkIndex(index: number): void {
    if (!Number.isInteger(index) || index < 0 || index >= nStep) {
      throw new RangeError(`step ${index} does not exist (the scan has ${nStep} steps)`);
    }
    if (finished.has(index)) throw new RangeError(`step ${index} was already finished`);
  }

  function histogram(index: number): Float64Array {
    checkIndex(index);
    let h = hists.get(index);
    if (!h) {
      h = new Float64Array(n * n);
      hists.set(index, h);
      tallies.set(index, emptyTally());
    }
    return h;
  }

  function addChunk(index: number, chunk: EventArrays): EventTally {
    const h = histogram(index);
    const t = histogramEvents(chunk.x, chunk.y, chunk.tof, conv, grid, h);
    addTally(tallies.get(index)!, t);
    return t;
  }

  function addHistogram(index: number, part: Float64Array, t: EventTally): void {
    const h = histogram(index);
    if (part.length !== h.length)
      throw new RangeError(`a partial histogram must have ${h.length} cells, got ${part.length}`);
    for (let i = 0; i < h.length; i++) h[i] = (h[i] as number) + (part[i] as number);
    addTally(tallies.get(index)!, t);
  }

  function finishStep(index: number): StepResult {
    const h = histogram(index);
    const t = tallies.get(index)!;
    const total = t.kept + t.nearNode + t.gated + t.outsideGrid + t.invalid;
    stepTallies.push({
      index,
      events: total,
      kept: t.kept,
      near_node: t.nearNode,
      gated: t.gated,
      outside_grid: t.outsideGrid,
      invalid: t.invalid,
    });
    const pct = (x: number) => ((100 * x) / Math.max(1, total)).toFixed(1);
    if (t.nearNode > 0) {
      warnings.add(
        `${t.nearNode} events (${pct(t.nearNode)} %) arrived within ${100 * NODE_FRACTION} % of a cyclotron period of a node, where the transverse momentum is undefined, and were dropped.`,
        index,
      );
    }
    if (t.invalid > 0) {
      warnings.add(
        `${t.invalid} events (${pct(t.invalid)} %) had no valid momentum (a position that is not a number, or a flight time not after t₀ or too long for this spectrometer) and were dropped; check t₀ and the spectrometer values.`,
        index,
      );
    }
    const inPlane = t.kept + t.outsideGrid;
    if (inPlane > 0 && t.outsideGrid / inPlane > 0.01) {
      warnings.add(
        `${((100 * t.outsideGrid) / inPlane).toFixed(1)} % of the gated events fell outside the momentum grid; raise “Momentum grid half-width” in the analysis settings to keep them.`,
        index,
      );
    }
    if (total > 0 && t.kept === 0) {
      warnings.add('No event of this step passed the gate along the laser axis and fell on the grid.', index);
    }
    finished.add(index);
    hists.delete(index);
    tallies.delete(index);
    return reducer.addStep(index, h, null);
  }

  function finish() {
    for (let k = 0; k < nStep; k++) if (!finished.has(k)) throw new RangeError(`step ${k} was not finished`);
    const out = reducer.finish();
    const period = cyclotronPeriodAu(sp);
    const info: EventResultInfo = {
      n_events: stepTallies.reduce((a, s) => a + s.events, 0),
      chunk_events: ev.chunk_events,
      laser_axis: ev.laser_axis,
      gate_au: ev.gate_au === null ? null : [ev.gate_au.range[0], ev.gate_au.range[1]],
      spectrometer: {
        ...options.spectrometer,
        detector_center_mm: [options.spectrometer.detector_center_mm[0], options.spectrometer.detector_center_mm[1]],
      },
      spectrometer_source: options.spectrometerSource ?? {},
      cyclotron_period_ns: Number.isFinite(period) ? auToNs(period) : null,
      steps: [...stepTallies].sort((a, b) => a.index - b.index),
    };
    out.result.calibration = options.calibration;
    out.result.events = info;
    out.result.warnings = [
      ...warnings.sentences((s) => (s.length === 1 ? `step ${s[0]}` : `steps ${s.join(', ')}`)),
      ...out.result.warnings,
    ];
    return out;
  }

  return {
    axes: reducer.axes,
    grid,
    eventSettings: ev,
    addChunk,
    addHistogram,
    finishStep,
    histogram: (index: number) => histogram(index),
    finish,
  };
}
