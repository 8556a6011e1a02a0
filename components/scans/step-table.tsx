'use client';
// The per-step table of a result: value of the scanned quantity, counts, offset ± error, transverse shift,
// radius ± error, intensity from the radius ± error and the warnings that name the step.
import { formatNumber } from '@/components/plots/scales';
import type { LobelineResult } from '@/reduction/formats';
import { stepAxisLabel, valueWithError } from './format';
import { viewsFor } from './kind-views';

function stepWarnings(warnings: string[], index: number): string[] {
  const re = new RegExp(`\\bsteps? (?:[0-9, ]*, )?${index}\\b(?![.\\d])`);
  // The sentence lists every step it concerns; in the row, the step number is already known.
  return warnings.filter((w) => re.test(w)).map((w) => w.replace(/\s*\((?:steps?) [^)]*\)/, ''));
}

export function StepTable({
  result,
  selected,
  onSelect,
}: {
  result: LobelineResult;
  selected: number;
  onSelect: (index: number) => void;
}) {
  const th =
    'border-b border-ink-200 bg-ink-50 px-3 py-2 text-left text-micro font-semibold tracking-wide text-ink-600 uppercase';
  const views = viewsFor(result.input.experiment_kind);
  const hasOffset = views.lobeFigures && result.steps.some((s) => s.offset_deg != null);
  const hasRadius = views.lobeFigures;
  const hasIntensity = views.lobeFigures && result.steps.some((s) => s.intensity_from_radius_Wcm2 != null);
  const td = 'border-b border-ink-100 px-3 py-1.5 font-mono text-small whitespace-nowrap text-ink-800';
  return (
    <div className="overflow-x-auto">
      <table className="min-w-full border-separate border-spacing-0" data-testid="step-table">
        <thead>
          <tr>
            <th className={th} title="step index as in the result JSON, the CSV and the warnings (from 0)">
              step
            </th>
            <th className={th}>{stepAxisLabel(result.input.step_quantity, result.input.step_units)}</th>
            <th className={th}>Counts</th>
            {hasOffset ? <th className={th}>Offset (deg)</th> : null}
            {hasOffset ? <th className={th}>Transverse shift (a.u.)</th> : null}
            {hasRadius ? <th className={th}>Radius (a.u.)</th> : null}
            {hasIntensity ? <th className={th}>Intensity from radius (W/cm²)</th> : null}
            <th className={th}>Warnings</th>
          </tr>
        </thead>
        <tbody>
          {result.steps.map((s) => {
            const shifts = s.lobes.map((l) => l.transverse_shift_au).filter((v): v is number => v != null);
            const shift = shifts.length ? shifts.reduce((a, b) => a + b, 0) / shifts.length : null;
            const w = stepWarnings(result.warnings, s.index);
            return (
              <tr
                key={s.index}
                onClick={() => onSelect(s.index)}
                className={`cursor-pointer ${s.index === selected ? 'bg-lobe-50' : 'hover:bg-ink-50'}`}
                aria-selected={s.index === selected}
              >
                <td className={td}>{s.index}</td>
                <td className={td}>{formatNumber(s.value, 4)}</td>
                <td className={td}>{formatNumber(s.total_counts, 3)}</td>
                {hasOffset ? (
                  <td className={td} data-testid={`step-offset-${s.index}`}>
                    {valueWithError(s.offset_deg, s.offset_err_deg)}
                  </td>
                ) : null}
                {hasOffset ? <td className={td}>{formatNumber(shift, 3)}</td> : null}
                {hasRadius ? <td className={td}>{valueWithError(s.radius_au, s.radius_err_au)}</td> : null}
                {hasIntensity ? (
                  <td className={td}>
                    {valueWithError(s.intensity_from_radius_Wcm2, s.intensity_from_radius_err_Wcm2)}
                  </td>
                ) : null}
                <td className={`${td} font-sans whitespace-normal text-flare-800`}>{w.length ? w.join(' ') : ''}</td>
              </tr>
            );
          })}
        </tbody>
      </table>
      <p className="mt-2 text-micro text-ink-500">
        {hasOffset || hasRadius
          ? `Errors are one standard deviation of the Poisson bootstrap (${result.settings.bootstrap.resamples} resamples). `
          : ''}
        {hasIntensity
          ? `Intensity in the file's convention (${result.input.step_quantity === 'intensity' ? 'as scanned' : 'adiabatic estimate'}). `
          : ''}
        Click a row to show that step.
      </p>
    </div>
  );
}
