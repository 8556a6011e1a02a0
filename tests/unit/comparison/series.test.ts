/**
 * The comparison page's arithmetic (components/comparison/series.ts, export.ts): series grouping, what is drawn on a
 * log axis, the intensities sent to the models in the cycle-averaged total convention (SCIENCE.md §1.2: for
 * elliptical light the linear-equivalent intensity is I/(1 + ε²)), residuals in units of the error (worked by hand
 * below), and the CSV layout (RFC 4180: CRLF line ends, quoted fields with commas or quotes, quotes doubled).
 */
import { describe, expect, it } from 'vitest';
import { COMPARISON_CSV_COLUMNS, comparisonCsv } from '@/components/comparison/export';
import { buildSeries, modelRequests, residualTable, xAxisLabel, yAxisLabel } from '@/components/comparison/series';
import { type ComparisonPoint, comparisonSpecSchema, type ModelCurve } from '@/lib/comparison/spec';

function point(over: Partial<ComparisonPoint> & { scanId: number; stepIndex: number }): ComparisonPoint {
  return {
    campaignId: 1,
    campaignName: 'He 800 nm elliptical',
    teamId: 1,
    teamName: 'Angular streaking',
    scanTitle: `scan ${over.scanId}`,
    experimentKind: 'angular_streaking',
    target: 'He',
    wavelengthNm: 800,
    ellipticity: 0.87,
    helicity: 1,
    fieldRatio: null,
    flagged: false,
    stepQuantity: 'intensity',
    stepUnits: 'W/cm^2',
    stepValue: 2e14,
    offsetDeg: 6,
    offsetErrDeg: 0.5,
    offsetSysErrDeg: 0.2,
    transverseShiftAu: 0.01,
    radiusAu: 1,
    radiusErrAu: 0.01,
    radiusIntensityWcm2: 2e14,
    radiusIntensityErrWcm2: 1e12,
    provenance: {
      scanId: over.scanId,
      resultId: 100 + over.scanId,
      calibrationId: 5,
      calibrationVersion: 1,
      settingsId: 6,
      settingsVersion: 1,
      softwareVersion: '0.1.0',
      intensityConvention: 'cycle_averaged_total',
      statedConvention: 'cycle_averaged_total',
      conventionFactor: 1,
    },
    ...over,
  };
}

const spec = (over: Record<string, unknown> = {}) =>
  comparisonSpecSchema.parse({ selection: { campaignIds: [1] }, axes: { x: 'radius_intensity' }, ...over });

