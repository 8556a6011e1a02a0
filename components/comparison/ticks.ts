// Tick labels of the comparison figures (issue 13).
import { formatNumber } from '@/components/plots/scales';

/**
 * Tick labels with as many digits as the tick spacing needs (1.000, 1.002 rather than 1, 1), in compact powers of ten
 * for very large or small values and on log axes.
 */
export function tickFormat(ticks: number[], log: boolean): (v: number) => string {
  if (log || ticks.length < 2) return (v) => formatNumber(v);
  const step = Math.abs((ticks[1] as number) - (ticks[0] as number));
  const biggest = Math.max(...ticks.map(Math.abs));
  if (!(step > 0) || biggest >= 1e5 || biggest < 1e-3) return (v) => formatNumber(v, 3);
  const decimals = Math.max(0, Math.min(8, -Math.floor(Math.log10(step) + 1e-9)));
  return (v) => (Math.abs(v) < step / 2 ? 0 : v).toFixed(decimals);
}
