// The peak model of one lobe on the angular distribution, for display.
import type { AnalysisSettings } from '@/reduction/formats';

function wrap180(d: number): number {
  return ((((d + 180) % 360) + 360) % 360) - 180;
}

/** A fit window: a half width about the lobe centre, or the window [lo, hi] (degrees) the reduction stored. */
export type FitWindow = number | readonly [number, number];

/**
 * The angular window the reduction fitted a lobe in: the stored `fit_window_deg` when the result has it (the joint
 * fit, whose window follows each lobe's width and its neighbours), else ±fit_half_width_deg of the settings — or
 * ±45° when the settings let the window follow the data, the half width the single-lobe fallback then uses.
 */
export function fittedWindow(
  lobe: { fit_window_deg?: [number, number] | null },
  settings: Pick<AnalysisSettings, 'fit_half_width_deg' | 'follow_data'>,
): FitWindow {
  const w = lobe.fit_window_deg;
  if (w && Number.isFinite(w[0]) && Number.isFinite(w[1]) && w[1] > w[0]) return w;
  return settings.follow_data?.fit_window ? 45 : settings.fit_half_width_deg;
}

/**
 * The peak model of one lobe for display: centre and width as fitted by the reduction, height and constant base
 * re-fitted here by linear least squares to the unsmoothed distribution inside the fit window (a half width about
 * the centre, or the stored [lo, hi], which may reach past ±180°).
 */
export function lobeModelCurve(
  theta: number[],
  y: number[],
  centre: number,
  width: number,
  window: FitWindow,
  model: AnalysisSettings['peak_model'],
): { x: number; y: number }[] {
  // the window as offsets from the centre: [−h, h] or the stored bounds relative to the centre
  const [lo, hi] = typeof window === 'number' ? [-window, window] : [window[0] - centre, window[1] - centre];
  const shape = (t: number) => {
    const d = wrap180(t - centre);
    if (model === 'von_mises') {
      const k = 1 / ((width * Math.PI) / 180) ** 2;
      return Math.exp(k * (Math.cos((d * Math.PI) / 180) - 1));
    }
    return Math.exp(-(d * d) / (2 * width * width));
  };
  let n = 0;
  let sf = 0;
  let sff = 0;
  let sy = 0;
  let sfy = 0;
  const inside: number[] = [];
  theta.forEach((t, i) => {
    const d = wrap180(t - centre);
    if (d < lo || d > hi) return;
    const f = shape(t);
    const v = y[i] as number;
    n++;
    sf += f;
    sff += f * f;
    sy += v;
    sfy += f * v;
    inside.push(i);
  });
  const det = n * sff - sf * sf;
  if (n < 3 || Math.abs(det) < 1e-12) return [];
  const A = (n * sfy - sf * sy) / det;
  const B = (sy - A * sf) / n;
  return inside.map((i) => ({ x: theta[i] as number, y: B + A * shape(theta[i] as number) }));
}

/**
 * The model of `lobeModelCurve` cut into pieces that are contiguous on the −180…180° axis: a lobe whose fit window
 * reaches past ±180° has one piece at each end of the axis (drawn as one line it would cross the whole plot).
 */
export function lobeModelSegments(
  theta: number[],
  y: number[],
  centre: number,
  width: number,
  window: FitWindow,
  model: AnalysisSettings['peak_model'],
): { x: number; y: number }[][] {
  const curve = lobeModelCurve(theta, y, centre, width, window, model);
  if (curve.length < 2) return curve.length ? [curve] : [];
  // the bin width of the distribution (theta is evenly spaced and ascending)
  const bin =
    theta.length > 1 ? Math.abs((theta[theta.length - 1] as number) - (theta[0] as number)) / (theta.length - 1) : 1;
  const out: { x: number; y: number }[][] = [[curve[0] as { x: number; y: number }]];
  for (let i = 1; i < curve.length; i++) {
    const p = curve[i] as { x: number; y: number };
    const prev = curve[i - 1] as { x: number; y: number };
    if (Math.abs(p.x - prev.x) > 1.5 * bin) out.push([]);
    (out[out.length - 1] as { x: number; y: number }[]).push(p);
  }
  return out;
}
