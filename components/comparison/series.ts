// The comparison page's arithmetic (issue 13), pure so it is tested without a browser: which value of a point goes on
// each axis, how points fall into series, which model parameters each point needs, the model lines in the plot's
// convention, and residuals (data − model) in units of the error.
import type {
  ComparisonPoint,
  ComparisonSpec,
  ModelCurve,
  ModelName,
  SeriesBy,
  XQuantity,
  YQuantity,
} from '@/lib/comparison/spec';
import { CONVENTION_WORDS, conventionFactor, isConventionName } from '@/reduction/intensity-conventions';
import type { FigureSeries } from './comparison-figure';

// LABELS //

export const Y_LABELS: Record<YQuantity, { name: string; unit: string }> = {
  offset: { name: 'offset angle', unit: 'deg' },
  shift: { name: 'transverse shift', unit: 'a.u.' },
  radius: { name: 'lobe radius |p|', unit: 'a.u.' },
  radius_intensity: { name: 'in-situ intensity from the lobe radius', unit: 'W/cm²' },
};

export const SERIES_BY_LABELS: Record<SeriesBy, string> = {
  campaign: 'campaign',
  target: 'target',
  wavelength: 'wavelength',
  ellipticity: 'ellipticity',
  calibration: 'calibration version',
  scan: 'scan',
};

/** Axis title of x, with the intensity convention written on it when x is an intensity. */
export function xAxisLabel(x: XQuantity, points: ComparisonPoint[], convention: string): string {
  const conv = isConventionName(convention) ? CONVENTION_WORDS[convention] : convention;
  if (x === 'radius_intensity') return `in-situ intensity from the lobe radius (W/cm², ${conv})`;
  const quantities = [...new Set(points.map((p) => p.stepQuantity ?? 'index'))];
  if (quantities.length === 1 && quantities[0] === 'intensity') return `stated intensity (W/cm², ${conv})`;
  if (quantities.length === 1) {
    const units = points.find((p) => p.stepUnits)?.stepUnits;
    return `${quantities[0]!.replace('_', ' ')}${units && units !== '1' ? ` (${units})` : ''}`;
  }
  return `scanned value (${quantities.join(', ')}: mixed)`;
}

export function yAxisLabel(y: YQuantity, convention: string): string {
  const l = Y_LABELS[y];
  if (y === 'radius_intensity') {
    const conv = isConventionName(convention) ? CONVENTION_WORDS[convention] : convention;
    return `${l.name} (${l.unit}, ${conv})`;
  }
  return `${l.name} (${l.unit})`;
}

// VALUES //

/** Whether x is an intensity for this point (models are drawn against intensities only). */
export function xIsIntensity(x: XQuantity, p: ComparisonPoint): boolean {
  return x === 'radius_intensity' || p.stepQuantity === 'intensity';
}

export function xOf(p: ComparisonPoint, x: XQuantity): number | null {
  return x === 'radius_intensity' ? p.radiusIntensityWcm2 : p.stepValue;
}

export function xErrOf(p: ComparisonPoint, x: XQuantity): number | null {
  return x === 'radius_intensity' ? p.radiusIntensityErrWcm2 : null;
}

export function yOf(p: ComparisonPoint, y: YQuantity): { v: number | null; err: number | null; sys: number | null } {
  switch (y) {
    case 'offset':
      return { v: p.offsetDeg, err: p.offsetErrDeg, sys: p.offsetSysErrDeg };
    case 'shift':
      return { v: p.transverseShiftAu, err: null, sys: null };
    case 'radius':
      return { v: p.radiusAu, err: p.radiusErrAu, sys: null };
    default:
      return { v: p.radiusIntensityWcm2, err: p.radiusIntensityErrWcm2, sys: null };
  }
}

const fmt = (v: number | null, digits = 3) => (v === null ? '?' : String(Number(v.toPrecision(digits))));

export function seriesOf(p: ComparisonPoint, by: SeriesBy, manyTeams: boolean): { key: string; label: string } {
  switch (by) {
    case 'target':
      return { key: `t:${(p.target ?? '?').toLowerCase()}`, label: p.target ?? 'unknown target' };
    case 'wavelength':
      return { key: `w:${fmt(p.wavelengthNm, 4)}`, label: `${fmt(p.wavelengthNm, 4)} nm` };
    case 'ellipticity':
      return { key: `e:${fmt(p.ellipticity, 2)}`, label: `ε = ${fmt(p.ellipticity, 2)}` };
    case 'calibration':
      return {
        key: `c:${p.provenance.calibrationId}`,
        label: `${p.campaignName} · calibration v${p.provenance.calibrationVersion ?? '?'}`,
      };
    case 'scan':
      return { key: `s:${p.scanId}`, label: p.scanTitle ?? `scan ${p.scanId}` };
    default:
      return { key: `k:${p.campaignId}`, label: manyTeams ? `${p.campaignName} (${p.teamName})` : p.campaignName };
  }
}

// SERIES //

