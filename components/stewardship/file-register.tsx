'use client';
// The data steward's file register (C10): every stored raw file of every team, filtered, sorted and paged by the
// server (GET /api/stewardship/files). Metadata only; results, images and maps stay with their teams.
import { keepPreviousData, useQuery } from '@tanstack/react-query';
import Link from 'next/link';
import { useEffect, useState } from 'react';
import {
  Badge,
  DataTable,
  type DataTableColumn,
  EmptyState,
  ErrorState,
  PageHeader,
  Panel,
  type SortDirection,
} from '@/components/ui';
import { compactInputClass } from '@/components/ui/input-class';
import { apiFetch } from '@/lib/api/client';
import type { RegisterRowDto } from '@/lib/db/queries/file-register';
import { formatBytes, formatDateTime, formatDay } from '@/lib/format';
import { ARCHIVE_STATE_WORDS } from '@/lib/stewardship/archive-words';
import { FileRowActions } from './file-actions';

const PAGE_SIZE = 25;

interface RegisterPage {
  rows: RegisterRowDto[];
  total: number;
  page: number;
  pageSize: number;
  teams?: { id: number; name: string }[];
  campaigns?: { id: number; name: string; teamId: number }[];
}

function CompletenessCell({ c }: { c: RegisterRowDto['completeness'] }) {
  const pct = Math.round(c.score * 100);
  const missing = [...c.requiredMissing, ...c.recommendedMissing];
  return (
    <div className="min-w-36">
      <div className="flex items-center gap-2">
        <div className="h-1.5 w-20 overflow-hidden rounded-full bg-ink-100" aria-hidden="true">
          <div
            className={c.requiredMissing.length ? 'h-full bg-flare-500' : 'h-full bg-lobe-600'}
            style={{ width: `${pct}%` }}
          />
        </div>
        <span className="tabular-nums font-medium text-ink-800">{pct} %</span>
      </div>
      {missing.length ? (
        <p className="mt-1 max-w-48 text-micro text-ink-500" title={missing.join(', ')}>
          {c.requiredMissing.length ? (
            <span className="text-fault-600">
              needs {c.requiredMissing.slice(0, 3).join(', ')}
              {c.requiredMissing.length > 3 ? ` +${c.requiredMissing.length - 3}` : ''}
            </span>
          ) : null}
          {c.requiredMissing.length && c.recommendedMissing.length ? '; ' : ''}
          {c.recommendedMissing.length ? `${c.recommendedMissing.length} recommended missing` : ''}
        </p>
      ) : null}
    </div>
  );
}

