/**
 * Lobeline's public interfaces, version 1 (see the project docs, "formats"): the detector calibration (§2),
 * the analysis settings (§3), the result JSON (§4) and the scan metadata that the scan-file reader (§1)
 * hands to the reduction. The web app, the worker, the CLI and the browser pre-check all import these.
 *
 * Conventions (SCIENCE.md §0): atomic units unless a unit is in the name, angles in degrees unless `_rad`,
 * frames: `counts[s][iy][ix]`, (x, y) = (column, row) right-handed, azimuth θ = atan2(y, x) counter-clockwise from +x.
 *
 * Everything here is pure (zod only) so that it runs in Node and in a browser web worker.
 */
import { z } from 'zod';

// VARIABLES //

/** Experiment kinds a scan file may declare in `/entry/experiment_kind`. */
export const EXPERIMENT_KINDS = ['angular_streaking', 'bicircular', 'two_color_phase', 'image'] as const;
export type ExperimentKind = (typeof EXPERIMENT_KINDS)[number];

/** Scanned quantities of `/entry/data/step@quantity` and the unit each one must carry. */
export const STEP_UNITS = {
  intensity: 'W/cm^2',
  relative_phase: 'rad',
  delay: 'fs',
  ellipticity: '1',
  pulse_energy: 'uJ',
  index: '1',
} as const;
export type StepQuantity = keyof typeof STEP_UNITS;
export const STEP_QUANTITIES = Object.keys(STEP_UNITS) as StepQuantity[];

/** Limits refused before any allocation (FORMATS §1). */
export const SCAN_LIMITS = {
  maxNx: 8192,
  maxNy: 8192,
  maxSteps: 4096,
  maxElements: 2 ** 31,
} as const;

/** Intensity conventions (SCIENCE.md C5). The default is the cycle-averaged total intensity. */
export const INTENSITY_CONVENTIONS = ['cycle_averaged_total', 'linear_equivalent', 'per_colour'] as const;

// CALIBRATION (FORMATS §2) //

const finite = () => z.number().refine(Number.isFinite, 'must be a finite number');

