// The peak model of one lobe on the angular distribution, for display.
import type { AnalysisSettings } from '@/reduction/formats';

function wrap180(d: number): number {
  return ((((d + 180) % 360) + 360) % 360) - 180;
}

/**
 * The peak model of one lobe for display: centre and width as fitted by the reduction, height and constant base
 * re-fitted here by linear least squares to the unsmoothed distribution inside ±fit_half_width.
 */
export function lobeModelCurve(
  theta: number[],
  y: number[],
  centre: number,
  width: number,
  halfWidth: number,
  model: AnalysisSettings['peak_model'],
): { x: number; y: number }[] {
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
    if (Math.abs(wrap180(t - centre)) > halfWidth) return;
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
 * The model of `lobeModelCurve` cut into pieces that are contiguous on the −180…180° axis: a lobe within
 * fit_half_width of ±180° has one piece at each end of the axis (drawn as one line it would cross the whole plot).
 */
export function lobeModelSegments(
  theta: number[],
  y: number[],
  centre: number,
  width: number,
  halfWidth: number,
  model: AnalysisSettings['peak_model'],
): { x: number; y: number }[][] {
  const curve = lobeModelCurve(theta, y, centre, width, halfWidth, model);
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
