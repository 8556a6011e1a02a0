// Small helpers for the SVG and canvas plots: linear scales and "nice" tick values.

export interface LinearScale {
  (v: number): number;
  domain: [number, number];
  range: [number, number];
  invert(px: number): number;
}

export function linearScale(domain: [number, number], range: [number, number]): LinearScale {
  const [d0, d1] = domain;
  const [r0, r1] = range;
  const span = d1 - d0 || 1;
  const f = ((v: number) => r0 + ((v - d0) / span) * (r1 - r0)) as LinearScale;
  f.domain = domain;
  f.range = range;
  f.invert = (px: number) => d0 + ((px - r0) / (r1 - r0 || 1)) * span;
  return f;
}

/** About `count` round tick values covering [lo, hi]. */
export function niceTicks(lo: number, hi: number, count = 5): number[] {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return [];
  if (hi < lo) [lo, hi] = [hi, lo];
  if (hi === lo) return [lo];
  const raw = (hi - lo) / Math.max(1, count);
  const mag = 10 ** Math.floor(Math.log10(raw));
  const norm = raw / mag;
  const step = (norm >= 5 ? 10 : norm >= 2 ? 5 : norm >= 1 ? 2 : 1) * mag;
  const start = Math.ceil(lo / step - 1e-9) * step;
  const out: number[] = [];
  for (let v = start; v <= hi + step * 1e-9; v += step) out.push(Math.abs(v) < step * 1e-9 ? 0 : v);
  return out;
}

/** Number text for axes and tables: the one formatter of lib/format.ts (e.g. 2.5×10¹⁴, 0.012, 1250). */
export { formatNumber } from '@/lib/format';

/** Padded [min, max] of finite values (with optional error bars). */
export function extent(values: number[], errors?: (number | null)[], pad = 0.06): [number, number] {
  let lo = Number.POSITIVE_INFINITY;
  let hi = Number.NEGATIVE_INFINITY;
  values.forEach((v, i) => {
    if (!Number.isFinite(v)) return;
    const e = errors?.[i] ?? 0;
    const ee = e != null && Number.isFinite(e) ? e : 0;
    lo = Math.min(lo, v - ee);
    hi = Math.max(hi, v + ee);
  });
  if (!Number.isFinite(lo)) return [0, 1];
  if (lo === hi) return [lo - 1, hi + 1];
  const p = (hi - lo) * pad;
  return [lo - p, hi + p];
}

/** A base-10 logarithmic scale of a positive domain; `invert` maps back. Values ≤ 0 map to NaN. */
export function logScale(domain: [number, number], range: [number, number]): LinearScale {
  const l0 = Math.log10(domain[0]);
  const l1 = Math.log10(domain[1]);
  const lin = linearScale([l0, l1], range);
  const f = ((v: number) => (v > 0 ? lin(Math.log10(v)) : Number.NaN)) as LinearScale;
  f.domain = domain;
  f.range = range;
  f.invert = (px: number) => 10 ** lin.invert(px);
  return f;
}

/** [min, max] of the positive finite values, widened to whole decades when they span less than one. */
export function positiveExtent(values: number[]): [number, number] | null {
  let lo = Number.POSITIVE_INFINITY;
  let hi = 0;
  for (const v of values) {
    if (!Number.isFinite(v) || v <= 0) continue;
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  if (!Number.isFinite(lo)) return null;
  const a = Math.log10(lo);
  const b = Math.log10(hi);
  if (b - a < 1) {
    const d0 = Math.floor(a);
    const d1 = Math.max(d0 + 1, Math.ceil(b));
    return [10 ** d0, 10 ** d1];
  }
  return [10 ** (a - 0.05 * (b - a)), 10 ** (b + 0.05 * (b - a))];
}

/** Ticks of a log axis: every decade, with 2 and 5 between them when the domain spans three decades or fewer. */
export function logTicks(lo: number, hi: number): number[] {
  if (!(lo > 0) || !(hi > lo)) return [];
  const out: number[] = [];
  const d0 = Math.floor(Math.log10(lo));
  const d1 = Math.ceil(Math.log10(hi));
  const steps = d1 - d0 <= 3 ? [1, 2, 5] : [1];
  for (let d = d0; d <= d1; d++) {
    for (const m of steps) {
      const v = m * 10 ** d;
      // rounding like 3e-7 * 1 = 2.9999999999999997e-7 is removed by toPrecision
      const clean = Number(v.toPrecision(12));
      if (clean >= lo * (1 - 1e-9) && clean <= hi * (1 + 1e-9)) out.push(clean);
    }
  }
  return out;
}
