'use client';
// The campaign's versioned detector calibrations and analysis settings: list, edit (analysts), approve (PI). After
// an approval the page offers to re-reduce the campaign's scans with the new current pair.
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import Link from 'next/link';
import { useState } from 'react';
import { BatchesPanel } from '@/components/campaign/batches-panel';
import type { CampaignResponse, ScanPage } from '@/components/campaign/types';
import { formatNumber } from '@/components/plots/scales';
import { Badge, Button, EmptyState, ErrorState, LoadingBlock, PageHeader, Panel } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import type { ApprovalPreviewDto, VersionDto, VersionKind } from '@/lib/db/queries/calibrations';
import { formatDateTime } from '@/lib/format';
import { type DetectorCalibration, parseAnyCalibration, parseSettings } from '@/reduction/formats';
import { BenchEntry } from './bench-entry';
import { VersionEditor } from './version-editor';
import { fitWindowWords, peakModelWords } from './version-forms';

/** The spectrometer values a calibration gives for event files (FORMATS §1.1), or nothing. */
function spectrometerWords(sp: DetectorCalibration['spectrometer']): string {
  if (!sp) return '';
  const parts = [
    sp.acceleration_length !== undefined ? `L ${sp.acceleration_length} m` : null,
    sp.drift_length !== undefined ? `D ${sp.drift_length} m` : null,
    sp.electric_field !== undefined ? `E ${sp.electric_field} V/m` : null,
    sp.magnetic_field !== undefined ? `B ${sp.magnetic_field} T` : null,
    sp.t0 !== undefined ? `t₀ ${sp.t0} ns` : null,
    sp.detector_center ? `centre (${sp.detector_center[0]}, ${sp.detector_center[1]}) mm` : null,
  ].filter((x) => x !== null);
  return parts.length ? ` · event files: ${parts.join(', ')}` : '';
}

function summary(kind: VersionKind, body: unknown): string {
  if (kind === 'calibration') {
    const r = parseAnyCalibration(body);
    if (!r.ok) return 'not a valid calibration';
    const c = r.value;
    if (c.center_px === undefined || c.momentum_per_pixel_au === undefined) {
      const sp = spectrometerWords(c.spectrometer);
      return `for event files only${sp ? sp.replace(' · event files:', ':') : ': every spectrometer value from the files'}`;
    }
    return `centre (${formatNumber(c.center_px[0], 5)}, ${formatNumber(c.center_px[1], 5)}) px · ${formatNumber(c.momentum_per_pixel_au, 4)} a.u./px · rotation ${formatNumber(c.rotation_deg, 4)}°${c.mirror ? ' · mirrored' : ''}${c.bad_pixels.length ? ` · ${c.bad_pixels.length} bad pixels` : ''}${spectrometerWords(c.spectrometer)}`;
  }
  // Stored bodies may be partial (FORMATS §3: completed from the defaults), so show the completed values.
  const r = parseSettings(body);
  if (!r.ok) return 'not valid settings';
  const b = r.value;
  const win = Array.isArray(b.radial_window_au) ? `${b.radial_window_au.join('–')} a.u.` : 'auto';
  return `grid ±${b.grid.p_max_au} a.u., ${b.grid.n}² cells · window ${win} · ${peakModelWords(b)}, fit window ${fitWindowWords(b)} · ${b.bootstrap.resamples} resamples`;
}

const pairWords = (p: { calibration: number | null; settings: number | null } | null) =>
  p
    ? `calibration ${p.calibration == null ? '—' : `v${p.calibration}`} / settings ${p.settings == null ? '—' : `v${p.settings}`}`
    : 'no approved result';

