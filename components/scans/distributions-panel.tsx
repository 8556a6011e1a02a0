'use client';
// Angular distribution in the radial window with the fitted peak model of each lobe, and the radial and energy
// spectra of one step, from the stored result file.
import { useQuery } from '@tanstack/react-query';
import { XYPlot } from '@/components/plots/xy-plot';
import { ErrorState, LoadingBlock } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import type { AnalysisSettings, StepResult } from '@/reduction/formats';
import { HARTREE_EV } from './format';
import { viewsFor } from './kind-views';
import { fittedWindow, lobeModelSegments } from './lobe-model';
import type { CurvesResponse } from './types';

const MEASURED = '#253043';
const FIT = '#e3770c';
const EXPECTED = '#0f8077';

export function DistributionsPanel({
  scanId,
  resultId,
  step,
  settings,
  kind,
}: {
  scanId: number;
  resultId: number;
  step: StepResult;
  settings: AnalysisSettings;
  /** The experiment kind: a two-colour phase scan has no lobes to fit or guide. */
  kind: string;
}) {
  const views = viewsFor(kind);
  const q = useQuery({
    queryKey: ['scan-curves', scanId, resultId, step.index],
    queryFn: () => apiFetch<CurvesResponse>(`/api/scans/${scanId}/curves?step=${step.index}&resultId=${resultId}`),
    staleTime: Number.POSITIVE_INFINITY,
  });
  if (q.isPending) return <LoadingBlock lines={6} />;
  if (q.isError) return <ErrorState message={q.error.message} onRetry={() => q.refetch()} />;
  const c = q.data;
  // One series per contiguous piece of each lobe's model: a lobe near ±180° has its model split at the wrap, and a
  // single polyline through both pieces would cross the whole axis.
  const lobes = views.lobeFits ? step.lobes : [];
  const fits = lobes.flatMap((l, i) =>
    l.width_deg
      ? lobeModelSegments(
          c.thetaDeg,
          c.angular,
          l.angle_deg,
          l.width_deg,
          fittedWindow(l, settings),
          settings.peak_model,
        ).map((points, k) => ({
          id: `fit${i}-${k}`,
          label: `lobe ${i + 1} peak model`,
          color: FIT,
          width: 2,
          points,
        }))
      : [],
  );
  const energy = c.pAu
    .map((p, i) => ({ x: (p * p * HARTREE_EV) / 2, y: p > 0 ? (c.radial[i] as number) / p / HARTREE_EV : Number.NaN }))
    .filter((pt) => Number.isFinite(pt.y));
  return (
    <div className="grid gap-6">
      <div>
        <h3 className="mb-1 text-small font-semibold text-ink-800">Angular distribution in the radial window</h3>
        <XYPlot
          data-testid="angular-plot"
          xLabel="lab azimuth θ (deg)"
          yLabel="counts per bin"
          xDomain={[-180, 180]}
          series={[
            {
              id: 'measured',
              label: 'measured',
              color: MEASURED,
              width: 1.2,
              points: c.thetaDeg.map((t, i) => ({ x: t, y: c.angular[i] as number })),
            },
            ...fits.filter((f) => f.points.length > 1),
          ]}
          guides={lobes.flatMap((l, i) => [
            { x: l.angle_deg, color: FIT, label: `lobe ${i + 1}` },
            // unlabelled on the plot (a label there sat on the curve); named in the legend below
            ...(l.expected_deg == null ? [] : [{ x: l.expected_deg, color: EXPECTED }]),
          ])}
          legend={false}
        />
        {views.lobeFits ? (
          <>
            <div
              className="mt-1 flex flex-wrap gap-x-4 gap-y-1 pl-16 text-micro text-ink-600"
              data-testid="angular-legend"
            >
              <LegendDash color={FIT}>fitted lobe direction</LegendDash>
              <LegendDash color={EXPECTED}>simple-man direction</LegendDash>
            </div>
            <p className="text-micro text-ink-500">
              Solid line: measured counts; thick line: peak model ({settings.peak_model}, centre and width from the fit,
              drawn over the angular window the fit used); dashed verticals: fitted lobe direction (amber) and
              simple-man direction (teal). Offset = fitted − simple-man, positive in the sense of field rotation.
            </p>
          </>
        ) : (
          <p className="text-micro text-ink-500" data-testid="angular-plain-note">
            Measured counts in the radial window. A two-colour phase scan is analysed per pixel against the relative
            phase (phase maps below), so no lobe is fitted here.
          </p>
        )}
      </div>
      <div>
        <h3 className="mb-1 text-small font-semibold text-ink-800">Radial spectrum</h3>
        <XYPlot
          data-testid="radial-plot"
          xLabel="|p| (a.u.)"
          yLabel="dN/d|p| (counts per a.u.)"
          series={[
            {
              id: 'radial',
              label: 'radial',
              color: MEASURED,
              points: c.pAu.map((p, i) => ({ x: p, y: c.radial[i] as number })),
            },
          ]}
          guides={views.lobeFigures && step.radius_au ? [{ x: step.radius_au, color: FIT, label: 'lobe radius' }] : []}
          height={240}
        />
      </div>
      <div>
        <h3 className="mb-1 text-small font-semibold text-ink-800">Energy spectrum</h3>
        <XYPlot
          data-testid="energy-plot"
          xLabel="photoelectron energy E = p²/2 (eV)"
          yLabel="dN/dE (counts per eV)"
          series={[{ id: 'energy', label: 'energy', color: MEASURED, points: energy }]}
          height={240}
        />
      </div>
    </div>
  );
}

function LegendDash({ color, children }: { color: string; children: string }) {
  return (
    <span className="inline-flex items-center gap-1.5">
      <span
        className="inline-block h-3 w-0.5"
        style={{ background: `repeating-linear-gradient(180deg, ${color} 0 4px, transparent 4px 6px)` }}
      />
      {children}
    </span>
  );
}