export const detectorCalibrationSchema = z
  .object({
    /** Pixel centre (x0, y0) of zero momentum, in pixels (column, row). */
    center_px: z.tuple([finite(), finite()]),
    /** Momentum per pixel after the ellipticity correction, a.u. px⁻¹. */
    momentum_per_pixel_au: finite().refine((v) => v > 0, 'must be positive'),
    /** Counter-clockwise rotation from detector to lab frame, degrees. */
    rotation_deg: finite().default(0),
    /** Mirror u_x → −u_x before anything else (camera looking at the phosphor through a mirror). */
    mirror: z.boolean().default(false),
    /** Detector ellipticity: stretch `ratio` along `axis_deg`, undone before the rotation. */
    detector_ellipticity: z
      .object({
        ratio: finite().refine((v) => v > 0, 'must be positive'),
        axis_deg: finite(),
      })
      .default({ ratio: 1, axis_deg: 0 }),
    /** Pixels (x, y) excluded from every sum; not zeroed, excluded. */
    bad_pixels: z.array(z.tuple([z.number().int().nonnegative(), z.number().int().nonnegative()])).default([]),
    /**
     * Background subtraction: counts − background · (shots / background shots) when scale_by is "shots".
     * Optional extension (calibration bench, SCIENCE.md §7.4): `factor`, a background scale fitted in a region
     * outside the lobes, used instead of the shot ratio when present (scale_by "none" still subtracts nothing).
     */
    background: z
      .object({
        subtract: z.boolean().default(true),
        scale_by: z.enum(['shots', 'none']).default('shots'),
        factor: finite()
          .refine((v) => v >= 0, 'must be zero or positive')
          .optional(),
      })
      .default({ subtract: true, scale_by: 'shots' }),
    /**
     * Optional extension (SCIENCE.md §7.5): flat-field gain map G[iy][ix] (n_y rows of n_x values, normalised by the
     * lab, usually to mean 1 over the active area). Counts are divided by G; pixels with G < `min_gain` (dead areas,
     * MCP defects) are excluded like bad pixels instead of being divided by small numbers.
     */
    flat_field: z
      .object({
        gain: z.array(z.array(finite())).min(1),
        min_gain: finite()
          .refine((v) => v >= 0, 'must be ≥ 0')
          .default(0.05),
      })
      .optional(),
    /**
     * Optional extension: one-standard-deviation uncertainty of `rotation_deg` (degrees). Propagated to a systematic
     * error of every lobe angle and offset (`angle_sys_err_deg`, `offset_sys_err_deg`), reported apart from the
     * statistical one.
     */
    rotation_err_deg: finite()
      .refine((v) => v >= 0, 'must be ≥ 0')
      .optional(),
    /**
     * Optional extension: one-standard-deviation uncertainty of each coordinate of `center_px` (pixels). A centre
     * shift δ moves a lobe at radius r by δ⊥·scale/r (rad); propagated like `rotation_err_deg`.
     */
    center_err_px: finite()
      .refine((v) => v >= 0, 'must be ≥ 0')
      .optional(),
    /**
     * Event files (FORMATS §1.1): spectrometer values that override the file's `instrument/spectrometer`, with the
     * same names and units (m, V/m, T, ns, mm). Image files ignore them.
     */
    spectrometer: z
      .object({
        acceleration_length: finite()
          .refine((v) => v > 0, 'must be > 0 m')
          .optional(),
        drift_length: finite()
          .refine((v) => v >= 0, 'must be ≥ 0 m')
          .optional(),
        electric_field: finite()
          .refine((v) => v > 0, 'must be > 0 V/m (accelerating electrons toward the detector)')
          .optional(),
        magnetic_field: finite().optional(),
        t0: finite().optional(),
        detector_center: z.tuple([finite(), finite()]).optional(),
      })
      .strict()
      .optional(),
    /** Optional extension: a free-text note carried with the version. */
    note: z.string().max(2000).optional(),
  })
  .strict();

export type DetectorCalibrationInput = z.input<typeof detectorCalibrationSchema>;
export type DetectorCalibration = z.output<typeof detectorCalibrationSchema>;

/**
 * Optional extension for event campaigns (FORMATS §1.1): a calibration that holds a `spectrometer` object (possibly
 * empty: every value from the files) and neither `center_px` nor `momentum_per_pixel_au` is a calibration for event
 * files only. Event files need no detector-image fields (their momenta come from the spectrometer values and land
 * on the grid of the settings); image scans refuse such a calibration. Every other field keeps its meaning.
 */
export const eventCalibrationSchema = detectorCalibrationSchema.extend({
  center_px: detectorCalibrationSchema.shape.center_px.optional(),
  momentum_per_pixel_au: detectorCalibrationSchema.shape.momentum_per_pixel_au.optional(),
  spectrometer: detectorCalibrationSchema.shape.spectrometer.unwrap(),
});
export type EventCalibration = z.output<typeof eventCalibrationSchema>;
/** A calibration of either kind (what a result of an event scan records). */
export type AnyCalibration = DetectorCalibration | EventCalibration;

/** Whether a calibration body is one for event files only (see eventCalibrationSchema). */
export function isEventOnlyCalibration(value: unknown): boolean {
  if (value === null || typeof value !== 'object' || Array.isArray(value)) return false;
  const v = value as Record<string, unknown>;
  return 'spectrometer' in v && !('center_px' in v) && !('momentum_per_pixel_au' in v);
}

// ANALYSIS SETTINGS (FORMATS §3) //

export const DEFAULT_SETTINGS = {
  grid: { p_max_au: 2.0, n: 401 },
  radial_window_au: 'auto' as 'auto' | [number, number],
  angular_bins: 360,
  radial_bins: 200,
  lobes: 'auto' as 'auto' | number,
  angular_smoothing_deg: 3,
  peak_model: 'gaussian' as 'gaussian' | 'von_mises' | 'parabola',
  fit_half_width_deg: 25,
  bootstrap: { resamples: 200, seed: 12345 },
  phase: { min_counts: 10, harmonics: 2 },
};