export interface PlottedPoint {
  x: number;
  /** σ of x where the result reports one (the in-situ intensity from the radius). */
  xErr: number | null;
  y: number;
  err: number | null;
  sys: number | null;
  point: ComparisonPoint;
}

export interface Series {
  key: string;
  label: string;
  points: PlottedPoint[];
}

/**
 * Points into series (in order of first appearance), keeping only points of the chosen calibration versions with a
 * finite x and y (and positive ones on a log axis): exactly what is drawn, and so exactly what the exports write.
 */
export function buildSeries(
  points: ComparisonPoint[],
  spec: Pick<ComparisonSpec, 'axes' | 'seriesBy'> & { filters?: Pick<ComparisonSpec['filters'], 'calibrationIds'> },
): { series: Series[]; left: { missing: number; notPositive: number } } {
  // the calibration filter is applied here rather than by the API, so that the versions left out stay on offer
  const calibrations = spec.filters?.calibrationIds ?? [];
  const manyTeams = new Set(points.map((p) => p.teamId)).size > 1;
  const byKey = new Map<string, Series>();
  let missing = 0;
  let notPositive = 0;
  for (const p of points) {
    if (calibrations.length && !calibrations.includes(p.provenance.calibrationId)) continue;
    const x = xOf(p, spec.axes.x);
    const y = yOf(p, spec.axes.y);
    if (x === null || y.v === null || !Number.isFinite(x) || !Number.isFinite(y.v)) {
      missing++;
      continue;
    }
    if ((spec.axes.xScale === 'log' && !(x > 0)) || (spec.axes.yScale === 'log' && !(y.v > 0))) {
      notPositive++;
      continue;
    }
    const s = seriesOf(p, spec.seriesBy, manyTeams);
    const entry = byKey.get(s.key) ?? { key: s.key, label: s.label, points: [] };
    entry.points.push({ x, xErr: xErrOf(p, spec.axes.x), y: y.v, err: y.err, sys: y.sys, point: p });
    byKey.set(s.key, entry);
  }
  for (const s of byKey.values()) s.points.sort((a, b) => a.x - b.x);
  return { series: [...byKey.values()], left: { missing, notPositive } };
}

// MODELS //

/** The parameters a model needs for a point, or null when no model applies (not elliptical light, unknown ε). */
export interface ModelParams {
  key: string;
  target: string;
  wavelengthNm: number;
  ellipticity: number;
}

export function modelParamsOf(p: ComparisonPoint): ModelParams | null {
  if (p.experimentKind !== 'angular_streaking' || !p.target || !p.wavelengthNm) return null;
  if (p.ellipticity === null || !(p.ellipticity > 0) || p.ellipticity > 1) return null;
  const eps = Number(p.ellipticity.toPrecision(3));
  const nm = Number(p.wavelengthNm.toPrecision(5));
  return { key: `${p.target}|${nm}|${eps}`, target: p.target, wavelengthNm: nm, ellipticity: eps };
}

/** Factor from the plot's convention to the cycle-averaged total that the models take (1 when they agree). */
export function toTotalFactor(convention: string, params: ModelParams): number | null {
  if (!isConventionName(convention)) return null;
  const f = conventionFactor(convention, 'cycle_averaged_total', {
    kind: 'angular_streaking',
    ellipticity: params.ellipticity,
    fieldRatio: null,
  });
  return f.ok ? f.factor : null;
}

/**
 * What to ask the models route for: per parameter set, the total-convention intensities of every plotted point that
 * has an intensity x (for residuals) plus `grid` log-spaced intensities across them (for the drawn line).
 */
export function modelRequests(
  series: Series[],
  x: XQuantity,
  convention: string,
  grid: (lo: number, hi: number) => number[],
): { params: ModelParams; intensities: number[] }[] {
  const byKey = new Map<string, { params: ModelParams; set: Set<number> }>();
  for (const s of series) {
    for (const pp of s.points) {
      if (!xIsIntensity(x, pp.point)) continue;
      const params = modelParamsOf(pp.point);
      if (!params) continue;
      const f = toTotalFactor(convention, params);
      if (f === null || !(pp.x > 0)) continue;
      const entry = byKey.get(params.key) ?? { params, set: new Set<number>() };
      entry.set.add(Number((pp.x * f).toPrecision(8)));
      byKey.set(params.key, entry);
    }
  }
  return [...byKey.values()].map(({ params, set }) => {
    const data = [...set].filter((v) => v >= 1e12 && v <= 1e16);
    const lo = Math.min(...data);
    const hi = Math.max(...data);
    const all = data.length ? [...new Set([...data, ...grid(lo * 0.9, hi * 1.1)])] : [];
    return {
      params,
      intensities: all
        .filter((v) => v >= 1e12 && v <= 1e16)
        .sort((a, b) => a - b)
        .slice(0, 200),
    };
  });
}

/**
 * A model's value at a total-convention intensity: on the requested list (exact match), or, for a model computed on
 * its own grid (the ensemble), interpolated linearly in log I between the two grid points around it (null outside).
 */
