'use client';
// Two-colour phase scans: the per-pixel maps (mean yield, modulation amplitude, phase of maximum yield on a cyclic
// colour map, relative contrast) and yield-versus-phase curves for regions the user draws on the map or picks from
// the result's regions.
import { useQuery } from '@tanstack/react-query';
import { useMemo, useState } from 'react';
import { compass, tidepool } from '@/components/plots/colormaps';
import { type DataRect, Heatmap } from '@/components/plots/heatmap';
import { formatNumber } from '@/components/plots/scales';
import { XYPlot } from '@/components/plots/xy-plot';
import { Button, ErrorState, LoadingBlock } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import type { LobelineResult } from '@/reduction/formats';
import { phaseText, regionLabel } from './format';
import { decodeFloat32, type ImageResponse, type RegionResponse } from './types';

const MAPS = [
  { kind: 'mean', label: 'Mean yield A₀', unit: 'counts' },
  { kind: 'amplitude', label: 'Modulation amplitude A₁', unit: 'counts' },
  { kind: 'phase_of_max', label: 'Phase of maximum φ₀', unit: 'rad' },
  { kind: 'contrast', label: 'Contrast A₁/A₀', unit: '1' },
] as const;
type MapKind = (typeof MAPS)[number]['kind'];

// The result's own regions (dashed): ink-800, lobe-500 and flare-500 of tailwind.config.ts.
const PICKED_COLORS = ['#253043', '#179f92', '#e3770c'];
// Regions drawn by the user (solid): data colours that differ from the three above, then flare-700 and lobe-700.
const REGION_COLORS = ['#5b86cf', '#c266a8', '#98923a', '#9b3d0a', '#116661'];

interface DrawnRegion extends DataRect {
  name: string;
}

export function PhasePanel({ scanId, resultId, result }: { scanId: number; resultId: number; result: LobelineResult }) {
  const [kind, setKind] = useState<MapKind>('phase_of_max');
  const [mode, setMode] = useState<'zoom' | 'region'>('zoom');
  const [regions, setRegions] = useState<DrawnRegion[]>([]);
  const q = useQuery({
    queryKey: ['scan-image', scanId, resultId, kind],
    queryFn: () => apiFetch<ImageResponse>(`/api/scans/${scanId}/image?kind=${kind}&resultId=${resultId}&max=256`),
    staleTime: Number.POSITIVE_INFINITY,
  });
  const image = useMemo(
    () =>
      q.data
        ? {
            nx: q.data.nx,
            ny: q.data.ny,
            data: decodeFloat32(q.data.data),
            xRange: q.data.pxRange,
            yRange: q.data.pyRange,
          }
        : null,
    [q.data],
  );
  const meta = MAPS.find((m) => m.kind === kind)!;
  const phase = result.phase;
  return (
    <div className="space-y-6" data-testid="phase-panel">
      <div className="flex flex-wrap items-center gap-2">
        <fieldset className="inline-flex flex-wrap overflow-hidden rounded-md ring-1 ring-ink-200" aria-label="Map">
          {MAPS.map((m) => (
            <button
              key={m.kind}
              type="button"
              aria-pressed={kind === m.kind}
              onClick={() => setKind(m.kind)}
              className={`px-2.5 py-1 text-micro font-medium ${kind === m.kind ? 'bg-ink-800 text-white' : 'bg-white text-ink-700 hover:bg-ink-50'}`}
            >
              {m.label}
            </button>
          ))}
        </fieldset>
        <Button
          size="sm"
          variant={mode === 'region' ? 'primary' : 'secondary'}
          onClick={() => setMode(mode === 'region' ? 'zoom' : 'region')}
        >
          {mode === 'region' ? 'Drawing regions: drag on the map' : 'Draw a region'}
        </Button>
        {regions.length ? (
          <Button size="sm" variant="ghost" onClick={() => setRegions([])}>
            Clear drawn regions
          </Button>
        ) : null}
      </div>
      {q.isPending ? <LoadingBlock lines={8} /> : null}
      {q.isError ? <ErrorState message={q.error.message} onRetry={() => q.refetch()} /> : null}
      {image ? (
        <Heatmap
          data-testid={`phase-map-${kind}`}
          image={image}
          colormap={kind === 'phase_of_max' ? compass : tidepool}
          scale="linear"
          valueRange={
            kind === 'phase_of_max'
              ? [-Math.PI, Math.PI]
              : kind === 'contrast'
                ? [0, Math.max(0.05, Math.min(1, q.data?.max ?? 1))]
                : undefined
          }
          colorbarTicks={
            kind === 'phase_of_max'
              ? [
                  { value: -Math.PI, label: '−π' },
                  { value: -Math.PI / 2, label: '−π/2' },
                  { value: 0, label: '0' },
                  { value: Math.PI / 2, label: 'π/2' },
                  { value: Math.PI, label: 'π' },
                ]
              : undefined
          }
          valueLabel={`${meta.label} (${meta.unit})`}
          mode={mode}
          onRegion={(r) =>
            setRegions((rs) => [...rs, { ...r, name: `region ${rs.length + 1}` }].slice(-REGION_COLORS.length))
          }
          overlay={(toPx) => (
            <g>
              {regions.map((r, i) => {
                const [x0, y1] = toPx(r.x0, r.y1);
                const [x1, y0] = toPx(r.x1, r.y0);
                const color = REGION_COLORS[i % REGION_COLORS.length];
                return (
                  <g key={r.name}>
                    <rect x={x0} y={y1} width={x1 - x0} height={y0 - y1} fill="none" stroke={color} strokeWidth={2} />
                    <text x={x0 + 3} y={y1 + 12} fill={color} className="text-[11px] font-semibold">
                      {r.name}
                    </text>
                  </g>
                );
              })}
            </g>
          )}
        />
      ) : null}
      {kind === 'phase_of_max' ? (
        <p className="text-micro text-ink-500">
          φ₀ is the relative phase of maximum yield in Y = A₀ + A₁ cos(φ − φ₀), shown on a cyclic colour map (−π and π
          meet). Cells with too few counts are left blank; φ₀ means little where A₁ is small.
        </p>
      ) : null}
      <RegionCurves scanId={scanId} resultId={resultId} drawn={regions} result={result} />
      {phase ? (
        <p className="text-micro text-ink-500">
          Method {phase.method}, {phase.n_phases} phases over {formatNumber(phase.periods, 4)} period
          {Math.round(phase.periods) === 1 ? '' : 's'}.
        </p>
      ) : null}
    </div>
  );
}

