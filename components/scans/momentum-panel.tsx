'use client';
// The calibrated momentum image of one step with the lobe maxima and the simple-man directions drawn over it.
import { useQuery } from '@tanstack/react-query';
import { useMemo, useState } from 'react';
import { tidepool } from '@/components/plots/colormaps';
import { Heatmap } from '@/components/plots/heatmap';
import { ErrorState, LoadingBlock } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import type { StepResult } from '@/reduction/formats';
import { viewsFor } from './kind-views';
import { decodeFloat32, type ImageResponse } from './types';

const LOBE = '#f99a25';
const SIMPLE_MAN = '#cff4ed';

export function MomentumPanel({
  scanId,
  resultId,
  step,
  kind,
}: {
  scanId: number;
  resultId: number;
  step: StepResult | null;
  /** The experiment kind: lobe and simple-man overlays only where lobes are measured. */
  kind: string;
}) {
  const views = viewsFor(kind);
  const [scale, setScale] = useState<'linear' | 'log'>('linear');
  const stepIndex = step?.index ?? 0;
  const q = useQuery({
    queryKey: ['scan-image', scanId, resultId, 'calibrated', stepIndex],
    queryFn: () =>
      apiFetch<ImageResponse>(
        `/api/scans/${scanId}/image?kind=calibrated&step=${stepIndex}&resultId=${resultId}&max=256`,
      ),
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
  return (
    <div>
      <div className="mb-2 flex flex-wrap items-center justify-between gap-2">
        <fieldset className="inline-flex overflow-hidden rounded-md ring-1 ring-ink-200" aria-label="Colour scale">
          {(['linear', 'log'] as const).map((s) => (
            <button
              key={s}
              type="button"
              aria-pressed={scale === s}
              onClick={() => setScale(s)}
              className={`px-2.5 py-1 text-micro font-medium ${scale === s ? 'bg-ink-800 text-white' : 'bg-white text-ink-700 hover:bg-ink-50'}`}
            >
              {s === 'linear' ? 'Linear' : 'Log'}
            </button>
          ))}
        </fieldset>
        <p className="text-micro text-ink-500">Drag a rectangle to zoom.</p>
      </div>
      {q.isPending ? <LoadingBlock lines={8} /> : null}
      {q.isError ? <ErrorState message={q.error.message} onRetry={() => q.refetch()} /> : null}
      {image ? (
        <Heatmap
          data-testid="momentum-image"
          image={image}
          colormap={tidepool}
          scale={scale}
          valueLabel={`counts per cell${q.data && q.data.binning > 1 ? ` (${q.data.binning}×${q.data.binning} summed)` : ''}`}
          overlay={(toPx, view) => {
            if (!step || !views.lobeOverlays) return null;
            const reach = Math.max(Math.abs(view.x0), Math.abs(view.x1), Math.abs(view.y0), Math.abs(view.y1)) * 1.5;
            const [ox, oy] = toPx(0, 0);
            return (
              <g>
                {step.radius_au ? (
                  <ellipse
                    cx={ox}
                    cy={oy}
                    rx={Math.abs(toPx(step.radius_au, 0)[0] - ox)}
                    ry={Math.abs(toPx(0, step.radius_au)[1] - oy)}
                    fill="none"
                    stroke="#ffffff"
                    strokeOpacity={0.35}
                    strokeDasharray="2 4"
                  />
                ) : null}
                {step.lobes.map((l) => {
                  if (l.expected_deg == null) return null;
                  const a = (l.expected_deg * Math.PI) / 180;
                  const [ex, ey] = toPx(reach * Math.cos(a), reach * Math.sin(a));
                  return (
                    <line
                      key={`sm${l.expected_deg}-${l.angle_deg}`}
                      x1={ox}
                      y1={oy}
                      x2={ex}
                      y2={ey}
                      stroke={SIMPLE_MAN}
                      strokeWidth={1.4}
                      strokeDasharray="7 5"
                    />
                  );
                })}
                {step.lobes.map((l) => {
                  const r = l.radius_au ?? step.radius_au;
                  if (r == null) return null;
                  const a = (l.angle_deg * Math.PI) / 180;
                  const [lx, ly] = toPx(r * Math.cos(a), r * Math.sin(a));
                  return (
                    <g key={`lobe${l.angle_deg}`}>
                      <line x1={ox} y1={oy} x2={lx} y2={ly} stroke={LOBE} strokeOpacity={0.7} strokeWidth={1} />
                      <circle cx={lx} cy={ly} r={6} fill="none" stroke={LOBE} strokeWidth={2} />
                      <line x1={lx - 9} x2={lx + 9} y1={ly} y2={ly} stroke={LOBE} strokeWidth={1.2} />
                      <line x1={lx} x2={lx} y1={ly - 9} y2={ly + 9} stroke={LOBE} strokeWidth={1.2} />
                    </g>
                  );
                })}
                <circle cx={ox} cy={oy} r={2} fill="#ffffff" />
              </g>
            );
          }}
        />
      ) : null}
      {views.lobeOverlays ? (
        <p
          className="mt-2 flex flex-wrap gap-x-4 gap-y-1 text-micro text-ink-600"
          data-testid="momentum-overlay-legend"
        >
          <span className="inline-flex items-center gap-1.5">
            <svg width="14" height="14" aria-hidden="true">
              <circle cx="7" cy="7" r="5" fill="none" stroke={LOBE} strokeWidth="2" />
            </svg>
            lobe maximum (fitted direction, at the lobe radius)
          </span>
          <span className="inline-flex items-center gap-1.5">
            <span
              className="inline-block h-0.5 w-5 bg-ink-400"
              style={{ background: 'repeating-linear-gradient(90deg,#5a6b80 0 5px,transparent 5px 8px)' }}
            />
            simple-man direction (−A at the field maximum)
          </span>
          <span>dotted ring: step radius</span>
        </p>
      ) : (
        <p className="mt-2 text-micro text-ink-600" data-testid="momentum-plain-note">
          Counts only: a two-colour phase scan has no lobe direction to mark; its per-pixel phase analysis is in the
          phase maps below.
        </p>
      )}
    </div>
  );
}