/**
 * Optional extension of `phase`: a region of the lab momentum plane (a.u.; angles in degrees, counter-clockwise
 * from +px, the sector running from `theta_deg[0]` counter-clockwise to `theta_deg[1]`).
 */
export const phaseRegionSchema = z.discriminatedUnion('shape', [
  z
    .object({
      name: z.string().min(1).max(100),
      shape: z.literal('rectangle'),
      px_au: z.tuple([finite(), finite()]).refine(([a, b]) => b > a, 'needs px_min < px_max'),
      py_au: z.tuple([finite(), finite()]).refine(([a, b]) => b > a, 'needs py_min < py_max'),
    })
    .strict(),
  z
    .object({
      name: z.string().min(1).max(100),
      shape: z.literal('polygon'),
      vertices_au: z
        .array(z.tuple([finite(), finite()]))
        .min(3)
        .max(1000),
    })
    .strict(),
  z
    .object({
      name: z.string().min(1).max(100),
      shape: z.literal('annular_sector'),
      p_au: z.tuple([finite(), finite()]).refine(([a, b]) => a >= 0 && b > a, 'needs 0 ≤ p_min < p_max'),
      theta_deg: z.tuple([finite(), finite()]),
    })
    .strict(),
]);
export type PhaseRegion = z.output<typeof phaseRegionSchema>;

/**
 * Optional extension `follow_data`: which settings follow the data instead of their fixed defaults.
 * - `grid`: cells and rings no finer than a detector pixel after calibration (never finer than the fixed default);
 * - `fit_window`: each lobe's angular fit window is ±3σ of its fitted width, clipped at its neighbours;
 * - `peak_model`: the von Mises shape (suits broad lobes).
 * When a settings object has no `follow_data`, each flag is true exactly when the user did not give the setting it
 * replaces (`grid`/`radial_bins`, `fit_half_width_deg`, `peak_model`): an explicit setting always wins, and a stored
 * complete object keeps its flags.
 */
export const followDataSchema = z
  .object({ grid: z.boolean(), fit_window: z.boolean(), peak_model: z.boolean() })
  .strict();
export type FollowData = z.output<typeof followDataSchema>;

function withFollowData(raw: unknown): unknown {
  if (raw === null || typeof raw !== 'object' || Array.isArray(raw)) return raw;
  const o = raw as Record<string, unknown>;
  if ('follow_data' in o) return o;
  return {
    ...o,
    follow_data: {
      grid: !('grid' in o) && !('radial_bins' in o),
      fit_window: !('fit_half_width_deg' in o),
      peak_model: !('peak_model' in o),
    },
  };
}

/** Laser directions in the detector frame (FORMATS §1.1). */
export const LASER_AXES = ['+y', '-y', '+x', '-x', '+s', '-s'] as const;

export const DEFAULT_EVENT_SETTINGS = {
  laser_axis: '+y' as (typeof LASER_AXES)[number],
  gate_au: { axis: 'laser' as const, range: [-0.1, 0.1] as [number, number] } as {
    axis: 'laser';
    range: [number, number];
  } | null,
  chunk_events: 1_000_000,
};

/** `events` of the analysis settings (FORMATS §3); `gate_au: null` gates nothing. */
export const eventSettingsSchema = z
  .object({
    laser_axis: z.enum(LASER_AXES).default('+y'),
    gate_au: z
      .object({
        axis: z.literal('laser').default('laser'),
        range: z.tuple([finite(), finite()]).refine(([a, b]) => b > a, 'needs low < high'),
      })
      .strict()
      .nullable()
      .default({ axis: 'laser', range: [-0.1, 0.1] }),
    chunk_events: z.number().int().min(1000).max(50_000_000).default(1_000_000),
  })
  .strict();
export type EventSettings = z.output<typeof eventSettingsSchema>;

