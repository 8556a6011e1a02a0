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
  const u = units === 'W/cm^2' ? 'W/cm²' : units === 'uJ' ? 'µJ' : units;
  return u && u !== '1' ? `${q} (${u})` : q;
}

/** `7.91 ± 0.12°` style text; digits of the value follow the error (two significant digits of the error). */
export function valueWithError(v: number | null | undefined, err: number | null | undefined, unit = ''): string {
  if (v == null || !Number.isFinite(v)) return '—';
  if (err == null || !Number.isFinite(err) || err <= 0) return `${formatNumber(v, 4)}${unit}`;
  const decimals = Math.max(0, Math.min(8, 1 - Math.floor(Math.log10(err))));
  if (Math.abs(v) >= 1e5 || Math.abs(err) >= 1e5) return `${formatNumber(v, 4)} ± ${formatNumber(err, 2)}${unit}`;
  return `${v.toFixed(decimals)} ± ${err.toFixed(decimals)}${unit}`;
}

export function formatBytes(n: number | null | undefined): string {
  if (n == null) return '—';
  const u = ['B', 'kB', 'MB', 'GB', 'TB'];
  let i = 0;
  let v = n;
  while (v >= 1000 && i < u.length - 1) {
    v /= 1000;
    i++;
  }
  return `${v.toFixed(i === 0 ? 0 : 1)} ${u[i]}`;
}

export function formatDate(iso: string | null | undefined): string {
  if (!iso) return '—';
  const d = new Date(iso);
  return d.toLocaleString('en-GB', {
    year: 'numeric',
    month: 'short',
    day: '2-digit',
    hour: '2-digit',
    minute: '2-digit',
  });
}

export const HARTREE_EV = 27.211386245988; // CODATA 2018 (SCIENCE.md §1.1)
