// Small display helpers of the shift page.
export { formatBytes } from '@/lib/format';

export function formatDuration(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds < 0) return '—';
  if (seconds < 60) return `${Math.ceil(seconds)} s`;
  const m = Math.floor(seconds / 60);
  if (m < 60) return `${m} min ${Math.round(seconds % 60)} s`;
  return `${Math.floor(m / 60)} h ${m % 60} min`;
}

export function formatRate(bytesPerSecond: number): string {
  if (!Number.isFinite(bytesPerSecond) || bytesPerSecond <= 0) return '—';
  const mb = bytesPerSecond / (1024 * 1024);
  return mb >= 1 ? `${mb.toFixed(mb >= 100 ? 0 : 1)} MiB/s` : `${(bytesPerSecond / 1024).toFixed(0)} KiB/s`;
}

export const KIND_WORDS: Record<string, string> = {
  angular_streaking: 'Angular streaking',
  bicircular: 'Bicircular (ω + 2ω)',
  two_color_phase: 'Two-colour phase',
  image: 'Single image',
};
