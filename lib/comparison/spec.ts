// Campaign comparison (issue 13, PRODUCT.md C8/C9): the shapes shared by the API, the saved comparisons and the
// page. Pure zod and types (no server imports), so client components use them too.
import { z } from 'zod';
import { CONVENTION_NAMES } from '@/reduction/intensity-conventions';

// LIMITS //

/** At most this many campaigns and this many single scans in one comparison. */
export const MAX_CAMPAIGNS = 20;
export const MAX_SCANS = 200;
/** At most this many points in one answer (the trend's limit). */
export const MAX_POINTS = 20_000;

// VOCABULARY //

export const Y_QUANTITIES = ['offset', 'shift', 'radius', 'radius_intensity'] as const;
export type YQuantity = (typeof Y_QUANTITIES)[number];
/** `step`: the scanned value (a stated intensity is converted to the comparison's convention); `radius_intensity`: the in-situ intensity from the lobe radius. */
export const X_QUANTITIES = ['step', 'radius_intensity'] as const;
export type XQuantity = (typeof X_QUANTITIES)[number];
export const SERIES_BY = ['campaign', 'target', 'wavelength', 'ellipticity', 'calibration', 'scan'] as const;
export type SeriesBy = (typeof SERIES_BY)[number];
export const MODEL_NAMES = ['simple_man', 'trajectory', 'ensemble', 'keldysh_rutherford'] as const;
export type ModelName = (typeof MODEL_NAMES)[number];

/** Name and one-line assumptions of each model overlay (lib/comparison/models.ts computes them). */
export const MODEL_TEXT: Record<ModelName, { label: string; assumptions: string }> = {
  simple_man: {
    label: 'simple-man (no Coulomb force)',
    assumptions:
      'Drift momentum −A(t₀) at the field maximum and no force from the ion: offset 0° at every intensity, |p| = εF/ω (SCIENCE.md §4.2).',
  },
  trajectory: {
    label: 'Coulomb-corrected trajectory',
    assumptions:
      'One classical trajectory born at the field maximum at the exit Ip/F with zero velocity, laser plus −1/r force in an 8-cycle cos² pulse, Kepler asymptote; no rate averaging, non-adiabatic or many-electron effects (SCIENCE.md §10.3–10.5).',
  },
  ensemble: {
    label: 'Coulomb-corrected ensemble',
    assumptions:
      '20 000 classical trajectories per intensity born over the central half of an 8-cycle cos² pulse with static ADK (m = 0) weights, exit Ip/F, Gaussian transverse velocities, −1/r force, Kepler asymptote; Gaussian + constant fit to the folded lobe, ± about 0.6° seed scatter (SCIENCE.md §10.7).',
  },
  keldysh_rutherford: {
    label: 'Keldysh–Rutherford estimate',
    assumptions:
      'Rutherford deflection with impact parameter Ip/F and speed F/ω, tan(Θ/2) = Zω²/(Ip F), drawn as Θ; an order-of-magnitude check only (SCIENCE.md §10.6).',
  },
};

// HELPERS //

const id = z.number().int('must be a whole number').positive('must be a positive number');

/** "1,2,3" (or an array of such strings, or nothing) → [1, 2, 3]. */
function commaList<T extends z.ZodType>(item: T, max: number, what: string) {
  return z.preprocess(
    (v) => {
      if (v === undefined || v === null || v === '') return [];
      const parts = (Array.isArray(v) ? v : [v]).flatMap((s) => String(s).split(','));
      return parts.map((s) => s.trim()).filter((s) => s !== '');
    },
    z.array(item).max(max, `at most ${max} ${what}`),
  );
}
const intText = z.coerce
  .number({ error: 'must be a number' })
  .int('must be a whole number')
  .positive('must be positive');
const numText = z.coerce.number({ error: 'must be a number' }).refine(Number.isFinite, 'must be a finite number');

// POINTS QUERY (GET /api/comparisons/points) //