/** The PI's confirmation before an approval: what changes, listed. */
function ApprovalConfirm({
  kind,
  benchHref,
  state,
  busy,
  onCancel,
  onConfirm,
}: {
  kind: VersionKind;
  /** The bench opened with this version (the what-would-change trial), when the campaign has a scan. */
  benchHref: string | null;
  state: { data?: { preview: ApprovalPreviewDto }; isPending: boolean; isError: boolean; error: Error | null };
  busy: boolean;
  onCancel: () => void;
  onConfirm: () => void;
}) {
  if (state.isPending) return <LoadingBlock lines={2} />;
  if (state.isError || !state.data)
    return <ErrorState message={state.error?.message ?? 'The changes could not be listed.'} />;
  const p = state.data.preview;
  return (
    <div
      className="space-y-2 rounded-md bg-flare-50 p-3 text-small text-ink-800 ring-1 ring-flare-200"
      data-testid="approval-confirm"
    >
      <p className="font-medium">
        Approve {kind === 'calibration' ? 'calibration' : 'settings'} v{p.version}? The campaign&apos;s current pair
        changes from {pairWords(p.before)} to {pairWords(p.after)}.
      </p>
      {p.trialResultsBecomingCurrent ? (
        <p>
          {p.trialResultsBecomingCurrent} trial result{p.trialResultsBecomingCurrent === 1 ? '' : 's'} already computed
          with the new pair become{p.trialResultsBecomingCurrent === 1 ? 's' : ''} the current result of{' '}
          {p.trialResultsBecomingCurrent === 1 ? 'its scan' : 'their scans'} and enter the trend.
        </p>
      ) : null}
      {p.scansToReduceTotal ? (
        <div>
          <p>
            {p.scansToReduceTotal} scan{p.scansToReduceTotal === 1 ? '' : 's'} would be re-reduced with the new pair
            (when you start the campaign&apos;s re-reduction):
          </p>
          <ul className="mt-1 list-disc pl-5 text-micro" data-testid="approval-scans">
            {p.scansToReduce.map((s) => (
              <li key={s.scanId}>
                scan {s.scanId}
                {s.title ? ` “${s.title}”` : ''}: {pairWords(s.from)} → {pairWords(p.after)}
              </li>
            ))}
            {p.scansToReduceTotal > p.scansToReduce.length ? (
              <li>… and {p.scansToReduceTotal - p.scansToReduce.length} more</li>
            ) : null}
          </ul>
        </div>
      ) : (
        <p>No scan needs a re-reduction: every scan already has a result with the new pair.</p>
      )}
      {benchHref ? (
        <p>
          <Link className="text-lobe-700 underline" href={benchHref} data-testid="approval-bench-link">
            See what this version would change, scan by scan, on the calibration bench
          </Link>
        </p>
      ) : null}
      <div className="flex gap-2">
        <Button size="sm" onClick={onConfirm} isLoading={busy} data-testid="confirm-approve">
          Approve v{p.version}
        </Button>
        <Button size="sm" variant="ghost" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </div>
  );
}

