'use client';
// Campaign trend: offset angle (or radius, or intensity from the radius) against the scanned quantity or the
// calibrated intensity, for every step of the latest result of each reduced scan, with 1σ error bars; linear or log
// axes; the table as CSV and the figure as SVG or PNG.
import { useQuery } from '@tanstack/react-query';
import { useRef, useState } from 'react';
import { seriesStyle } from '@/components/plots/series-styles';
import { type AxisScale, XYPlot } from '@/components/plots/xy-plot';
import { stepAxisLabel } from '@/components/scans/format';
import { Button, EmptyState, ErrorState, LoadingBlock } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import { campaignKeys, FOLLOW_INTERVAL_MS } from './query-keys';
import { downloadBlob, svgToPngBlob, svgToStandalone, trendCsv } from './trend-export';
import type { TrendPointDto } from './types';

const Y = {
  offset: {
    label: 'offset angle (deg)',
    value: (p: TrendPointDto) => p.offsetDeg,
    err: (p: TrendPointDto) => p.offsetErrDeg,
  },
  radius: {
    label: 'lobe radius |p| (a.u.)',
    value: (p: TrendPointDto) => p.radiusAu,
    err: (p: TrendPointDto) => p.radiusErrAu,
  },
  intensity: {
    label: 'intensity from the radius (W/cm²)',
    value: (p: TrendPointDto) => p.intensityWcm2,
    err: (p: TrendPointDto) => p.intensityErrWcm2,
  },
  shift: { label: 'transverse shift (a.u.)', value: (p: TrendPointDto) => p.transverseShiftAu, err: () => null },
} as const;
type YKey = keyof typeof Y;

/** At most this many scans are drawn (35 would still get distinct colour–shape pairs; 24 stay readable). */
const MAX_SCANS = 24;