const analysisSettingsObject = z
  .object({
    grid: z
      .object({
        p_max_au: finite()
          .refine((v) => v > 0 && v <= 50, 'must be in (0, 50] a.u.')
          .default(2.0),
        n: z.number().int().min(16).max(2049).default(401),
      })
      .default(DEFAULT_SETTINGS.grid),
    radial_window_au: z
      .union([
        z.literal('auto'),
        z.tuple([finite(), finite()]).refine(([a, b]) => a >= 0 && b > a, 'needs 0 ≤ p_min < p_max'),
      ])
      .default('auto'),
    angular_bins: z.number().int().min(12).max(7200).default(360),
    radial_bins: z.number().int().min(8).max(4096).default(200),
    lobes: z.union([z.literal('auto'), z.number().int().min(1).max(12)]).default('auto'),
    angular_smoothing_deg: finite()
      .refine((v) => v >= 0 && v <= 90, 'must be in [0, 90] degrees')
      .default(3),
    peak_model: z.enum(['gaussian', 'von_mises', 'parabola']).default('gaussian'),
    fit_half_width_deg: finite()
      .refine((v) => v > 0 && v <= 90, 'must be in (0, 90] degrees')
      .default(25),
    bootstrap: z
      .object({
        resamples: z.number().int().min(0).max(5000).default(200),
        seed: z.number().int().default(12345),
      })
      .default(DEFAULT_SETTINGS.bootstrap),
    phase: z
      .object({
        min_counts: finite()
          .refine((v) => v >= 0, 'must be ≥ 0')
          .default(10),
        harmonics: z.number().int().min(1).max(8).default(2),
        /** Optional extension: regions of momentum space for yield-versus-phase curves (default: all, px > 0, px < 0). */
        regions: z.array(phaseRegionSchema).max(64).optional(),
      })
      .default(DEFAULT_SETTINGS.phase),
    /** Optional extension: settings that follow the data (see `followDataSchema`). */
    follow_data: followDataSchema.optional(),
    /** Event files (FORMATS §3): laser axis, gate along it, events read per chunk. */
    events: eventSettingsSchema.optional(),
    /** Optional extension: a free-text note carried with the version. */
    note: z.string().max(2000).optional(),
  })
  .strict();

export const analysisSettingsSchema = z.preprocess(withFollowData, analysisSettingsObject);

export type AnalysisSettingsInput = z.input<typeof analysisSettingsSchema>;
export type AnalysisSettings = z.output<typeof analysisSettingsSchema>;

// SCAN METADATA (what the reader of FORMATS §1 hands over) //

/** Background frames found in the file. */
export interface BackgroundInfo {
  /** `single`: one [n_y, n_x] frame for every step; `per_step`: [n_step, n_y, n_x]. */
  layout: 'single' | 'per_step';
  /** Shots behind the background, one per background frame (length 1 for `single`). */
  shots: number[];
}

/** Event lists of delay-line detectors (FORMATS §1.1; reduction/hdf5/event-reader.ts). */
export interface EventListInfo {
  count: number;
  paths: string[];
  /** Optional: events of each step. */
  stepEvents?: number[];
  /** Optional: spectrometer values used (file's units; the calibration's over the file's) and their sources. */
  spectrometer?: {
    acceleration_length_m: number;
    drift_length_m: number;
    electric_field_v_per_m: number;
    magnetic_field_t: number;
    t0_ns: number;
    detector_center_mm: readonly [number, number];
  };
  spectrometerSource?: Record<string, 'file' | 'calibration' | 'default'>;
}

