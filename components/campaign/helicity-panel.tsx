'use client';
// Helicity-difference residuals of a campaign (SCIENCE.md §4.4, §9.2): where scans of h = +1 and h = −1 were taken
// at matching conditions, the offsets of the two (already sign-corrected) are listed with their mean and half
// their difference. That half difference is a systematic of the offset (a detector-frame rotation the calibration
// does not undo shows up there), reported beside the statistical error and never added to it.
import { useQuery } from '@tanstack/react-query';
import { formatNumber } from '@/components/plots/scales';
import { valueWithError } from '@/components/scans/format';
import { ErrorState, LoadingBlock } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import type { HelicityResidualDto } from '@/lib/db/queries/helicity';
import { helicityResidualFor } from '@/reduction/helicity';
import { campaignKeys } from './query-keys';

export function useHelicityResiduals(campaignId: number, enabled = true) {
  return useQuery({
    queryKey: campaignKeys.helicity(campaignId),
    queryFn: () => apiFetch<{ residuals: HelicityResidualDto[] }>(`/api/campaigns/${campaignId}/helicity`),
    enabled,
  });
}

const scanList = (s: { scanId: number; stepIndex: number }[]) =>
  [...new Set(s.map((x) => x.scanId))].map((id) => `scan ${id}`).join(', ');

export function HelicityPanel({ campaignId }: { campaignId: number }) {
  const q = useHelicityResiduals(campaignId);
  if (q.isPending) return <LoadingBlock lines={3} />;
  if (q.isError) return <ErrorState message={q.error.message} onRetry={() => q.refetch()} />;
  const rows = q.data.residuals;
  if (!rows.length) {
    return (
      <p className="text-small text-ink-600" data-testid="helicity-none">
        No pair yet: this needs reduced scans of both helicities (h = +1 and h = −1) with the same target, wavelength,
        ellipticity and step value.
      </p>
    );
  }
  const th = 'border-b border-ink-200 bg-ink-50 px-3 py-2 text-left text-micro font-semibold text-ink-600';
  const td = 'border-b border-ink-100 px-3 py-1.5 font-mono text-small whitespace-nowrap text-ink-800';
  return (
    <div className="overflow-x-auto">
      <table className="min-w-full border-separate border-spacing-0" data-testid="helicity-table">
        <thead>
          <tr>
            <th className={th}>Target, λ</th>
            <th className={th}>Step value</th>
            <th className={th}>Offset h = +1 (deg)</th>
            <th className={th}>Offset h = −1 (deg)</th>
            <th className={th}>Mean offset (deg)</th>
            <th className={th}>Systematic (helicity) (deg)</th>
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => (
            <tr key={`${r.plus.scanSteps[0]?.scanId}-${r.plus.scanSteps[0]?.stepIndex}`}>
              <td className={`${td} font-sans`}>
                {r.conditions.target ?? '—'}, {formatNumber(r.conditions.wavelengthNm, 4)} nm
              </td>
              <td className={td}>{formatNumber(r.value, 4)}</td>
              <td className={td} title={scanList(r.plus.scanSteps)}>
                {valueWithError(r.plus.offsetDeg, r.plus.offsetErrDeg)}
              </td>
              <td className={td} title={scanList(r.minus.scanSteps)}>
                {valueWithError(r.minus.offsetDeg, r.minus.offsetErrDeg)}
              </td>
              <td className={td}>{valueWithError(r.meanOffsetDeg, r.statErrDeg)}</td>
              <td className={td} data-testid="helicity-systematic">
                {formatNumber(r.systematicDeg, 3)}
                {r.statErrDeg ? (
                  <span className="ml-1 font-sans text-micro text-ink-500">
                    (noise ± {formatNumber(r.statErrDeg, 2)})
                  </span>
                ) : null}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      <p className="mt-2 text-micro text-ink-500">
        Mean offset = ½(h₊ + h₋): a rotation of the detector frame cancels in it. Systematic (helicity) = ½|h₊ − h₋|,
        reported beside the statistical error, not added to it; a value well above its noise points to a rotation or
        centre error of the calibration. Current results of unflagged scans; several scans of one helicity are combined
        with inverse-variance weights.
      </p>
    </div>
  );
}

/**
 * The scan page's line for one scan: the systematic (helicity) of the shown step when the campaign pairs it with a
 * scan of the other helicity. Computed over current results, so it is shown only beside the scan's current result.
 */
export function HelicitySystematic({
  campaignId,
  scanId,
  stepIndex,
  enabled,
}: {
  campaignId: number;
  scanId: number;
  stepIndex: number;
  enabled: boolean;
}) {
  const q = useHelicityResiduals(campaignId, enabled);
  if (!enabled || !q.data) return null;
  const mine = q.data.residuals.filter((r) =>
    [...r.plus.scanSteps, ...r.minus.scanSteps].some((s) => s.scanId === scanId),
  );
  if (!mine.length) return null;
  const here = helicityResidualFor(mine, scanId, stepIndex);
  const others = (r: HelicityResidualDto) =>
    [...new Set([...r.plus.scanSteps, ...r.minus.scanSteps].map((s) => s.scanId))].filter((id) => id !== scanId);
  return (
    <div data-testid="helicity-systematic-scan">
      <p className="text-micro tracking-wide text-ink-500 uppercase">Systematic (helicity)</p>
      {here ? (
        <>
          <p className="font-mono text-title text-ink-900">{formatNumber(here.systematicDeg, 3)}°</p>
          <p className="text-micro text-ink-500">
            step {stepIndex}, against{' '}
            {others(here)
              .map((id) => `scan ${id}`)
              .join(', ')}{' '}
            · mean offset {valueWithError(here.meanOffsetDeg, here.statErrDeg, '°')} · not included in the ± above
          </p>
        </>
      ) : (
        <p className="text-small text-ink-600">
          step {stepIndex} has no match of the other helicity ({mine.length} other step{mine.length === 1 ? '' : 's'} of
          this scan do)
        </p>
      )}
    </div>
  );
}