export function TrendPanel({ campaignId, following = false }: { campaignId: number; following?: boolean }) {
  const [yKey, setYKey] = useState<YKey>('offset');
  const [xKey, setXKey] = useState<'step' | 'intensity'>('step');
  const [xScale, setXScale] = useState<AxisScale>('linear');
  const [yScale, setYScale] = useState<AxisScale>('linear');
  const [exportProblem, setExportProblem] = useState<string | null>(null);
  const plotBox = useRef<HTMLDivElement>(null);
  const q = useQuery({
    queryKey: campaignKeys.trend(campaignId),
    queryFn: () => apiFetch<{ points: TrendPointDto[] }>(`/api/campaigns/${campaignId}/trends`),
    // while the campaign has scans with the worker, the trend follows them like the table beside it
    refetchInterval: following ? FOLLOW_INTERVAL_MS : false,
  });
  if (q.isPending) return <LoadingBlock lines={5} />;
  if (q.isError) return <ErrorState message={q.error.message} onRetry={() => q.refetch()} />;
  const points = q.data.points;
  if (!points.length) {
    return <EmptyState title="No reduced scans yet">The trend appears when the first scans are reduced.</EmptyState>;
  }
  const quantities = [...new Set(points.map((p) => p.stepQuantity ?? 'index'))];
  const quantity = quantities[0] ?? 'index';
  const byScan = new Map<number, TrendPointDto[]>();
  for (const p of points) byScan.set(p.scanId, [...(byScan.get(p.scanId) ?? []), p]);
  const y = Y[yKey];
  const xOf = (p: TrendPointDto) => (xKey === 'intensity' ? p.intensityWcm2 : p.value);
  // the most recent scans (the trend is what the campaign is doing now); scan ids grow with time
  const scans = [...byScan.entries()].sort((a, b) => a[0] - b[0]).slice(-MAX_SCANS);
  const series = scans.map(([scanId, pts], i) => ({
    id: String(scanId),
    label: pts[0]?.scanTitle ?? `scan ${scanId}`,
    color: seriesStyle(i).color,
    shape: seriesStyle(i).shape,
    mode: 'both' as const,
    width: 1,
    points: pts.map((p) => ({
      x: xOf(p) ?? Number.NaN,
      y: y.value(p) ?? Number.NaN,
      yErr: y.err(p),
      hollow: p.flagged,
      title: `${p.scanTitle ?? `scan ${p.scanId}`}, step ${p.stepIndex}`,
    })),
  }));
  const sel = 'rounded border border-ink-200 bg-white px-2 py-1 text-small';
  const shown = scans.flatMap(([, pts]) => pts);
  const fileStem = `campaign-${campaignId}-${yKey}-vs-${xKey}`;
  const svgNow = () => plotBox.current?.querySelector('figure svg') as SVGSVGElement | null;
  const exportCsv = () =>
    downloadBlob(new Blob([trendCsv(shown, xKey)], { type: 'text/csv;charset=utf-8' }), `${fileStem}.csv`);
  const exportSvg = () => {
    const svg = svgNow();
    if (!svg) return;
    downloadBlob(new Blob([svgToStandalone(svg)], { type: 'image/svg+xml' }), `${fileStem}.svg`);
  };
  const exportPng = async () => {
    const svg = svgNow();
    if (!svg) return;
    setExportProblem(null);
    try {
      downloadBlob(await svgToPngBlob(svg, 2), `${fileStem}.png`);
    } catch {
      setExportProblem('The PNG could not be made in this browser; the SVG export has the same figure.');
    }
  };
  const scaleToggle = (label: string, value: AxisScale, set: (v: AxisScale) => void) => (
    <fieldset className="inline-flex items-center gap-1.5" aria-label={`${label} axis scale`}>
      <span>{label}</span>
      <span className="inline-flex overflow-hidden rounded-md ring-1 ring-ink-200">
        {(['linear', 'log'] as const).map((v) => (
          <button
            key={v}
            type="button"
            aria-pressed={value === v}
            data-testid={`${label.toLowerCase()}-scale-${v}`}
            onClick={() => set(v)}
            className={`px-2 py-0.5 text-micro font-medium ${value === v ? 'bg-ink-800 text-white' : 'bg-white text-ink-700 hover:bg-ink-50'}`}
          >
            {v}
          </button>
        ))}
      </span>
    </fieldset>
  );
  const hidden = (axis: 'x' | 'y') =>
    shown.filter((p) => {
      const v = axis === 'x' ? xOf(p) : y.value(p);
      return v != null && Number.isFinite(v) && v <= 0;
    }).length;
  const hiddenCount = (xScale === 'log' ? hidden('x') : 0) + (yScale === 'log' ? hidden('y') : 0);
  return (
    <div data-testid="trend-panel">
      <div className="mb-2 flex flex-wrap items-center gap-3 text-small text-ink-700">
        <label>
          Show{' '}
          <select className={sel} value={yKey} onChange={(e) => setYKey(e.target.value as YKey)}>
            <option value="offset">offset angle</option>
            <option value="radius">lobe radius</option>
            <option value="intensity">intensity from the radius</option>
            <option value="shift">transverse shift</option>
          </select>
        </label>
        <label>
          against{' '}
          <select className={sel} value={xKey} onChange={(e) => setXKey(e.target.value as 'step' | 'intensity')}>
            <option value="step">the scanned quantity ({stepAxisLabel(quantity, null).toLowerCase()})</option>
            <option value="intensity">the calibrated intensity (from the lobe radius)</option>
          </select>
        </label>
        {quantities.length > 1 ? (
          <span className="text-flare-700">Scans scan different quantities; the x axis mixes them.</span>
        ) : null}
      </div>
      <div className="mb-2 flex flex-wrap items-center gap-4 text-small text-ink-700">
        {scaleToggle('X', xScale, setXScale)}
        {scaleToggle('Y', yScale, setYScale)}
        <span className="ml-auto inline-flex flex-wrap gap-2" data-testid="trend-export">
          <Button size="sm" variant="secondary" onClick={exportCsv}>
            Table (CSV)
          </Button>
          <Button size="sm" variant="secondary" onClick={exportSvg}>
            Figure (SVG)
          </Button>
          <Button size="sm" variant="secondary" onClick={() => void exportPng()}>
            Figure (PNG)
          </Button>
        </span>
      </div>
      {hiddenCount ? (
        <p className="mb-1 text-micro text-flare-800" data-testid="log-hidden">
          {hiddenCount} value{hiddenCount === 1 ? ' is' : 's are'} zero or negative and not drawn on the log axis.
        </p>
      ) : null}
      {exportProblem ? (
        <p className="mb-1 text-micro text-fault-700" role="status">
          {exportProblem}
        </p>
      ) : null}
      {!series.some((sr) => sr.points.some((pt) => Number.isFinite(pt.x) && Number.isFinite(pt.y))) ? (
        <EmptyState title={`No ${y.label.replace(/ \(.*\)$/, '')} to plot`}>
          {quantity === 'relative_phase'
            ? 'Two-colour phase scans are summarised by their per-pixel phase maps and drawn-region curves on each scan’s page; this quantity has no value for them.'
            : 'None of the reduced steps has this quantity against this axis; choose another above.'}
        </EmptyState>
      ) : (
        <div ref={plotBox}>
          <XYPlot
            data-testid="trend-plot"
            xScale={xScale}
            yScale={yScale}
            xLabel={
              xKey === 'intensity'
                ? 'intensity from the lobe radius (W/cm², cycle-averaged total)'
                : stepAxisLabel(
                    quantity,
                    quantity === 'intensity'
                      ? 'W/cm^2'
                      : quantity === 'relative_phase'
                        ? 'rad'
                        : quantity === 'delay'
                          ? 'fs'
                          : null,
                  )
            }
            yLabel={y.label}
            series={series}
          />
        </div>
      )}
      <p className="mt-1 text-micro text-ink-500">
        One marker per step of each scan&apos;s latest result; bars are one standard deviation (Poisson bootstrap).
        Hollow markers: flagged scans.
        {byScan.size > scans.length ? ` Showing the latest ${scans.length} of ${byScan.size} scans.` : ''}
      </p>
    </div>
  );
}