export const pointsQuerySchema = z
  .object({
    campaigns: commaList(intText, MAX_CAMPAIGNS, 'campaigns'),
    scans: commaList(intText, MAX_SCANS, 'scans'),
    /** Convert every intensity to this convention; without it, a selection that mixes conventions is refused. */
    convention: z.enum(CONVENTION_NAMES, { error: `must be one of ${CONVENTION_NAMES.join(', ')}` }).optional(),
    targets: commaList(z.string().min(1).max(32), 20, 'targets'),
    wavelengths: commaList(
      numText.refine((v) => v > 0, 'must be positive'),
      20,
      'wavelengths',
    ),
    ellipticities: commaList(
      numText.refine((v) => v >= 0 && v <= 1, 'must be between 0 and 1'),
      20,
      'ellipticities',
    ),
    calibrations: commaList(intText, 50, 'calibration versions'),
    flagged: z.enum(['include', 'exclude'], { error: 'must be include or exclude' }).default('include'),
  })
  .refine((q) => q.campaigns.length + q.scans.length > 0, {
    message: 'choose at least one campaign or scan',
    path: ['campaigns'],
  });
export type PointsQuery = z.output<typeof pointsQuerySchema>;

// MODELS QUERY (GET /api/comparisons/models) //

export const modelsQuerySchema = z.object({
  target: z.string().trim().min(1).max(32),
  wavelengthNm: numText.refine((v) => v >= 100 && v <= 20_000, 'must be between 100 and 20 000 nm'),
  ellipticity: numText.refine((v) => v > 0 && v <= 1, 'must be above 0 and at most 1'),
  /** Cycle-averaged total intensities (SCIENCE.md C5), W/cm². */
  intensities: commaList(
    numText.refine((v) => v >= 1e12 && v <= 1e16, 'must be between 1e12 and 1e16 W/cm²'),
    200,
    'intensities',
  ).refine((a) => a.length > 0, 'give at least one intensity'),
  models: commaList(z.enum(MODEL_NAMES, { error: `must be one of ${MODEL_NAMES.join(', ')}` }), 4, 'models'),
});
export type ModelsQuery = z.output<typeof modelsQuerySchema>;

// SAVED COMPARISON //

export const comparisonSpecSchema = z.object({
  selection: z.object({
    campaignIds: z.array(id).max(MAX_CAMPAIGNS, `at most ${MAX_CAMPAIGNS} campaigns`).default([]),
    scanIds: z.array(id).max(MAX_SCANS, `at most ${MAX_SCANS} scans`).default([]),
  }),
  filters: z
    .object({
      targets: z.array(z.string().min(1).max(32)).max(20).default([]),
      wavelengthsNm: z.array(z.number().positive()).max(20).default([]),
      ellipticities: z.array(z.number().min(0).max(1)).max(20).default([]),
      calibrationIds: z.array(id).max(50).default([]),
      flagged: z.enum(['include', 'exclude']).default('include'),
    })
    .default({ targets: [], wavelengthsNm: [], ellipticities: [], calibrationIds: [], flagged: 'include' }),
  axes: z
    .object({
      y: z.enum(Y_QUANTITIES).default('offset'),
      x: z.enum(X_QUANTITIES).default('step'),
      xScale: z.enum(['linear', 'log']).default('linear'),
      yScale: z.enum(['linear', 'log']).default('linear'),
    })
    .default({ y: 'offset', x: 'step', xScale: 'linear', yScale: 'linear' }),
  seriesBy: z.enum(SERIES_BY).default('campaign'),
  errorBars: z.boolean().default(true),
  systematics: z.boolean().default(true),
  models: z.array(z.enum(MODEL_NAMES)).max(4).default([]),
  convention: z.enum(CONVENTION_NAMES).nullable().default(null),
});
export type ComparisonSpec = z.output<typeof comparisonSpecSchema>;

export const saveComparisonBody = z.object({
  title: z.string().trim().min(1, 'Give the comparison a title.').max(160, 'at most 160 characters'),
  /** The team whose members may open it; the saver must be allowed to create comparisons there. */
  teamId: id,
  spec: comparisonSpecSchema,
});

/** The public id of a saved comparison in its URL: 12 lower-case letters and digits. */
export const comparisonSlug = z.string().regex(/^[a-z0-9]{12}$/, 'is not a comparison address');

