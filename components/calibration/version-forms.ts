// Form state ⇄ calibration / settings objects (FORMATS §2, §3). Fields the forms do not show (flat field, phase
// regions) are carried over unchanged from the version the edit starts from. Event files (FORMATS §1.1): the
// calibration's spectrometer values (a blank field keeps the file's value) and the settings' `events` object.
import { type AnalysisSettings, DEFAULT_EVENT_SETTINGS, DEFAULT_SETTINGS, parseSettings } from '@/reduction/formats';

export type FormState = Record<string, string | boolean>;

/** Scalar spectrometer values of a calibration (names and units of FORMATS §1.1). */
export const SPECTROMETER_FIELDS = [
  'acceleration_length',
  'drift_length',
  'electric_field',
  'magnetic_field',
  't0',
] as const;

const blank = (v: string | boolean | undefined) => typeof v !== 'string' || v.trim() === '';

const num = (v: string | boolean | undefined) => (typeof v === 'string' && v.trim() !== '' ? Number(v) : Number.NaN);

export function calibrationToForm(body: Record<string, unknown> | null): FormState {
  const b = (body ?? {}) as {
    center_px?: [number, number];
    momentum_per_pixel_au?: number;
    rotation_deg?: number;
    mirror?: boolean;
    detector_ellipticity?: { ratio: number; axis_deg: number };
    bad_pixels?: [number, number][];
    background?: { subtract: boolean; scale_by: string };
    spectrometer?: Partial<Record<(typeof SPECTROMETER_FIELDS)[number], number>> & {
      detector_center?: [number, number];
    };
    note?: string;
  };
  const sp = b.spectrometer ?? {};
  return {
    ...Object.fromEntries(SPECTROMETER_FIELDS.map((k) => [`sp_${k}`, sp[k] === undefined ? '' : String(sp[k])])),
    sp_center_x: sp.detector_center ? String(sp.detector_center[0]) : '',
    sp_center_y: sp.detector_center ? String(sp.detector_center[1]) : '',
    center_x: String(b.center_px?.[0] ?? ''),
    center_y: String(b.center_px?.[1] ?? ''),
    momentum_per_pixel_au: String(b.momentum_per_pixel_au ?? ''),
    rotation_deg: String(b.rotation_deg ?? 0),
    mirror: !!b.mirror,
    ellipticity_ratio: String(b.detector_ellipticity?.ratio ?? 1),
    ellipticity_axis_deg: String(b.detector_ellipticity?.axis_deg ?? 0),
    bad_pixels: (b.bad_pixels ?? []).map(([x, y]) => `${x}, ${y}`).join('\n'),
    background_subtract: b.background?.subtract ?? true,
    background_scale_by: b.background?.scale_by ?? 'shots',
  };
}

export function formToCalibration(f: FormState, base: Record<string, unknown> | null): unknown {
  const badText = typeof f.bad_pixels === 'string' ? f.bad_pixels : '';
  const bad = badText
    .split('\n')
    .map((l) => l.trim())
    .filter(Boolean)
    .map((l) => l.split(/[\s,;]+/).map(Number));
  // blank centre and scale: a calibration for event files only (FORMATS §1.1, reduction/formats.ts
  // eventCalibrationSchema), which needs no detector-image fields
  const eventOnly = blank(f.center_x) && blank(f.center_y) && blank(f.momentum_per_pixel_au);
  const out: Record<string, unknown> = {
    ...(eventOnly
      ? {}
      : { center_px: [num(f.center_x), num(f.center_y)], momentum_per_pixel_au: num(f.momentum_per_pixel_au) }),
    rotation_deg: num(f.rotation_deg),
    mirror: !!f.mirror,
    detector_ellipticity: { ratio: num(f.ellipticity_ratio), axis_deg: num(f.ellipticity_axis_deg) },
    bad_pixels: bad,
    background: { subtract: !!f.background_subtract, scale_by: f.background_scale_by },
  };
  if (base && 'flat_field' in base) out.flat_field = base.flat_field;
  // a background scale fitted on the bench has no form field: keep it
  const baseBg = base?.background as { factor?: unknown } | undefined;
  if (typeof baseBg?.factor === 'number') (out.background as Record<string, unknown>).factor = baseBg.factor;
  // spectrometer values for event files: only the fields filled in override the file's
  const sp: Record<string, unknown> = {};
  for (const k of SPECTROMETER_FIELDS) if (!blank(f[`sp_${k}`])) sp[k] = num(f[`sp_${k}`]);
  if (!blank(f.sp_center_x) || !blank(f.sp_center_y)) sp.detector_center = [num(f.sp_center_x), num(f.sp_center_y)];
  if (Object.keys(sp).length > 0 || eventOnly) out.spectrometer = sp;
  return out;
}

/**
 * The peak model a settings version reduces with, in words: with `follow_data.peak_model` the von Mises shape is
 * used whatever `peak_model` holds (reduction/pipeline.ts `effectiveSettings`).
 */
export function peakModelWords(b: Pick<AnalysisSettings, 'peak_model' | 'follow_data'>): string {
  if (b.follow_data?.peak_model) return 'von Mises + constant (follows the data)';
  return { gaussian: 'Gaussian + constant', von_mises: 'von Mises + constant', parabola: 'parabola at the maximum' }[
    b.peak_model
  ];
}

