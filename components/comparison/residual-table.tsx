'use client';
// Residuals of each series against each model overlay (issue 13): (data − model)/σ per point, summarised.
import type { ModelName } from '@/lib/comparison/spec';
import type { ResidualRow } from './series';

const f = (v: number | null, d = 2) => (v === null || !Number.isFinite(v) ? '—' : v.toFixed(d));

export function ResidualTable({
  rows,
  labels,
  unit,
}: {
  rows: ResidualRow[];
  labels: Record<ModelName, { label: string }>;
  /** Unit of the drawn quantity, for the mean difference column. */
  unit: string;
}) {
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-left text-small" data-testid="residual-table">
        <thead className="border-b border-ink-100 bg-ink-50/60 text-micro text-ink-600">
          <tr>
            <th className="px-4 py-2 font-medium">series</th>
            <th className="px-4 py-2 font-medium">model</th>
            <th className="px-4 py-2 text-right font-medium">points</th>
            <th className="px-4 py-2 text-right font-medium">mean data − model ({unit})</th>
            <th className="px-4 py-2 text-right font-medium">mean (data − model)/σ</th>
            <th className="px-4 py-2 text-right font-medium">rms</th>
            <th className="whitespace-nowrap px-4 py-2 text-right font-medium">largest |·|</th>
            <th className="px-4 py-2 text-right font-medium">rms, σ with systematic</th>
          </tr>
        </thead>
        <tbody className="divide-y divide-ink-100">
          {rows.map((r) => (
            <tr key={`${r.series}:${r.model}`} data-model={r.model}>
              <td className="px-4 py-1.5 text-ink-900">{r.series}</td>
              <td className="px-4 py-1.5 text-ink-700">{labels[r.model].label}</td>
              <td className="px-4 py-1.5 text-right tabular-nums">
                {r.n}
                {r.skipped ? <span className="text-ink-400"> (+{r.skipped} without σ or model)</span> : null}
              </td>
              <td className="px-4 py-1.5 text-right tabular-nums">{f(r.meanDiff, unit === 'deg' ? 2 : 3)}</td>
              <td className="px-4 py-1.5 text-right tabular-nums">{f(r.mean)}</td>
              <td className="px-4 py-1.5 text-right tabular-nums">{f(r.rms)}</td>
              <td className="px-4 py-1.5 text-right tabular-nums">{f(r.worst)}</td>
              <td className="px-4 py-1.5 text-right tabular-nums">{f(r.rmsWithSys)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