/** Everything the reduction needs to know about a scan file, read from its metadata only. */
export interface ScanMetadata {
  experimentKind: ExperimentKind;
  /** ISO 8601 with offset. */
  startTime: string;
  title: string | null;
  /** `/entry/sample/name`. */
  target: string;
  /** From `/entry/sample/ionization_energy` (eV) when present, else null (then the table of SCIENCE.md §3 applies). */
  ionizationEnergyEv: number | null;
  wavelengthNm: number;
  /** ε ∈ [0, 1] (1 = circular); null when the file does not state it. */
  ellipticity: number | null;
  /** h = ±1 (SCIENCE.md C3) in the lab frame; null when not stated. */
  helicity: 1 | -1 | null;
  /** Lab azimuth of the ellipse's major axis, degrees (default 0). */
  majorAxisAngleDeg: number;
  /** F(2ω)/F(ω) for bicircular and two-colour scans. */
  fieldRatio: number | null;
  /** Fixed ω–2ω phase (rad) when it is not the scanned quantity (default 0). */
  relativePhaseRad: number;
  pulseDurationFs: number | null;
  /** SCIENCE.md C5; default `cycle_averaged_total`. */
  intensityConvention: string;
  /** φ = delay_sign · 2ωτ (SCIENCE.md C8); default −1. */
  delaySign: 1 | -1;
  detectorDescription: string | null;
  /** Nominal scale from the file (a.u. px⁻¹); a calibration overrides it. */
  nominalMomentumPerPixelAu: number | null;
  /** n_step (1 for a single 2-D image), n_y, n_x. */
  shape: { nStep: number; nY: number; nX: number };
  /** True when `counts` is 3-D in the file. */
  countsIs3d: boolean;
  /** HDF5 dtype of counts, e.g. `uint16`, `float32`. */
  countsDtype: string;
  /** Optional extension: filters of the counts dataset in pipeline order, e.g. `['shuffle', 'gzip/deflate']`. */
  countsFilters?: string[];
  /** Optional extension: chunk shape of the counts dataset, null when contiguous. */
  countsChunks?: number[] | null;
  /** Scanned quantity with its unit and one value per step (`index` 0…n−1 for a single image). */
  step: { quantity: StepQuantity; units: string; values: number[] };
  /** Laser shots per step (length nStep; default all 1). */
  shots: number[];
  /** Pixel axes when given (length nX / nY), else null (0…n−1). */
  xAxis: number[] | null;
  yAxis: number[] | null;
  background: BackgroundInfo | null;
  events: EventListInfo | null;
  /** Paths of content the reader does not use; kept and shown. */
  extraPaths: string[];
}

// RESULT (FORMATS §4) //

export interface LobeResult {
  angle_deg: number;
  angle_err_deg: number | null;
  expected_deg: number | null;
  offset_deg: number | null;
  offset_err_deg: number | null;
  radius_au: number | null;
  transverse_shift_au: number | null;
  width_deg: number | null;
  /** Optional extension: σ(angle) from the inverse Fisher information of the Poisson fit, degrees. */
  angle_fit_err_deg?: number | null;
  /** Optional extension: systematic σ(angle) from the calibration's rotation and centre uncertainty, degrees. */
  angle_sys_err_deg?: number | null;
  /** Optional extension: the angular fit window used for this lobe [lo, hi], degrees. */
  fit_window_deg?: [number, number] | null;
}

export interface StepResult {
  index: number;
  value: number;
  total_counts: number;
  radius_au: number | null;
  radius_err_au: number | null;
  intensity_from_radius_Wcm2: number | null;
  intensity_from_radius_err_Wcm2: number | null;
  lobes: LobeResult[];
  offset_deg: number | null;
  offset_err_deg: number | null;
  /** Optional extension: σ of the step offset from the fit covariances (same weights), degrees. */
  offset_fit_err_deg?: number | null;
  /** Optional extension: systematic σ of the step offset from the calibration uncertainties, degrees. */
  offset_sys_err_deg?: number | null;
}

export interface PhaseRegionResult {
  name: string;
  phase_rad: number[];
  yield: number[];
  a0: number;
  a1: number;
  phase_of_max_rad: number;
  contrast: number;
}

export interface PhaseResult {
  method: 'fourier' | 'least_squares';
  n_phases: number;
  periods: number;
  phase_offset_rad: number;
  regions: PhaseRegionResult[];
}