export function FileRegister() {
  const [page, setPage] = useState(1);
  const [sort, setSort] = useState<{ key: string; direction: SortDirection }>({ key: 'stored', direction: 'desc' });
  const [teamId, setTeamId] = useState('');
  const [campaignId, setCampaignId] = useState('');
  const [completeness, setCompleteness] = useState('');
  const [embargo, setEmbargo] = useState('');
  const [hold, setHold] = useState('');
  const [archive, setArchive] = useState('');
  const [text, setText] = useState('');
  const [q, setQ] = useState('');
  useEffect(() => {
    const t = setTimeout(() => setQ(text.trim()), 300);
    return () => clearTimeout(t);
  }, [text]);
  // biome-ignore lint/correctness/useExhaustiveDependencies: back to page 1 whenever a filter changes
  useEffect(() => setPage(1), [teamId, campaignId, completeness, embargo, hold, archive, q]);

  const params = new URLSearchParams({
    page: String(page),
    pageSize: String(PAGE_SIZE),
    sort: sort.key,
    dir: sort.direction,
    scopes: '1',
  });
  if (teamId) params.set('teamId', teamId);
  if (campaignId) params.set('campaignId', campaignId);
  if (completeness) params.set('completeness', completeness);
  if (embargo) params.set('embargo', embargo);
  if (hold) params.set('hold', hold);
  if (archive === 'flagged') params.set('fixity', 'flagged');
  else if (archive) params.set('archive', archive);
  if (q) params.set('q', q);
  const query = useQuery({
    queryKey: ['stewardship', 'files', params.toString()],
    queryFn: () => apiFetch<RegisterPage>(`/api/stewardship/files?${params}`),
    placeholderData: keepPreviousData,
    // While a file is being archived or restored, look again every few seconds.
    refetchInterval: (q) =>
      q.state.data?.rows.some((r) => r.archiveState === 'archiving' || r.archiveState === 'restoring') ? 2000 : false,
  });
  const today = new Date().toISOString().slice(0, 10);

  const columns: DataTableColumn<RegisterRowDto>[] = [
    {
      key: 'file',
      header: 'File',
      sortable: true,
      render: (r) => (
        <div className="max-w-[18rem]">
          <p className="truncate font-medium text-ink-900" title={r.fileName}>
            {r.fileName}
          </p>
          <p className="truncate text-micro text-ink-500">stored {formatDateTime(r.storedAt)}</p>
          <FileRowActions row={r} />
        </div>
      ),
    },
    { key: 'team', header: 'Team', sortable: true, render: (r) => r.teamName },
    {
      key: 'campaign',
      header: 'Campaign',
      sortable: true,
      render: (r) =>
        r.campaignId ? (
          <Link href={`/campaigns/${r.campaignId}/citation`} className="text-lobe-800 hover:underline">
            {r.campaignName}
          </Link>
        ) : (
          '—'
        ),
    },
    {
      key: 'sha256',
      header: 'SHA-256',
      render: (r) => (
        <span className="font-mono text-micro text-ink-700" title={r.sha256}>
          {r.sha256.slice(0, 8)}…
        </span>
      ),
    },
    {
      key: 'size',
      header: 'Size',
      sortable: true,
      align: 'right',
      className: 'whitespace-nowrap tabular-nums',
      render: (r) => formatBytes(r.sizeBytes),
    },
    {
      key: 'storage',
      header: 'Stored in',
      render: (r) => (
        <span className="whitespace-nowrap text-micro text-ink-700" title={r.storageKey}>
          {r.archiveState === 'archived' && r.archiveBucket ? r.archiveBucket : r.bucket}
          <span className="block text-ink-500">{r.storageClass}</span>
        </span>
      ),
    },
    {
      key: 'completeness',
      header: 'Metadata',
      sortable: true,
      render: (r) => <CompletenessCell c={r.completeness} />,
    },
    {
      key: 'retention',
      header: 'Keep until',
      sortable: true,
      render: (r) => (
        <div className="whitespace-nowrap">
          {r.retentionUntil ? formatDay(r.retentionUntil) : <span className="text-ink-500">not set</span>}
          {r.retentionUntil && !r.retentionOwn ? (
            <span className="block text-micro text-ink-500">campaign's</span>
          ) : null}
          {r.legalHold ? (
            <span className="mt-1 block">
              <Badge tone="bad">legal hold</Badge>
            </span>
          ) : null}
          {r.deletion ? (
            <span className="mt-1 block">
              <Badge tone="warn">{r.deletion.state === 'waiting' ? 'deletion asked' : 'deletion confirmed'}</Badge>
            </span>
          ) : null}
        </div>
      ),
    },
    {
      key: 'embargo',
      header: 'Embargo',
      sortable: true,
      render: (r) =>
        r.embargoUntil && r.embargoUntil > today ? (
          <Badge tone="warn">until {formatDay(r.embargoUntil)}</Badge>
        ) : (
          <span className="text-ink-500">none</span>
        ),
    },
    {
      key: 'archive',
      header: 'Archive',
      render: (r) => (
        <div className="whitespace-nowrap" data-testid={`archive-state-${r.id}`}>
          <Badge tone={r.archiveState === 'online' ? 'neutral' : r.archiveState === 'archived' ? 'info' : 'warn'}>
            {ARCHIVE_STATE_WORDS[r.archiveState]}
          </Badge>
          {r.archiveState === 'archived' && r.archivedAt ? (
            <span className="block text-micro text-ink-500">since {formatDay(r.archivedAt.slice(0, 10))}</span>
          ) : null}
        </div>
      ),
    },
    {
      key: 'fixity',
      header: 'Last fixity check',
      sortable: true,
      render: (r) =>
        r.lastFixityAt ? (
          <div>
            <Badge tone={r.lastFixityOk ? 'good' : 'bad'}>{r.lastFixityOk ? 'matched' : 'MISMATCH'}</Badge>
            <div className="mt-0.5 whitespace-nowrap text-micro text-ink-600">{formatDateTime(r.lastFixityAt)}</div>
          </div>
        ) : (
          <span className="text-ink-500">not yet checked</span>
        ),
    },
  ];

  const data = query.data;
  const campaigns = (data?.campaigns ?? []).filter((c) => !teamId || c.teamId === Number(teamId));
  return (
    <div className="space-y-6">
      <PageHeader
        eyebrow="Data stewardship"
        title="File register"
        description="Every raw file stored for every team: where it lives, its checksum, how completely it and its campaign are described, and how long it must be kept. Metadata only: results, images and maps stay with their teams."
        actions={
          <div className="flex flex-col items-end gap-1">
            <Link href="/stewardship/fixity" className="text-small font-medium text-lobe-700 hover:underline">
              Fixity report
            </Link>
            <Link href="/deletions" className="text-small font-medium text-lobe-700 hover:underline">
              Deletions waiting for a second person
            </Link>
          </div>
        }
      />
      <Panel
        flush
        title={data ? `${data.total} file${data.total === 1 ? '' : 's'}` : 'Files'}
        description="Archive: online files are in the raw bucket, archived ones in the archive bucket in its archival storage class. Fixity: the scheduled job re-hashes every stored file within the configured period and flags any that no longer match."
        actions={
          <>
            <label className="sr-only" htmlFor="reg-team">
              Team
            </label>
            <select
              id="reg-team"
              className={compactInputClass()}
              value={teamId}
              onChange={(e) => {
                setTeamId(e.target.value);
                setCampaignId('');
              }}
            >
              <option value="">All teams</option>
              {(data?.teams ?? []).map((t) => (
                <option key={t.id} value={t.id}>
                  {t.name}
                </option>
              ))}
            </select>
            <label className="sr-only" htmlFor="reg-campaign">
              Campaign
            </label>
            <select
              id="reg-campaign"
              className={compactInputClass('w-48')}
              value={campaignId}
              onChange={(e) => setCampaignId(e.target.value)}
            >
              <option value="">All campaigns</option>
              {campaigns.map((c) => (
                <option key={c.id} value={c.id}>
                  {c.name}
                </option>
              ))}
            </select>
            <label className="sr-only" htmlFor="reg-complete">
              Metadata
            </label>
            <select
              id="reg-complete"
              className={compactInputClass()}
              value={completeness}
              onChange={(e) => setCompleteness(e.target.value)}
            >
              <option value="">Any metadata</option>
              <option value="incomplete">Metadata incomplete</option>
              <option value="complete">Metadata complete</option>
            </select>
            <label className="sr-only" htmlFor="reg-embargo">
              Embargo
            </label>
            <select
              id="reg-embargo"
              className={compactInputClass()}
              value={embargo}
              onChange={(e) => setEmbargo(e.target.value)}
            >
              <option value="">Embargoed or not</option>
              <option value="embargoed">Under embargo</option>
              <option value="open">No embargo</option>
            </select>
            <label className="sr-only" htmlFor="reg-hold">
              Holds and deletions
            </label>
            <select
              id="reg-hold"
              className={compactInputClass()}
              value={hold}
              onChange={(e) => setHold(e.target.value)}
            >
              <option value="">Held or not</option>
              <option value="held">Under legal hold</option>
              <option value="deletion">Deletion asked</option>
            </select>
            <label className="sr-only" htmlFor="reg-archive">
              Archive and fixity
            </label>
            <select
              id="reg-archive"
              className={compactInputClass()}
              value={archive}
              onChange={(e) => setArchive(e.target.value)}
            >
              <option value="">Online or archived</option>
              <option value="online">Online</option>
              <option value="archived">Archived</option>
              <option value="moving">Being archived or restored</option>
              <option value="flagged">Fixity check failed</option>
            </select>
            <label className="sr-only" htmlFor="reg-q">
              Search by file name or checksum
            </label>
            <input
              id="reg-q"
              type="search"
              className={compactInputClass('w-52')}
              placeholder="File name or SHA-256…"
              value={text}
              onChange={(e) => setText(e.target.value)}
            />
          </>
        }
      >
        {query.isError ? (
          <div className="p-4">
            <ErrorState message={query.error.message} onRetry={() => query.refetch()} />
          </div>
        ) : (
          <DataTable
            data-testid="file-register"
            caption="Stored raw files of every team"
            columns={columns}
            rows={data?.rows ?? []}
            rowKey={(r) => r.id}
            sort={sort}
            onSortChange={(s) => {
              setSort(s);
              setPage(1);
            }}
            page={page}
            pageSize={PAGE_SIZE}
            total={data?.total}
            onPageChange={setPage}
            isLoading={query.isPending}
            empty={<EmptyState title="No stored file matches these filters" />}
          />
        )}
      </Panel>
    </div>
  );
}