export function modelValueAt(curve: ModelCurve, intensityTotal: number, y: YQuantity): number | null {
  const pick = (pt: ModelCurve['points'][number]) =>
    y === 'offset' ? pt.offsetDeg : y === 'radius' ? pt.radiusAu : null;
  if (curve.state && curve.state !== 'done') return null;
  if (curve.sampling === 'grid') {
    const pts = curve.points.filter((p) => pick(p) !== null).sort((a, b) => a.intensityWcm2 - b.intensityWcm2);
    for (let i = 0; i + 1 < pts.length; i++) {
      const a = pts[i]!;
      const b = pts[i + 1]!;
      if (intensityTotal < a.intensityWcm2 || intensityTotal > b.intensityWcm2) continue;
      const t = Math.log(intensityTotal / a.intensityWcm2) / Math.log(b.intensityWcm2 / a.intensityWcm2);
      return pick(a)! + t * (pick(b)! - pick(a)!);
    }
    return null;
  }
  const k = Number(intensityTotal.toPrecision(8));
  const pt = curve.points.find((q) => Number(q.intensityWcm2.toPrecision(8)) === k);
  if (!pt) return null;
  return pick(pt);
}

/** The model's own statistical σ at an intensity (the ensemble's fit σ, interpolated like its value), else 0. */
export function modelErrAt(curve: ModelCurve, intensityTotal: number, y: YQuantity): number {
  if (y !== 'offset' || curve.sampling !== 'grid') return 0;
  const v = modelValueAt(
    { ...curve, points: curve.points.map((p) => ({ ...p, offsetDeg: p.offsetErrDeg ?? null })) },
    intensityTotal,
    'offset',
  );
  return v !== null && Number.isFinite(v) ? v : 0;
}

export interface ResidualRow {
  series: string;
  model: ModelName;
  n: number;
  /** Mean of (data − model)/σ_stat. */
  mean: number | null;
  /** Mean of data − model in the y quantity's own unit (Y_LABELS), e.g. degrees for the offset. */
  meanDiff: number | null;
  /** √(mean of squares) of (data − model)/σ_stat. */
  rms: number | null;
  /** Same with σ = √(σ_stat² + σ_sys²) where a systematic error is reported. */
  rmsWithSys: number | null;
  /** Largest |data − model|/σ_stat. */
  worst: number | null;
  /** Points without an error or a model value (not counted). */
  skipped: number;
}

/** Residuals per series and model, in units of the error. */
export function residualTable(
  series: Series[],
  models: ModelName[],
  curves: Map<string, ModelCurve[]>,
  spec: Pick<ComparisonSpec, 'axes'>,
  convention: string,
): ResidualRow[] {
  const rows: ResidualRow[] = [];
  for (const s of series) {
    for (const model of models) {
      const r: number[] = [];
      const rSys: number[] = [];
      const d: number[] = [];
      let skipped = 0;
      for (const pp of s.points) {
        const params = modelParamsOf(pp.point);
        const curve = params ? curves.get(params.key)?.find((c) => c.model === model) : undefined;
        const f = params ? toTotalFactor(convention, params) : null;
        const m =
          curve && f !== null && xIsIntensity(spec.axes.x, pp.point)
            ? modelValueAt(curve, pp.x * f, spec.axes.y)
            : null;
        if (m === null || pp.err === null || !(pp.err > 0)) {
          skipped++;
          continue;
        }
        // a model with its own scatter (the ensemble) adds its σ in quadrature
        const em = curve && f !== null ? modelErrAt(curve, pp.x * f, spec.axes.y) : 0;
        r.push((pp.y - m) / Math.sqrt(pp.err ** 2 + em ** 2));
        d.push(pp.y - m);
        rSys.push((pp.y - m) / Math.sqrt(pp.err ** 2 + em ** 2 + (pp.sys ?? 0) ** 2));
      }
      const mean = r.length ? r.reduce((a, b) => a + b, 0) / r.length : null;
      const rms = (v: number[]) => (v.length ? Math.sqrt(v.reduce((a, b) => a + b * b, 0) / v.length) : null);
      rows.push({
        series: s.label,
        model,
        n: r.length,
        mean,
        meanDiff: d.length ? d.reduce((a, b) => a + b, 0) / d.length : null,
        rms: rms(r),
        rmsWithSys: rms(rSys),
        worst: r.length ? Math.max(...r.map(Math.abs)) : null,
        skipped,
      });
    }
  }
  return rows;
}

/** Series as the figure draws them (components/comparison/comparison-figure.tsx). */
export function figureSeries(series: Series[]): FigureSeries[] {
  return series.map((s) => ({
    key: s.key,
    label: s.label,
    points: s.points.map((pp) => ({
      x: pp.x,
      y: pp.y,
      xErr: pp.xErr,
      err: pp.err,
      sys: pp.sys,
      id: `${pp.point.scanId}:${pp.point.stepIndex}`,
      title: `${s.label}: ${pp.point.scanTitle ?? `scan ${pp.point.scanId}`}, step ${pp.point.stepIndex}`,
      hollow: pp.point.flagged,
    })),
  }));
}
