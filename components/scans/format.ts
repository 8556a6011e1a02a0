// Number and unit text used across the scan views.
import { formatNumber } from '@/components/plots/scales';

export const STEP_QUANTITY_LABELS: Record<string, string> = {
  intensity: 'Intensity',
  relative_phase: 'Relative ω–2ω phase',
  delay: 'Delay',
  ellipticity: 'Ellipticity',
  pulse_energy: 'Pulse energy',
  index: 'Step',
};

export const EXPERIMENT_LABELS: Record<string, string> = {
  angular_streaking: 'Angular streaking',
  bicircular: 'Bicircular ω + 2ω',
  two_color_phase: 'Two-colour phase scan',
  image: 'Single image',
};

export function stepAxisLabel(quantity: string | null | undefined, units: string | null | undefined): string {
  const q = STEP_QUANTITY_LABELS[quantity ?? ''] ?? quantity ?? 'Step';
  const u = displayUnits(units);
  return u && u !== '1' ? `${q} (${u})` : q;
}

/** Units as written in scan files (FORMATS.md keeps ASCII, e.g. `W/cm^2`, `uJ`) in their display form. */
export function displayUnits(units: string | null | undefined): string | null | undefined {
  return units === 'W/cm^2' ? 'W/cm²' : units === 'uJ' ? 'µJ' : units;
}

/** `7.91 ± 0.12°` style text; digits of the value follow the error (two significant digits of the error). */
export function valueWithError(v: number | null | undefined, err: number | null | undefined, unit = ''): string {
  if (v == null || !Number.isFinite(v)) return '—';
  if (err == null || !Number.isFinite(err) || err <= 0) return `${formatNumber(v, 4)}${unit}`;
  const decimals = Math.max(0, Math.min(8, 1 - Math.floor(Math.log10(err))));
  if (Math.abs(v) >= 1e5 || Math.abs(err) >= 1e5) return `${formatNumber(v, 4)} ± ${formatNumber(err, 2)}${unit}`;
  return `${v.toFixed(decimals)} ± ${err.toFixed(decimals)}${unit}`;
}

/** Human names of the default phase-scan regions of reduction/regions.ts; other names are the user's own. */
export const PHASE_REGION_LABELS: Record<string, string> = {
  all: 'whole image',
  px_positive: 'p_x > 0',
  px_negative: 'p_x < 0',
};

export const regionLabel = (name: string) => PHASE_REGION_LABELS[name] ?? name;

/** Below this relative contrast A₁/A₀ the phase of maximum yield carries no information. */
export const MIN_PHASE_CONTRAST = 0.005;

/**
 * `φ₀ = −1.35 rad, contrast 0.273` with a true minus sign, or the plain statement that there is no modulation to
 * take a phase from.
 */
export function phaseText(phaseRad: number, contrast: number): string {
  if (!Number.isFinite(contrast) || contrast < MIN_PHASE_CONTRAST) return 'phase undefined (no modulation)';
  return `φ₀ = ${phaseRad.toFixed(2).replace('-', '−')} rad, contrast ${contrast.toFixed(3)}`;
}

export const HARTREE_EV = 27.211386245988; // CODATA 2018 (SCIENCE.md §1.1)