describe('series', () => {
  it('one series per campaign (team named when two teams are in), sorted along x; non-finite values are left out', () => {
    const pts = [
      point({ scanId: 1, stepIndex: 1, radiusIntensityWcm2: 4e14 }),
      point({ scanId: 1, stepIndex: 0, radiusIntensityWcm2: 2e14 }),
      point({ scanId: 2, stepIndex: 0, campaignId: 2, campaignName: 'Ar 800', teamId: 2, teamName: 'Phase' }),
      point({ scanId: 3, stepIndex: 0, offsetDeg: null }),
    ];
    const { series, left } = buildSeries(pts, spec());
    expect(series.map((s) => s.label)).toEqual(['He 800 nm elliptical (Angular streaking)', 'Ar 800 (Phase)']);
    expect(series[0]!.points.map((p) => p.x)).toEqual([2e14, 4e14]);
    expect(left.missing).toBe(1);
  });
  it('a log axis leaves out zero and negative values and counts them', () => {
    const pts = [point({ scanId: 1, stepIndex: 0, offsetDeg: -1 }), point({ scanId: 1, stepIndex: 1 })];
    const { series, left } = buildSeries(pts, spec({ axes: { x: 'radius_intensity', yScale: 'log' } }));
    expect(series[0]!.points.length).toBe(1);
    expect(left.notPositive).toBe(1);
  });
  it('series by calibration version and by ellipticity', () => {
    const pts = [
      point({ scanId: 1, stepIndex: 0 }),
      point({
        scanId: 2,
        stepIndex: 0,
        ellipticity: 0.6,
        provenance: { ...point({ scanId: 2, stepIndex: 0 }).provenance, calibrationId: 9, calibrationVersion: 2 },
      }),
    ];
    expect(buildSeries(pts, spec({ seriesBy: 'calibration' })).series.map((s) => s.label)).toEqual([
      'He 800 nm elliptical · calibration v1',
      'He 800 nm elliptical · calibration v2',
    ]);
    expect(buildSeries(pts, spec({ seriesBy: 'ellipticity' })).series.map((s) => s.label)).toEqual([
      'ε = 0.87',
      'ε = 0.6',
    ]);
  });
  it('the convention is written on an intensity axis', () => {
    expect(xAxisLabel('radius_intensity', [], 'linear_equivalent')).toMatch(/linear-equivalent/);
    expect(xAxisLabel('step', [point({ scanId: 1, stepIndex: 0 })], 'cycle_averaged_total')).toMatch(
      /stated intensity \(W\/cm², cycle-averaged/,
    );
    expect(yAxisLabel('offset', 'cycle_averaged_total')).toBe('offset angle (deg)');
  });
});

describe('models', () => {
  it('asks for total-convention intensities: a linear-equivalent 1×10¹⁴ at ε = 0.87 is 1.7569×10¹⁴ total', () => {
    const s = spec({ convention: 'linear_equivalent' });
    const { series } = buildSeries([point({ scanId: 1, stepIndex: 0, radiusIntensityWcm2: 1e14 })], s);
    const req = modelRequests(series, 'radius_intensity', 'linear_equivalent', () => []);
    expect(req).toHaveLength(1);
    expect(req[0]!.params).toMatchObject({ target: 'He', wavelengthNm: 800, ellipticity: 0.87 });
    expect(req[0]!.intensities[0]!).toBeCloseTo(1e14 * (1 + 0.87 ** 2), -6);
  });
  it('no model for a bicircular scan or an x axis that is not an intensity', () => {
    const { series } = buildSeries([point({ scanId: 1, stepIndex: 0, experimentKind: 'bicircular' })], spec());
    expect(modelRequests(series, 'radius_intensity', 'cycle_averaged_total', () => [])).toEqual([]);
    const phase = buildSeries(
      [point({ scanId: 1, stepIndex: 0, stepQuantity: 'ellipticity', stepValue: 0.5 })],
      spec({ axes: { x: 'step' } }),
    ).series;
    expect(modelRequests(phase, 'step', 'cycle_averaged_total', () => [])).toEqual([]);
  });
  it('residuals (data − model)/σ: offsets 6 ± 0.5 and 7 ± 0.5 against a model of 5° give 2 and 4 (by hand)', () => {
    const s = spec({ models: ['trajectory'] });
    const pts = [
      point({ scanId: 1, stepIndex: 0, radiusIntensityWcm2: 2e14, offsetDeg: 6 }),
      point({ scanId: 1, stepIndex: 1, radiusIntensityWcm2: 4e14, offsetDeg: 7, offsetSysErrDeg: 1.2 }),
    ];
    const { series } = buildSeries(pts, s);
    const curve: ModelCurve = {
      model: 'trajectory',
      label: 'x',
      assumptions: 'x',
      note: null,
      points: [
        { intensityWcm2: 2e14, offsetDeg: 5, radiusAu: null },
        { intensityWcm2: 4e14, offsetDeg: 5, radiusAu: null },
      ],
    };
    const rows = residualTable(series, ['trajectory'], new Map([['He|800|0.87', [curve]]]), s, 'cycle_averaged_total');
    expect(rows).toHaveLength(1);
    expect(rows[0]!.n).toBe(2);
    expect(rows[0]!.mean).toBeCloseTo(3, 12);
    // the same in degrees: (1 + 2)/2
    expect(rows[0]!.meanDiff).toBeCloseTo(1.5, 12);
    expect(rows[0]!.rms).toBeCloseTo(Math.sqrt((4 + 16) / 2), 12);
    expect(rows[0]!.worst).toBeCloseTo(4, 12);
    // with the systematic in quadrature: 1/√(0.25 + 0.04) and 2/√(0.25 + 1.44)
    const r1 = 1 / Math.sqrt(0.25 + 0.04);
    const r2 = 2 / Math.sqrt(0.25 + 1.44);
    expect(rows[0]!.rmsWithSys).toBeCloseTo(Math.sqrt((r1 ** 2 + r2 ** 2) / 2), 12);
  });
});

describe('CSV of the plotted points', () => {
  it('one row per drawn point with its provenance, RFC 4180 quoting, CRLF line ends', () => {
    const s = spec();
    const { series } = buildSeries(
      [point({ scanId: 1, stepIndex: 0, scanTitle: 'He, "first" scan' }), point({ scanId: 2, stepIndex: 0 })],
      s,
    );
    const csv = comparisonCsv(series, {
      title: 'Neon, two years',
      convention: 'cycle_averaged_total',
      spec: s,
      conversions: [],
      address: null,
    });
    const lines = csv.split('\r\n');
    expect(lines.at(-1)).toBe('');
    const header = lines.findIndex((l) => l.startsWith('series,'));
    expect(lines[header]).toBe(COMPARISON_CSV_COLUMNS.join(','));
    const rows = lines.slice(header + 1, -1);
    expect(rows).toHaveLength(2);
    expect(rows[0]).toContain('"He, ""first"" scan"');
    expect(rows[0]).toContain(',101,5,1,6,1,0.1.0,cycle_averaged_total,cycle_averaged_total,1');
  });
});

describe('calibration filter', () => {
  it('keeps only the chosen calibration versions (applied on the page, so the others stay on offer)', () => {
    const a = point({ scanId: 1, stepIndex: 0 });
    const b = point({ scanId: 2, stepIndex: 0, provenance: { ...a.provenance, calibrationId: 9, scanId: 2 } });
    const s = spec({ filters: { calibrationIds: [9] } });
    const { series } = buildSeries([a, b], s);
    expect(series.flatMap((x) => x.points.map((p) => p.point.scanId))).toEqual([2]);
    expect(buildSeries([a, b], spec()).series[0]!.points).toHaveLength(2);
  });
});