function RegionCurves({
  scanId,
  resultId,
  drawn,
  result,
}: {
  scanId: number;
  resultId: number;
  drawn: DrawnRegion[];
  result: LobelineResult;
}) {
  const queries = useQuery({
    queryKey: ['scan-regions', scanId, resultId, drawn.map((r) => [r.x0, r.x1, r.y0, r.y1])],
    enabled: drawn.length > 0,
    queryFn: () =>
      Promise.all(
        drawn.map((r) =>
          apiFetch<RegionResponse>(
            `/api/scans/${scanId}/region?resultId=${resultId}&px0=${r.x0}&px1=${r.x1}&py0=${r.y0}&py1=${r.y1}`,
          ),
        ),
      ),
    staleTime: Number.POSITIVE_INFINITY,
  });
  const picked = result.phase?.regions ?? [];
  const series = [
    ...picked.map((r, i) => ({
      id: `picked-${r.name}`,
      label: `${regionLabel(r.name)}, from the result: ${phaseText(r.phase_of_max_rad, r.contrast)}`,
      color: PICKED_COLORS[i % PICKED_COLORS.length] as string,
      mode: 'both' as const,
      dashed: true,
      points: r.phase_rad.map((p, k) => ({ x: p, y: (r.yield[k] as number) / (r.a0 || 1) })),
    })),
    ...(queries.data ?? []).map((d, i) => {
      const phaseOf = (v: number) => v; // step values are the relative phase for phase scans
      const mean = d.yields.reduce((a, b) => a + b, 0) / (d.yields.length || 1);
      return {
        id: `drawn-${i}`,
        label: `${drawn[i]?.name} (${d.cells} cells)`,
        color: REGION_COLORS[i % REGION_COLORS.length] as string,
        mode: 'both' as const,
        points: d.values.map((v, k) => ({ x: phaseOf(v), y: (d.yields[k] as number) / (mean || 1) })),
      };
    }),
  ];
  const qty = result.input.step_quantity;
  return (
    <div>
      <h3 className="mb-1 text-small font-semibold text-ink-800">Yield versus phase</h3>
      {series.length === 0 ? (
        <p className="text-small text-ink-500">Draw a region on a map to see its yield against the relative phase.</p>
      ) : (
        <XYPlot
          data-testid="yield-vs-phase"
          xLabel={qty === 'delay' ? 'delay (fs)' : 'relative ω–2ω phase φ (rad)'}
          yLabel="yield / mean yield of the region"
          series={series}
        />
      )}
      {queries.isError ? <ErrorState message={queries.error.message} onRetry={() => queries.refetch()} /> : null}
    </div>
  );
}