/** The angular fit window rule of a settings version, in words. */
export function fitWindowWords(b: Pick<AnalysisSettings, 'fit_half_width_deg' | 'follow_data'>): string {
  if (b.follow_data?.fit_window) return '±3σ of each lobe, clipped at its neighbours (follows the data)';
  return `±${b.fit_half_width_deg}°`;
}

/**
 * The form of a stored settings version. The body is completed as the server and the reduction complete it
 * (parseSettings, with `follow_data`), so the form shows the peak model and the fit-window rule the version really
 * reduces with, not the defaults. Without a body (a first version) the form starts from the fixed defaults.
 */
export function settingsToForm(body: Record<string, unknown> | null): FormState {
  const parsed = body ? parseSettings(body) : null;
  const b = (parsed?.ok ? parsed.value : { ...DEFAULT_SETTINGS, ...(body ?? {}) }) as typeof DEFAULT_SETTINGS &
    Pick<AnalysisSettings, 'follow_data'> & { note?: string };
  const win = b.radial_window_au;
  return {
    p_max_au: String(b.grid.p_max_au),
    grid_n: String(b.grid.n),
    window_auto: win === 'auto',
    window_min: Array.isArray(win) ? String(win[0]) : '',
    window_max: Array.isArray(win) ? String(win[1]) : '',
    angular_bins: String(b.angular_bins),
    radial_bins: String(b.radial_bins),
    lobes: b.lobes === 'auto' ? 'auto' : String(b.lobes),
    angular_smoothing_deg: String(b.angular_smoothing_deg),
    // `follow`: von Mises chosen by the data (follow_data.peak_model)
    peak_model: b.follow_data?.peak_model ? 'follow' : b.peak_model,
    fit_window_rule: b.follow_data?.fit_window ? 'follow' : 'fixed',
    fit_half_width_deg: String(b.fit_half_width_deg),
    bootstrap_resamples: String(b.bootstrap.resamples),
    bootstrap_seed: String(b.bootstrap.seed),
    phase_min_counts: String(b.phase.min_counts),
    phase_harmonics: String(b.phase.harmonics),
    ...eventsToForm((parsed?.ok ? parsed.value.events : undefined) ?? null),
  };
}

function eventsToForm(ev: AnalysisSettings['events'] | null): FormState {
  const e = ev ?? DEFAULT_EVENT_SETTINGS;
  return {
    ev_laser_axis: e.laser_axis,
    ev_gate: e.gate_au !== null,
    ev_gate_lo: String(e.gate_au?.range[0] ?? DEFAULT_EVENT_SETTINGS.gate_au?.range[0] ?? ''),
    ev_gate_hi: String(e.gate_au?.range[1] ?? DEFAULT_EVENT_SETTINGS.gate_au?.range[1] ?? ''),
    ev_chunk: String(e.chunk_events),
  };
}

export function formToSettings(f: FormState, base: Record<string, unknown> | null): unknown {
  const phase: Record<string, unknown> = { min_counts: num(f.phase_min_counts), harmonics: num(f.phase_harmonics) };
  const basePhase = (base?.phase ?? null) as { regions?: unknown } | null;
  if (basePhase?.regions) phase.regions = basePhase.regions;
  const out: Record<string, unknown> = {
    grid: { p_max_au: num(f.p_max_au), n: num(f.grid_n) },
    radial_window_au: f.window_auto ? 'auto' : [num(f.window_min), num(f.window_max)],
    angular_bins: num(f.angular_bins),
    radial_bins: num(f.radial_bins),
    lobes: f.lobes === 'auto' ? 'auto' : num(f.lobes),
    angular_smoothing_deg: num(f.angular_smoothing_deg),
    peak_model: f.peak_model === 'follow' ? 'von_mises' : f.peak_model,
    fit_half_width_deg: num(f.fit_half_width_deg),
    bootstrap: { resamples: num(f.bootstrap_resamples), seed: num(f.bootstrap_seed) },
    phase,
  };
  // The peak model and the fit-window rule are shown and chosen in the form (`follow` = follows the data). A grid
  // that followed the data keeps doing so unless this edit changed it (an explicit value wins).
  const follow = (base?.follow_data ?? null) as { grid: boolean; fit_window: boolean; peak_model: boolean } | null;
  const g = (base?.grid ?? undefined) as { p_max_au?: number; n?: number } | undefined;
  const followData = {
    grid:
      !!follow?.grid &&
      g?.p_max_au === num(f.p_max_au) &&
      g?.n === num(f.grid_n) &&
      base?.radial_bins === num(f.radial_bins),
    fit_window: f.fit_window_rule === 'follow',
    peak_model: f.peak_model === 'follow',
  };
  if (follow || followData.fit_window || followData.peak_model) out.follow_data = followData;
  // event settings: written when the version had them or the form differs from their defaults
  const events = {
    laser_axis: f.ev_laser_axis,
    gate_au: f.ev_gate ? { axis: 'laser', range: [num(f.ev_gate_lo), num(f.ev_gate_hi)] } : null,
    chunk_events: num(f.ev_chunk),
  };
  const d = eventsToForm(null);
  const changed = (['ev_laser_axis', 'ev_gate', 'ev_gate_lo', 'ev_gate_hi', 'ev_chunk'] as const).some(
    (k) => f[k] !== undefined && String(f[k]) !== String(d[k]),
  );
  if ((base && 'events' in base) || changed) out.events = events;
  return out;
}
