'use client';
// The campaign page: conditions and current versions, counts per state, shifts, the scan table and the trend.
import { useQuery, useQueryClient } from '@tanstack/react-query';
import Link from 'next/link';
import { useEffect, useRef } from 'react';
import { EXPERIMENT_LABELS } from '@/components/scans/format';
import { SCAN_STATUS_LABELS, SCAN_STATUS_ORDER } from '@/components/scans/status-badge';
import { Badge, ErrorState, LinkButton, LoadingBlock, PageHeader, Panel } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import { formatDateTime } from '@/lib/format';
import { BatchesPanel } from './batches-panel';
import { HelicityPanel } from './helicity-panel';
import { campaignKeys, FOLLOW_INTERVAL_MS, IDLE_INTERVAL_MS, workerBusy } from './query-keys';
import { ScansTable } from './scans-table';
import { TrendPanel } from './trend-panel';
import type { CampaignResponse } from './types';

export function CampaignView({ campaignId }: { campaignId: number }) {
  const qc = useQueryClient();
  const q = useQuery({
    queryKey: campaignKeys.all(campaignId),
    queryFn: () => apiFetch<CampaignResponse>(`/api/campaigns/${campaignId}`),
    // follow the worker: ask often while scans are queued or reducing; when idle, now and then, so that scans sent
    // from another page (the operator at the experiment) show up here too
    refetchInterval: (qq) => (workerBusy(qq.state.data?.campaign.counts) ? FOLLOW_INTERVAL_MS : IDLE_INTERVAL_MS),
  });
  const busy = workerBusy(q.data?.campaign.counts);
  const counts = q.data?.campaign.counts;
  const signature = counts ? JSON.stringify(counts) : null;
  const seen = useRef<string | null>(null);
  useEffect(() => {
    // A scan was added, settled or flagged since the last answer: the table, the trend and the batches get a fresh
    // answer together (the overview itself answers the same again, so this does not repeat).
    if (signature && seen.current && seen.current !== signature) {
      void qc.invalidateQueries({ queryKey: campaignKeys.all(campaignId) });
    }
    seen.current = signature;
  }, [signature, qc, campaignId]);
  if (q.isPending) return <LoadingBlock lines={10} />;
  if (q.isError) return <ErrorState message={q.error.message} onRetry={() => q.refetch()} />;
  const { campaign: c, can } = q.data;
  const current =
    c.currentCalibration && c.currentSettings
      ? `calibration v${c.currentCalibration.version} and settings v${c.currentSettings.version}`
      : null;
  return (
    <div className="space-y-6">
      <PageHeader
        eyebrow={c.teamName}
        title={c.name}
        description={[
          EXPERIMENT_LABELS[c.experimentKind] ?? c.experimentKind,
          c.target,
          `${c.wavelengthNm} nm`,
          c.description,
        ]
          .filter(Boolean)
          .join(' · ')}
        actions={
          <>
            {can.viewCalibration ? (
              <LinkButton href={`/campaigns/${c.id}/calibration`} variant="secondary" size="sm">
                Calibration &amp; settings
              </LinkButton>
            ) : null}
            {can.viewCitation ? (
              <LinkButton href={`/campaigns/${c.id}/citation`} variant="secondary" size="sm">
                Citation record
              </LinkButton>
            ) : null}
          </>
        }
      />
      <div className="grid gap-6 lg:grid-cols-3">
        <Panel title="Scans by state">
          <ul className="flex flex-wrap gap-2">
            {SCAN_STATUS_ORDER.map((s) => (
              <li key={s}>
                <Badge tone={SCAN_STATUS_LABELS[s].tone}>
                  {SCAN_STATUS_LABELS[s].label} {c.counts[s]}
                </Badge>
              </li>
            ))}
          </ul>
          <p className="mt-3 text-small text-ink-600">
            {c.counts.total} scan{c.counts.total === 1 ? '' : 's'}
            {c.counts.flagged ? `, ${c.counts.flagged} flagged` : ''}.
          </p>
        </Panel>
        <Panel title="Current versions">
          {current ? (
            <p className="text-small text-ink-700">
              New scans are reduced with <strong>{current}</strong>.
            </p>
          ) : (
            <p className="text-small text-flare-800">
              No approved pair yet: scans wait as “uploaded” until the PI approves a calibration and settings.
            </p>
          )}
          <div className="mt-3">
            <BatchesPanel campaignId={c.id} canStart={can.startReduction} currentLabel={current} compact />
          </div>
        </Panel>
        <Panel title="Shifts" flush>
          {c.shifts.length ? (
            <ul className="divide-y divide-ink-100">
              {c.shifts.map((s) => (
                <li key={s.id} className="flex items-center justify-between gap-2 px-5 py-2 text-small">
                  <Link href={`/shifts/${s.id}`} className="font-medium text-lobe-800 hover:underline">
                    {s.title}
                  </Link>
                  <span className="text-ink-500">
                    {s.scanCount} scan{s.scanCount === 1 ? '' : 's'} ·{' '}
                    {s.status === 'open' ? 'open' : `closed ${formatDateTime(s.closedAt)}`}
                    {s.status === 'closed' ? (
                      <>
                        {' · '}
                        <Link
                          href={`/shifts/${s.id}#receipt`}
                          className="text-lobe-700 hover:underline"
                          data-testid="shift-receipt-link"
                        >
                          receipt
                        </Link>
                      </>
                    ) : null}
                  </span>
                </li>
              ))}
            </ul>
          ) : (
            <p className="px-5 py-4 text-small text-ink-500">No shifts yet.</p>
          )}
        </Panel>
      </div>
      <Panel title="Scans" flush>
        <ScansTable campaignId={c.id} overview={q.data} following={busy} />
      </Panel>
      {can.viewResults ? (
        <Panel title="Trend across scans" description="Latest result of every reduced scan of this campaign.">
          <TrendPanel campaignId={c.id} following={busy} />
        </Panel>
      ) : null}
      {can.viewResults && (c.experimentKind === 'angular_streaking' || c.experimentKind === 'bicircular') ? (
        // helicity applies to elliptical and bicircular light only (two-colour phase scans use linear fields)
        <Panel
          title="Helicity difference"
          description="Offsets of h = +1 and h = −1 scans at matching conditions; half their difference is a systematic."
        >
          <HelicityPanel campaignId={c.id} />
        </Panel>
      ) : null}
    </div>
  );
}