export interface ResultInput {
  sha256: string | null;
  experiment_kind: ExperimentKind;
  target: string;
  wavelength_nm: number;
  ellipticity: number | null;
  helicity: 1 | -1 | null;
  major_axis_angle_deg: number;
  field_ratio: number | null;
  shape: number[];
  step_quantity: StepQuantity;
  step_units: string;
  /**
   * Optional (version 1 extension): metadata an analyst corrected when releasing a quarantined file, applied over
   * the file's own values before this reduction. Keys are the result's own names (`wavelength_nm`, `target`, …);
   * absent when the file was reduced as stored.
   */
  overrides?: Record<string, string | number>;
}

export interface LobelineResult {
  format: 'lobeline.result';
  version: 1;
  input: ResultInput;
  /** The calibration version used (for an event scan possibly one without detector-image fields). */
  calibration: AnyCalibration;
  settings: AnalysisSettings;
  software: { name: 'lobeline'; version: string };
  steps: StepResult[];
  phase: PhaseResult | null;
  warnings: string[];
  /** Optional (version 1 extension): how an event file's events were turned into the images analysed. */
  events?: EventResultInfo;
}

/** What became of the events of one step (counts of events). */
export interface EventStepTally {
  index: number;
  events: number;
  kept: number;
  near_node: number;
  gated: number;
  outside_grid: number;
  invalid: number;
}

/** Optional result block of an event file (FORMATS §4 extension). */
export interface EventResultInfo {
  n_events: number;
  chunk_events: number;
  laser_axis: string;
  gate_au: [number, number] | null;
  /** The spectrometer values used (file's units) and where each came from. */
  spectrometer: {
    acceleration_length_m: number;
    drift_length_m: number;
    electric_field_v_per_m: number;
    magnetic_field_t: number;
    t0_ns: number;
    detector_center_mm: [number, number];
  };
  spectrometer_source: Record<string, 'file' | 'calibration' | 'default'>;
  /** Cyclotron period (ns), null without a magnetic field; events within 2 % of it from a node are dropped. */
  cyclotron_period_ns: number | null;
  steps: EventStepTally[];
}

/** Version string written into every result (kept in step with package.json). */
export const SOFTWARE_VERSION = '0.1.0';

// FUNCTIONS //

/**
 * Parses a calibration object (FORMATS §2), completing optional fields from their defaults.
 *
 * @param value - parsed JSON
 * @returns the calibration, or the list of problems as plain sentences naming the field
 */
export function parseCalibration(
  value: unknown,
): { ok: true; value: DetectorCalibration } | { ok: false; problems: string[] } {
  const r = detectorCalibrationSchema.safeParse(value);
  return r.success ? { ok: true, value: r.data } : { ok: false, problems: describeIssues('calibration', r.error) };
}

/**
 * Parses a calibration of either kind: one for event files only (eventCalibrationSchema) when it has a
 * `spectrometer` object and no detector-image fields, else an image calibration (FORMATS §2).
 */
export function parseAnyCalibration(
  value: unknown,
): { ok: true; value: AnyCalibration } | { ok: false; problems: string[] } {
  if (!isEventOnlyCalibration(value)) return parseCalibration(value);
  const r = eventCalibrationSchema.safeParse(value);
  return r.success ? { ok: true, value: r.data } : { ok: false, problems: describeIssues('calibration', r.error) };
}

/**
 * Parses analysis settings (FORMATS §3); a partial object is completed from the defaults.
 *
 * @param value - parsed JSON (undefined gives the defaults)
 */
export function parseSettings(
  value: unknown,
): { ok: true; value: AnalysisSettings } | { ok: false; problems: string[] } {
  const r = analysisSettingsSchema.safeParse(value ?? {});
  return r.success ? { ok: true, value: r.data } : { ok: false, problems: describeIssues('settings', r.error) };
}

/** Turns zod issues into sentences such as `settings.grid.n: Too small: expected number to be >=16`. */
export function describeIssues(root: string, error: z.ZodError): string[] {
  return error.issues.map((issue) => {
    const path = [root, ...issue.path.map(String)].join('.');
    return `${path}: ${issue.message}`;
  });
}
