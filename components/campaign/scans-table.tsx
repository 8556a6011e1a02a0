'use client';
// The campaign's scans, sorted, filtered and paged by the server (GET /api/campaigns/[id]/scans).
import { keepPreviousData, useQuery } from '@tanstack/react-query';
import Link from 'next/link';
import { useRouter } from 'next/navigation';
import { useEffect, useState } from 'react';
import { formatNumber } from '@/components/plots/scales';
import { valueWithError } from '@/components/scans/format';
import { SCAN_STATUS_LABELS, SCAN_STATUS_ORDER, ScanStatusBadge } from '@/components/scans/status-badge';
import { DataTable, type DataTableColumn, EmptyState, ErrorState, type SortDirection } from '@/components/ui';
import { inputClass } from '@/components/ui/input-class';
import { apiFetch } from '@/lib/api/client';
import { formatDateTime } from '@/lib/format';
import { campaignKeys, FOLLOW_INTERVAL_MS, WORKER_STATES } from './query-keys';
import type { CampaignResponse, ScanPage, ScanRowDto } from './types';

const PAGE_SIZE = 25;

export function ScansTable({
  campaignId,
  overview,
  following = false,
}: {
  campaignId: number;
  overview: CampaignResponse;
  /** The campaign has scans with the worker: ask again until they settle. */
  following?: boolean;
}) {
  const router = useRouter();
  const [page, setPage] = useState(1);
  const [sort, setSort] = useState<{ key: string; direction: SortDirection }>({ key: 'uploaded', direction: 'desc' });
  const [status, setStatus] = useState('');
  const [target, setTarget] = useState('');
  const [shift, setShift] = useState('');
  const [flagged, setFlagged] = useState('');
  const [text, setText] = useState('');
  const [q, setQ] = useState('');
  useEffect(() => {
    const t = setTimeout(() => setQ(text.trim()), 300);
    return () => clearTimeout(t);
  }, [text]);
  // biome-ignore lint/correctness/useExhaustiveDependencies: back to page 1 whenever a filter changes
  useEffect(() => setPage(1), [status, target, shift, flagged, q]);

  const params = new URLSearchParams({
    page: String(page),
    pageSize: String(PAGE_SIZE),
    sort: sort.key,
    dir: sort.direction,
  });
  if (status) params.set('status', status);
  if (target) params.set('target', target);
  if (shift) params.set('shift', shift);
  if (flagged) params.set('flagged', flagged);
  if (q) params.set('q', q);
  const query = useQuery({
    queryKey: campaignKeys.scans(campaignId, params.toString()),
    queryFn: () => apiFetch<ScanPage>(`/api/campaigns/${campaignId}/scans?${params}`),
    placeholderData: keepPreviousData,
    refetchInterval: (qq) =>
      following || qq.state.data?.rows.some((r) => WORKER_STATES.includes(r.status)) ? FOLLOW_INTERVAL_MS : false,
  });

  const columns: DataTableColumn<ScanRowDto>[] = [
    {
      key: 'title',
      header: 'Scan',
      sortable: true,
      render: (r) => (
        <Link
          href={`/scans/${r.id}`}
          className="font-medium text-lobe-800 hover:underline"
          onClick={(e) => e.stopPropagation()}
        >
          {r.title || r.fileName || `Scan ${r.id}`}
          {r.flagged ? (
            <span className="ml-1.5 text-flare-600" title="flagged">
              ⚑
            </span>
          ) : null}
          {r.title && r.fileName ? (
            <span className="block max-w-[26rem] truncate font-mono text-micro font-normal text-ink-500">
              {r.fileName}
            </span>
          ) : null}
        </Link>
      ),
    },
    { key: 'status', header: 'State', sortable: true, render: (r) => <ScanStatusBadge status={r.status} /> },
    { key: 'target', header: 'Target', sortable: true, render: (r) => r.target ?? '—' },
    { key: 'shift', header: 'Shift', render: (r) => r.shiftTitle ?? '—' },
    { key: 'steps', header: 'Steps', sortable: true, align: 'right', render: (r) => r.nSteps ?? '—' },
    {
      key: 'offset',
      header: 'Offset (deg)',
      sortable: true,
      align: 'right',
      // the header keeps the table's own type; only the figures are monospace
      className: 'whitespace-nowrap',
      render: (r) =>
        r.status === 'failed' ? (
          <span className="text-fault-700">failed</span>
        ) : (
          <span className="font-mono">{valueWithError(r.offsetDeg, r.offsetErrDeg)}</span>
        ),
    },
    {
      key: 'versions',
      header: 'Versions',
      render: (r) => (r.calibrationVersion ? `cal v${r.calibrationVersion} · set v${r.settingsVersion}` : '—'),
      className: 'whitespace-nowrap text-ink-600',
    },
    {
      key: 'started',
      header: 'Recorded',
      sortable: true,
      render: (r) => formatDateTime(r.startedAt),
      className: 'whitespace-nowrap',
    },
    {
      key: 'uploaded',
      header: 'Uploaded',
      sortable: true,
      render: (r) => formatDateTime(r.uploadedAt),
      className: 'whitespace-nowrap',
    },
  ];

  const sel = `${inputClass(false)} h-8 py-0 text-small`;
  return (
    <div data-testid="scans-table">
      <div className="flex flex-wrap items-end gap-3 px-5 py-3">
        <label className="text-micro text-ink-600">
          Search
          <input
            className={`${sel} mt-1 w-52`}
            placeholder="title or file name"
            value={text}
            onChange={(e) => setText(e.target.value)}
          />
        </label>
        <label className="text-micro text-ink-600">
          State
          <select
            className={`${sel} mt-1`}
            value={status}
            onChange={(e) => setStatus(e.target.value)}
            aria-label="Filter by state"
          >
            <option value="">all</option>
            {SCAN_STATUS_ORDER.map((s) => (
              <option key={s} value={s}>
                {SCAN_STATUS_LABELS[s].label} ({overview.campaign.counts[s]})
              </option>
            ))}
          </select>
        </label>
        <label className="text-micro text-ink-600">
          Target
          <select className={`${sel} mt-1`} value={target} onChange={(e) => setTarget(e.target.value)}>
            <option value="">all</option>
            {overview.targets.map((t) => (
              <option key={t} value={t}>
                {t}
              </option>
            ))}
          </select>
        </label>
        <label className="text-micro text-ink-600">
          Shift
          <select className={`${sel} mt-1`} value={shift} onChange={(e) => setShift(e.target.value)}>
            <option value="">all</option>
            {overview.campaign.shifts.map((s) => (
              <option key={s.id} value={s.id}>
                {s.title}
              </option>
            ))}
          </select>
        </label>
        <label className="text-micro text-ink-600">
          Flag
          <select className={`${sel} mt-1`} value={flagged} onChange={(e) => setFlagged(e.target.value)}>
            <option value="">all</option>
            <option value="true">flagged</option>
            <option value="false">not flagged</option>
          </select>
        </label>
        {query.data ? (
          <span className="ml-auto text-micro text-ink-500">{formatNumber(query.data.total, 6)} matching</span>
        ) : null}
      </div>
      {query.isError ? (
        <div className="px-5 pb-4">
          <ErrorState
            message={query.error.message}
            details={(query.error as { details?: string[] }).details}
            onRetry={() => query.refetch()}
          />
        </div>
      ) : (
        <DataTable
          columns={columns}
          rows={query.data?.rows ?? []}
          rowKey={(r) => r.id}
          sort={sort}
          onSortChange={(s) => {
            setSort(s);
            setPage(1);
          }}
          page={page}
          pageSize={PAGE_SIZE}
          total={query.data?.total}
          onPageChange={setPage}
          isLoading={query.isFetching && !query.data}
          onRowClick={(r) => router.push(`/scans/${r.id}`)}
          caption="Scans of this campaign"
          empty={
            <EmptyState title={overview.campaign.counts.total ? 'No scan matches these filters' : 'No scans yet'}>
              {overview.campaign.counts.total
                ? 'Change or clear the filters above.'
                : 'Scans appear here when the operator uploads the shift’s files on a shift page.'}
            </EmptyState>
          }
        />
      )}
    </div>
  );
}