function VersionList({
  campaignId,
  kind,
  canEdit,
  canApprove,
  onApproved,
  benchScanId,
}: {
  campaignId: number;
  kind: VersionKind;
  canEdit: boolean;
  canApprove: boolean;
  onApproved: () => void;
  /** A scan of the campaign to open the bench on. */
  benchScanId: number | null;
}) {
  const qc = useQueryClient();
  const path = kind === 'calibration' ? 'calibrations' : 'settings';
  const q = useQuery({
    queryKey: ['versions', campaignId, kind],
    queryFn: () => apiFetch<{ versions: VersionDto[] }>(`/api/campaigns/${campaignId}/${path}`),
  });
  const [editing, setEditing] = useState<{ base: VersionDto | null; mode: 'new' | 'draft' } | null>(null);
  const [confirming, setConfirming] = useState<number | null>(null);
  const preview = useQuery({
    queryKey: ['approval-preview', campaignId, kind, confirming],
    enabled: confirming != null,
    queryFn: () =>
      apiFetch<{ preview: ApprovalPreviewDto }>(`/api/campaigns/${campaignId}/${path}/${confirming}/approve`),
  });
  const approve = useMutation({
    mutationFn: (id: number) => apiFetch(`/api/campaigns/${campaignId}/${path}/${id}/approve`, { method: 'POST' }),
    onSuccess: () => {
      setConfirming(null);
      qc.invalidateQueries({ queryKey: ['versions', campaignId] });
      qc.invalidateQueries({ queryKey: ['campaign', campaignId] });
      onApproved();
    },
  });
  if (q.isPending) return <LoadingBlock lines={4} />;
  if (q.isError) return <ErrorState message={q.error.message} onRetry={() => q.refetch()} />;
  const versions = q.data.versions;
  const newest = versions[0] ?? null;
  return (
    <div className="space-y-3">
      {canEdit && !editing ? (
        <Button
          size="sm"
          variant="secondary"
          onClick={() => setEditing({ base: versions.find((v) => v.isCurrent) ?? newest, mode: 'new' })}
        >
          New version
        </Button>
      ) : null}
      {editing ? (
        <VersionEditor
          campaignId={campaignId}
          kind={kind}
          base={editing.base}
          mode={editing.mode}
          onDone={() => setEditing(null)}
        />
      ) : null}
      {approve.isError ? <ErrorState message={approve.error.message} /> : null}
      {versions.length === 0 ? (
        <EmptyState title="No versions yet">An analyst creates the first version; the PI approves it.</EmptyState>
      ) : (
        <ul className="divide-y divide-ink-100 rounded-md ring-1 ring-ink-100" data-testid={`${kind}-versions`}>
          {versions.map((v) => (
            <li key={v.id} className="space-y-1 px-4 py-3">
              <div className="flex flex-wrap items-center gap-2">
                <span className="font-mono text-body font-semibold text-ink-900">v{v.version}</span>
                {v.isCurrent ? (
                  <Badge tone="good">current</Badge>
                ) : (
                  <Badge tone={v.status === 'draft' ? 'info' : 'neutral'}>{v.status}</Badge>
                )}
                {v.lockedAt ? (
                  <Badge tone="neutral">
                    used by {v.resultCount} result{v.resultCount === 1 ? '' : 's'} · locked
                  </Badge>
                ) : null}
                <span className="ml-auto flex gap-1.5">
                  {canEdit && v.status === 'draft' && !v.lockedAt ? (
                    <Button size="sm" variant="ghost" onClick={() => setEditing({ base: v, mode: 'draft' })}>
                      Edit draft
                    </Button>
                  ) : null}
                  {canEdit ? (
                    <Button size="sm" variant="ghost" onClick={() => setEditing({ base: v, mode: 'new' })}>
                      Copy as new version
                    </Button>
                  ) : null}
                  {canApprove && !v.isCurrent ? (
                    <Button
                      size="sm"
                      onClick={() => setConfirming(v.id)}
                      disabled={approve.isPending || confirming === v.id}
                    >
                      Approve v{v.version}…
                    </Button>
                  ) : null}
                </span>
              </div>
              {confirming === v.id ? (
                <ApprovalConfirm
                  kind={kind}
                  benchHref={
                    benchScanId
                      ? `/scans/${benchScanId}/bench?${kind === 'calibration' ? 'calibration' : 'settings'}=${v.id}`
                      : null
                  }
                  state={preview}
                  busy={approve.isPending}
                  onCancel={() => setConfirming(null)}
                  onConfirm={() => approve.mutate(v.id)}
                />
              ) : null}
              <p className="font-mono text-micro text-ink-600">{summary(kind, v.body)}</p>
              <p className="text-micro text-ink-500">
                {v.note ? `“${v.note}” · ` : ''}created {formatDateTime(v.createdAt)}
                {v.createdBy ? ` by ${v.createdBy}` : ''}
                {v.approvedAt
                  ? ` · approved ${formatDateTime(v.approvedAt)}${v.approvedBy ? ` by ${v.approvedBy}` : ''}`
                  : ''}
              </p>
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}

export function CalibrationView({ campaignId }: { campaignId: number }) {
  const [offerBatch, setOfferBatch] = useState(false);
  const q = useQuery({
    queryKey: ['campaign', campaignId],
    queryFn: () => apiFetch<CampaignResponse>(`/api/campaigns/${campaignId}`),
  });
  const firstScan = useQuery({
    queryKey: ['bench-entry-scans', campaignId],
    queryFn: () => apiFetch<ScanPage>(`/api/campaigns/${campaignId}/scans?pageSize=200&sort=id&dir=asc`),
  });
  const benchScanId = firstScan.data?.rows.find((s) => s.status !== 'quarantined' && s.latestResultId)?.id ?? null;
  if (q.isPending) return <LoadingBlock lines={8} />;
  if (q.isError) return <ErrorState message={q.error.message} onRetry={() => q.refetch()} />;
  const { campaign: c, can } = q.data;
  const current =
    c.currentCalibration && c.currentSettings
      ? `calibration v${c.currentCalibration.version} and settings v${c.currentSettings.version}`
      : null;
  return (
    <div className="space-y-6">
      <PageHeader
        eyebrow={
          <Link href={`/campaigns/${c.id}`} className="hover:underline" data-testid="back-to-campaign">
            ← {c.name}
          </Link>
        }
        title="Calibration and settings"
        description="Every change is a new version. A version used by a result never changes; results stay linked to the versions that made them."
      />
      <Panel
        title="Calibration bench"
        description="Find the centre, scale, ellipticity and background by looking: the reduction follows every change in your browser, and the trial shows what a draft would change before anyone approves it."
      >
        <BenchEntry campaignId={c.id} />
      </Panel>
      {offerBatch && current ? (
        <Panel title="Re-reduce with the new versions?" data-testid="rereduce-offer">
          <p className="mb-3 text-small text-ink-700">
            The campaign&apos;s current pair is now {current}. Its {c.counts.total} scan
            {c.counts.total === 1 ? '' : 's'} keep their existing results; re-reducing adds results made with the new
            pair.
          </p>
          <BatchesPanel campaignId={c.id} canStart={can.startReduction} currentLabel={current} compact />
          {!can.startReduction ? (
            <p className="text-small text-ink-600">An analyst of the team can start the batch.</p>
          ) : null}
        </Panel>
      ) : null}
      <div className="grid gap-6 lg:grid-cols-2">
        <Panel
          title="Detector calibration"
          description="Centre, scale, rotation, mirror, detector ellipticity, bad pixels, background."
        >
          <VersionList
            campaignId={c.id}
            kind="calibration"
            canEdit={can.editCalibration}
            canApprove={can.approveCalibration}
            onApproved={() => setOfferBatch(true)}
            benchScanId={benchScanId}
          />
        </Panel>
        <Panel
          title="Analysis settings"
          description="Momentum grid, radial window, bins, lobes, peak model, bootstrap, phase maps."
        >
          <VersionList
            campaignId={c.id}
            kind="settings"
            canEdit={can.editCalibration}
            canApprove={can.approveCalibration}
            onApproved={() => setOfferBatch(true)}
            benchScanId={benchScanId}
          />
        </Panel>
      </div>
    </div>
  );
}
