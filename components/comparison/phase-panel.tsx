'use client';
// Phase-delay curves of the two-colour scans in a comparison (issue 13): the yield of one region against the ω–2ω
// relative phase φ (SCIENCE.md C8), one curve per scan, optionally divided by its mean yield A₀ so campaigns of
// different count rates compare; beside it each curve's phase of maximum yield φ₀ and contrast A₁/A₀ (C10), and the
// numbers as CSV with their provenance.
import { useRef, useState } from 'react';
import { downloadBlob, svgToStandalone } from '@/components/campaign/trend-export';
import { Button, Panel } from '@/components/ui';
import { compactInputClass } from '@/components/ui/input-class';
import type { PhaseCurve } from '@/lib/comparison/spec';
import { ComparisonFigure, type FigureSeries } from './comparison-figure';
import { svgWithFont } from './figure-font';

export const PHASE_CSV_COLUMNS = [
  'curve',
  'campaign_id',
  'campaign',
  'scan_id',
  'scan_title',
  'region',
  'phase_rad',
  'yield',
  'yield_over_a0',
  'a0',
  'a1',
  'phase_of_max_rad',
  'contrast',
  'method',
  'result_id',
  'calibration_id',
  'calibration_version',
  'settings_id',
  'settings_version',
  'software_version',
] as const;

function csvField(v: string | number | boolean | null | undefined): string {
  if (v === null || v === undefined) return '';
  const s = typeof v === 'number' ? (Number.isFinite(v) ? String(v) : '') : String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export function curveLabel(c: PhaseCurve, manyTeams: boolean): string {
  return `${c.campaignName}${manyTeams ? ` (${c.teamName})` : ''} · ${c.scanTitle ?? `scan ${c.scanId}`}`;
}

/** The curves of one region as CSV (RFC 4180), one row per phase. */
export function phaseCsv(curves: PhaseCurve[], manyTeams: boolean): string {
  const rows = curves.flatMap((c) =>
    c.phaseRad.map((phi, i) =>
      [
        curveLabel(c, manyTeams),
        c.campaignId,
        c.campaignName,
        c.scanId,
        c.scanTitle,
        c.region,
        phi,
        c.yield[i],
        c.a0 ? (c.yield[i] as number) / c.a0 : null,
        c.a0,
        c.a1,
        c.phaseOfMaxRad,
        c.contrast,
        c.method,
        c.provenance.resultId,
        c.provenance.calibrationId,
        c.provenance.calibrationVersion,
        c.provenance.settingsId,
        c.provenance.settingsVersion,
        c.provenance.softwareVersion,
      ]
        .map(csvField)
        .join(','),
    ),
  );
  return `${['# Lobeline phase-delay curves (yield against the ω–2ω relative phase, SCIENCE.md C8, C10)', PHASE_CSV_COLUMNS.join(','), ...rows].join('\r\n')}\r\n`;
}

export function PhasePanel({ curves, fileStem }: { curves: PhaseCurve[]; fileStem: string }) {
  const regions = [...new Set(curves.map((c) => c.region))];
  const [region, setRegion] = useState(regions[0] ?? 'all');
  const [normalised, setNormalised] = useState(true);
  const box = useRef<HTMLDivElement>(null);
  const shown = curves.filter((c) => c.region === (regions.includes(region) ? region : regions[0]));
  const manyTeams = new Set(curves.map((c) => c.teamId)).size > 1;
  const series: FigureSeries[] = shown.map((c) => ({
    key: `${c.scanId}:${c.region}`,
    label: curveLabel(c, manyTeams),
    joined: true,
    points: c.phaseRad.map((phi, i) => ({
      x: phi,
      y: normalised && c.a0 ? (c.yield[i] as number) / c.a0 : (c.yield[i] as number),
      xErr: null,
      err: null,
      sys: null,
      id: String(i),
      title: `${curveLabel(c, manyTeams)}: φ = ${phi.toFixed(3)} rad`,
      hollow: c.flagged,
    })),
  }));
  return (
    <Panel
      title="Phase-delay curves"
      description="Two-colour scans of this comparison: the yield of one region against the relative phase φ of the ω and 2ω fields."
      data-testid="phase-panel"
      actions={
        <span className="inline-flex flex-wrap gap-2">
          <Button
            size="sm"
            variant="secondary"
            onClick={() =>
              downloadBlob(
                new Blob([phaseCsv(shown, manyTeams)], { type: 'text/csv;charset=utf-8' }),
                `${fileStem}-phase.csv`,
              )
            }
          >
            Curves (CSV)
          </Button>
          <Button
            size="sm"
            variant="secondary"
            onClick={() => {
              const svg = box.current?.querySelector('svg') as SVGSVGElement | null;
              if (!svg) return;
              const save = (text: string) =>
                downloadBlob(new Blob([text], { type: 'image/svg+xml' }), `${fileStem}-phase.svg`);
              // with the shipped font inside; should the font not be readable, the figure still comes (system font)
              svgWithFont(svg).then(save, () => save(svgToStandalone(svg)));
            }}
          >
            Curves (SVG)
          </Button>
        </span>
      }
    >
      <div className="mb-3 flex flex-wrap items-center gap-4 text-small text-ink-700">
        <label className="inline-flex items-center gap-1.5">
          Region
          <select className={compactInputClass()} value={region} onChange={(e) => setRegion(e.target.value)}>
            {regions.map((r) => (
              <option key={r} value={r}>
                {r}
              </option>
            ))}
          </select>
        </label>
        <label className="inline-flex items-center gap-1.5">
          <input type="checkbox" checked={normalised} onChange={(e) => setNormalised(e.target.checked)} />
          divided by each curve&apos;s mean yield A₀
        </label>
      </div>
      <div ref={box}>
        <ComparisonFigure
          series={series}
          models={[]}
          xLabel="relative phase φ of the 2ω field (rad)"
          yLabel={normalised ? 'yield / A₀' : 'yield (counts)'}
          xScale="linear"
          yScale="linear"
          errorBars={false}
          systematics={false}
        />
      </div>
      <div className="mt-3 overflow-x-auto">
        <table className="w-full text-left text-small" data-testid="phase-table">
          <thead className="border-b border-ink-100 text-micro text-ink-600">
            <tr>
              <th className="py-1.5 pr-4 font-medium">curve</th>
              <th className="py-1.5 pr-4 text-right font-medium">phase of maximum φ₀ (rad)</th>
              <th className="py-1.5 pr-4 text-right font-medium">contrast A₁/A₀</th>
              <th className="py-1.5 pr-4 text-right font-medium">A₀ (counts)</th>
              <th className="py-1.5 font-medium">estimator</th>
            </tr>
          </thead>
          <tbody className="divide-y divide-ink-100">
            {shown.map((c) => (
              <tr key={`${c.scanId}:${c.region}`}>
                <td className="py-1.5 pr-4 text-ink-900">{curveLabel(c, manyTeams)}</td>
                <td className="py-1.5 pr-4 text-right tabular-nums">{c.phaseOfMaxRad?.toFixed(3) ?? '—'}</td>
                <td className="py-1.5 pr-4 text-right tabular-nums">{c.contrast?.toFixed(3) ?? '—'}</td>
                <td className="py-1.5 pr-4 text-right tabular-nums">{c.a0?.toPrecision(4) ?? '—'}</td>
                <td className="py-1.5 text-ink-600">{c.method ?? '—'}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </Panel>
  );
}