/** The points query string of a spec (what the page asks the API for). */
export function pointsQueryOf(spec: ComparisonSpec): Record<string, string> {
  const q: Record<string, string> = {};
  const set = (k: string, v: (string | number)[]) => {
    if (v.length) q[k] = v.join(',');
  };
  set('campaigns', spec.selection.campaignIds);
  set('scans', spec.selection.scanIds);
  if (spec.convention) q.convention = spec.convention;
  set('targets', spec.filters.targets);
  set('wavelengths', spec.filters.wavelengthsNm);
  set('ellipticities', spec.filters.ellipticities);
  set('calibrations', spec.filters.calibrationIds);
  q.flagged = spec.filters.flagged;
  return q;
}

// ANSWERS //

export interface ComparisonProvenance {
  scanId: number;
  resultId: number;
  calibrationId: number;
  calibrationVersion: number | null;
  settingsId: number;
  settingsVersion: number | null;
  softwareVersion: string;
  /** The convention the intensities of this point are given in (the comparison's). */
  intensityConvention: string;
  /** The convention the scan file states; differs from the above when converted. */
  statedConvention: string;
  /** Factor applied to the stated intensities (1 when not converted). */
  conventionFactor: number;
}

export interface ComparisonPoint {
  campaignId: number;
  campaignName: string;
  teamId: number;
  teamName: string;
  scanId: number;
  scanTitle: string | null;
  stepIndex: number;
  experimentKind: string | null;
  target: string | null;
  wavelengthNm: number | null;
  ellipticity: number | null;
  helicity: number | null;
  fieldRatio: number | null;
  flagged: boolean;
  stepQuantity: string | null;
  stepUnits: string | null;
  /** The scanned value; a stated intensity is in the comparison's convention. */
  stepValue: number | null;
  offsetDeg: number | null;
  offsetErrDeg: number | null;
  offsetSysErrDeg: number | null;
  transverseShiftAu: number | null;
  radiusAu: number | null;
  radiusErrAu: number | null;
  radiusIntensityWcm2: number | null;
  radiusIntensityErrWcm2: number | null;
  provenance: ComparisonProvenance;
}

/** A two-colour scan's yield against the ω–2ω relative phase in one region (SCIENCE.md §6, C8/C10). */
export interface PhaseCurve {
  campaignId: number;
  campaignName: string;
  teamId: number;
  teamName: string;
  scanId: number;
  scanTitle: string | null;
  target: string | null;
  wavelengthNm: number | null;
  ellipticity: number | null;
  flagged: boolean;
  region: string;
  method: string | null;
  /** Relative phase φ (rad, C8) and the region's yield at each phase (counts, background subtracted). */
  phaseRad: number[];
  yield: number[];
  /** Y = A₀ + A₁ cos(φ − φ₀) (C10): A₀, A₁, φ₀ (rad) and the contrast A₁/A₀. */
  a0: number | null;
  a1: number | null;
  phaseOfMaxRad: number | null;
  contrast: number | null;
  provenance: Omit<ComparisonProvenance, 'intensityConvention' | 'statedConvention' | 'conventionFactor'>;
}

export interface PointsAnswer {
  convention: string;
  /** One sentence per conversion that was made (never silent). */
  conversions: string[];
  points: ComparisonPoint[];
  truncated: boolean;
  /** Phase-delay curves of the two-colour scans in the selection (empty when there are none). */
  phaseCurves: PhaseCurve[];
}

export interface ModelCurve {
  model: ModelName;
  label: string;
  /** One line: what the model assumes. */
  assumptions: string;
  /** Per requested intensity (total convention): offset (deg) and in-plane final momentum (a.u.), null where the model gives none. */
  points: {
    intensityWcm2: number;
    offsetDeg: number | null;
    radiusAu: number | null;
    /** Ensemble only: σ of the fitted offset and the lobe's rms width (deg). */
    offsetErrDeg?: number | null;
    widthDeg?: number | null;
  }[];
  /** Why some or all values are missing, when they are. */
  note: string | null;
  /**
   * `done` (also when absent): the points are final. `queued`/`running`: a long run (the ensemble) is on the model
   * queue, `progress` says how far; ask again. `failed`: `note` says why.
   */
  state?: 'queued' | 'running' | 'done' | 'failed';
  progress?: { done: number; total: number } | null;
  /**
   * `grid`: the model was computed on its own intensity grid (the ensemble), not at the requested intensities; a
   * value between two grid points is interpolated linearly in log I.
   */
  sampling?: 'requested' | 'grid';
  /** Whether the answer came from the MariaDB cache. */
  cached?: boolean;
}
