// The one place that turns a validation problem into a sentence a user can act on: the field is named with the
// label its form shows, and the sentence says what to enter. Used by the calibration and settings forms (for their
// own checks and for the server's answer) and by any screen that shows problem lists. Client-safe (no imports).

/** Form labels of calibration (FORMATS §2) and analysis-settings (FORMATS §3) fields, by their path. */
export const FIELD_LABELS: Record<string, string> = {
  'calibration.center_px': 'Centre x₀, y₀',
  'calibration.center_px.0': 'Centre x₀',
  'calibration.center_px.1': 'Centre y₀',
  'calibration.momentum_per_pixel_au': 'Momentum per pixel',
  'calibration.rotation_deg': 'Rotation to the lab frame',
  'calibration.mirror': 'Mirrored image',
  'calibration.detector_ellipticity.ratio': 'Detector ellipticity ratio',
  'calibration.detector_ellipticity.axis_deg': 'Ellipticity axis',
  'calibration.bad_pixels': 'Bad pixels',
  'calibration.background.subtract': 'Subtract the background frames',
  'calibration.background.scale_by': 'Background scaling',
  'calibration.background.factor': 'Background scale (fitted)',
  'calibration.flat_field': 'Flat-field gain map',
  'settings.grid.p_max_au': 'Momentum grid half-width',
  'settings.grid.n': 'Grid cells per side',
  'settings.radial_window_au': 'Radial window',
  'settings.radial_window_au.0': 'Radial window from',
  'settings.radial_window_au.1': 'Radial window to',
  'settings.angular_bins': 'Angular bins',
  'settings.radial_bins': 'Radial bins',
  'settings.lobes': 'Lobes',
  'settings.angular_smoothing_deg': 'Angular smoothing',
  'settings.peak_model': 'Peak model',
  'settings.fit_half_width_deg': 'Fit half-width',
  'settings.follow_data.fit_window': 'Fit window',
  'settings.bootstrap.resamples': 'Bootstrap resamples',
  'settings.bootstrap.seed': 'Bootstrap seed',
  'settings.phase.min_counts': 'Phase maps: minimum counts per cell',
  'settings.phase.harmonics': 'Phase maps: harmonics',
  'settings.phase.regions': 'Phase regions',
  // event files (FORMATS §1.1, §3)
  'calibration.spectrometer.acceleration_length': 'Acceleration length L',
  'calibration.spectrometer.drift_length': 'Drift length D',
  'calibration.spectrometer.electric_field': 'Spectrometer electric field',
  'calibration.spectrometer.magnetic_field': 'Magnetic field along the axis',
  'calibration.spectrometer.t0': 'Time offset t₀',
  'calibration.spectrometer.detector_center': 'Detector centre x, y',
  'settings.events.laser_axis': 'Laser direction',
  'settings.events.chunk_events': 'Events read at a time',
  'settings.events.gate_au': 'Gate the momentum along the laser',
  'settings.events.gate_au.range.0': 'Gate from',
  'settings.events.gate_au.range.1': 'Gate to',
};

/** The label of a field path (`calibration.bad_pixels.3.0` → "Bad pixels, line 4"), or null when unknown. */
export function fieldLabel(path: string): string | null {
  if (FIELD_LABELS[path]) return FIELD_LABELS[path];
  const bad = path.match(/^calibration\.bad_pixels\.(\d+)(?:\.\d+)?$/);
  if (bad) return `Bad pixels, line ${Number(bad[1]) + 1}`;
  const parts = path.split('.');
  for (let n = parts.length - 1; n > 1; n--) {
    const label = FIELD_LABELS[parts.slice(0, n).join('.')];
    if (label) return label;
  }
  return null;
}

/** What to do, from zod's own wording of a problem (zod 4 messages such as "Too small: expected number to be >=16"). */
export function whatToEnter(message: string): string {
  const m = message.trim();
  const low = m.match(/too small: expected number to be (>=|>)\s*(-?[\d.e+-]+)/i);
  if (low) return `enter a number ${low[1] === '>=' ? 'of at least' : 'above'} ${low[2]}.`;
  const high = m.match(/too big: expected number to be (<=|<)\s*(-?[\d.e+-]+)/i);
  if (high) return `enter a number ${high[1] === '<=' ? 'of at most' : 'below'} ${high[2]}.`;
  if (/received (NaN|undefined|null)/i.test(m) || /expected number/i.test(m))
    return 'enter a number (the field is empty or not a number).';
  if (/expected boolean/i.test(m)) return 'tick or untick the box.';
  if (/expected int/i.test(m)) return 'enter a whole number.';
  if (/invalid option|expected one of/i.test(m)) return 'choose one of the offered values.';
  if (/too small.*array|too big.*array|expected array/i.test(m))
    return 'give the values in the form shown beside the field.';
  // A sentence of our own (schemas written with a message): keep it, as a sentence.
  const s = m.charAt(0).toLowerCase() + m.slice(1);
  return /[.!?]$/.test(s) ? s : `${s}.`;
}

/**
 * One problem line of the form `path: message` (reduction/formats describeIssues, lib/api describeZodIssues) as
 * the user's sentence: `Detector ellipticity ratio: enter a number (the field is empty or not a number).`
 * Lines without a known field are returned with only the message made readable.
 */
export function problemForUser(line: string, root?: 'calibration' | 'settings'): string {
  const i = line.indexOf(': ');
  if (i <= 0) return line;
  const rawPath = line.slice(0, i);
  const path = root && !rawPath.startsWith(`${root}.`) && !rawPath.startsWith('body') ? `${root}.${rawPath}` : rawPath;
  const label = fieldLabel(path.replace(/^body\./, ''));
  const what = whatToEnter(line.slice(i + 2));
  return label ? `${label}: ${what}` : `${line.slice(0, i)}: ${what}`;
}
