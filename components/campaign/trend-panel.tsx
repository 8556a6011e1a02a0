'use client';
// Campaign trend: offset angle (or radius, or intensity from the radius) against the scanned quantity or the
// calibrated intensity, for every step of the latest result of each reduced scan, with 1σ error bars.
import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { XYPlot } from '@/components/plots/xy-plot';
import { stepAxisLabel } from '@/components/scans/format';
import { EmptyState, ErrorState, LoadingBlock } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
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

const PALETTE = ['#0f8077', '#e3770c', '#5b86cf', '#c266a8', '#98923a', '#253043'];

export function TrendPanel({ campaignId }: { campaignId: number }) {
  const [yKey, setYKey] = useState<YKey>('offset');
  const [xKey, setXKey] = useState<'step' | 'intensity'>('step');
  const q = useQuery({
    queryKey: ['campaign-trend', campaignId],
    queryFn: () => apiFetch<{ points: TrendPointDto[] }>(`/api/campaigns/${campaignId}/trends`),
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
  const scans = [...byScan.entries()].slice(0, 24);
  const series = scans.map(([scanId, pts], i) => ({
    id: String(scanId),
    label: pts[0]?.scanTitle ?? `scan ${scanId}`,
    color: PALETTE[i % PALETTE.length] as string,
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
      {!series.some((sr) => sr.points.some((pt) => Number.isFinite(pt.x) && Number.isFinite(pt.y))) ? (
        <EmptyState title={`No ${y.label.replace(/ \(.*\)$/, '')} to plot`}>
          {quantity === 'relative_phase'
            ? 'Two-colour phase scans are summarised by their per-pixel phase maps and drawn-region curves on each scan’s page; this quantity has no value for them.'
            : 'None of the reduced steps has this quantity against this axis; choose another above.'}
        </EmptyState>
      ) : (
        <XYPlot
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
      )}
      <p className="mt-1 text-micro text-ink-500">
        One marker per step of each scan&apos;s latest result; bars are one standard deviation (Poisson bootstrap).
        Hollow markers: flagged scans.
        {byScan.size > scans.length ? ` Showing ${scans.length} of ${byScan.size} scans.` : ''}
      </p>
    </div>
  );
}
