// Exports of a comparison (issue 13): exactly the plotted points, with their provenance, as CSV (RFC 4180: CRLF line
// ends; fields with a comma, quote or line break quoted, quotes doubled; full precision) and as JSON; the figure is
// exported as SVG by the page (components/campaign/trend-export.ts svgToStandalone).
import type { ComparisonSpec, ModelCurve } from '@/lib/comparison/spec';
import type { ResidualRow, Series } from './series';

export const COMPARISON_CSV_COLUMNS = [
  'series',
  'x_quantity',
  'x',
  'x_stat_err',
  'y_quantity',
  'y',
  'y_stat_err',
  'y_sys_err',
  'campaign_id',
  'campaign',
  'team',
  'scan_id',
  'scan_title',
  'step_index',
  'target',
  'wavelength_nm',
  'ellipticity',
  'helicity',
  'step_quantity',
  'step_value',
  'offset_deg',
  'offset_err_deg',
  'offset_sys_err_deg',
  'transverse_shift_au',
  'radius_au',
  'radius_err_au',
  'radius_intensity_Wcm2',
  'radius_intensity_err_Wcm2',
  'flagged',
  'result_id',
  'calibration_id',
  'calibration_version',
  'settings_id',
  'settings_version',
  'software_version',
  'intensity_convention',
  'stated_convention',
  'convention_factor',
] as const;

function csvField(v: string | number | boolean | null | undefined): string {
  if (v === null || v === undefined) return '';
  const s = typeof v === 'number' ? (Number.isFinite(v) ? String(v) : '') : String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export interface ExportMeta {
  title: string;
  convention: string;
  spec: ComparisonSpec;
  conversions: string[];
  address: string | null;
}

export function comparisonCsv(series: Series[], meta: ExportMeta): string {
  const head = [
    `# Lobeline comparison: ${meta.title}`,
    `# intensity convention: ${meta.convention}; errors: one standard deviation (statistical), systematic apart`,
    ...(meta.address ? [`# saved at: ${meta.address}`] : []),
    ...meta.conversions.map((c) => `# ${c}`),
  ].map((l) => csvField(l.replace(/[\r\n]+/g, ' ')));
  const rows = series.flatMap((s) =>
    s.points.map((pp) => {
      const p = pp.point;
      const v = p.provenance;
      return [
        s.label,
        meta.spec.axes.x,
        pp.x,
        pp.xErr,
        meta.spec.axes.y,
        pp.y,
        pp.err,
        pp.sys,
        p.campaignId,
        p.campaignName,
        p.teamName,
        p.scanId,
        p.scanTitle,
        p.stepIndex,
        p.target,
        p.wavelengthNm,
        p.ellipticity,
        p.helicity,
        p.stepQuantity,
        p.stepValue,
        p.offsetDeg,
        p.offsetErrDeg,
        p.offsetSysErrDeg,
        p.transverseShiftAu,
        p.radiusAu,
        p.radiusErrAu,
        p.radiusIntensityWcm2,
        p.radiusIntensityErrWcm2,
        p.flagged,
        v.resultId,
        v.calibrationId,
        v.calibrationVersion,
        v.settingsId,
        v.settingsVersion,
        v.softwareVersion,
        v.intensityConvention,
        v.statedConvention,
        v.conventionFactor,
      ]
        .map(csvField)
        .join(',');
    }),
  );
  return `${[...head, COMPARISON_CSV_COLUMNS.join(','), ...rows].join('\r\n')}\r\n`;
}

export function comparisonJson(
  series: Series[],
  meta: ExportMeta,
  models: { key: string; curves: ModelCurve[] }[],
  residuals: ResidualRow[],
): string {
  return `${JSON.stringify(
    {
      format: 'lobeline.comparison',
      version: 1,
      title: meta.title,
      address: meta.address,
      intensity_convention: meta.convention,
      conversions: meta.conversions,
      spec: meta.spec,
      series: series.map((s) => ({
        label: s.label,
        points: s.points.map((pp) => ({
          x: pp.x,
          x_stat_err: pp.xErr,
          y: pp.y,
          y_stat_err: pp.err,
          y_sys_err: pp.sys,
          ...pp.point,
        })),
      })),
      models: models.map((m) => ({ parameters: m.key, curves: m.curves })),
      residuals,
    },
    null,
    2,
  )}\n`;
}
