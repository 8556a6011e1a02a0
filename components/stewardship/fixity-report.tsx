'use client';
// The fixity report (C10/C11): how much of the store the rolling plan has re-hashed within its period, the oldest
// check, and every file whose last check failed, with the expected and the found SHA-256. Data from
// GET /api/stewardship/fixity; "Check now" queues a run by hand (POST).
import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import Link from 'next/link';
import { useState } from 'react';
import {
  Badge,
  Button,
  DataTable,
  type DataTableColumn,
  EmptyState,
  ErrorState,
  PageHeader,
  Panel,
} from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import type { FixityFailureDto, FixityReportDto } from '@/lib/db/queries/fixity-report';
import { formatDateTime } from '@/lib/format';

const PAGE_SIZE = 25;

function every(ms: number): string {
  if (ms <= 0) return 'off';
  const units: [number, string][] = [
    [86_400_000, 'day'],
    [3_600_000, 'hour'],
    [60_000, 'minute'],
    [1_000, 'second'],
  ];
  for (const [size, word] of units) {
    if (ms % size === 0) {
      const n = ms / size;
      return n === 1 ? `every ${word}` : `every ${n} ${word}s`;
    }
  }
  return `every ${ms} ms`;
}

function Figure({ label, value, note }: { label: string; value: string; note?: string }) {
  return (
    <div className="rounded-md bg-ink-50 px-4 py-3 ring-1 ring-ink-200">
      <dt className="text-micro font-medium uppercase tracking-wide text-ink-500">{label}</dt>
      <dd className="mt-1 text-lg font-semibold tabular-nums text-ink-900">{value}</dd>
      {note ? <dd className="text-micro text-ink-500">{note}</dd> : null}
    </div>
  );
}

function Hash({ value, tone }: { value: string | null; tone: 'plain' | 'bad' }) {
  if (!value) return <span className="text-fault-700">no object</span>;
  return (
    <span className={`break-all font-mono text-micro ${tone === 'bad' ? 'text-fault-700' : 'text-ink-700'}`}>
      {value}
    </span>
  );
}

export function FixityReport() {
  const qc = useQueryClient();
  const [page, setPage] = useState(1);
  const query = useQuery({
    queryKey: ['stewardship', 'fixity', page],
    queryFn: () => apiFetch<{ report: FixityReportDto }>(`/api/stewardship/fixity?page=${page}&pageSize=${PAGE_SIZE}`),
    placeholderData: keepPreviousData,
  });
  const [queued, setQueued] = useState<string | null>(null);
  const run = useMutation({
    mutationFn: (limit: number) =>
      apiFetch<{ jobId: string; limit: number }>('/api/stewardship/fixity', { method: 'POST', json: { limit } }),
    onSuccess: (r) => {
      setQueued(`Queued: the ${r.limit} least recently checked files are re-hashed now. Refresh in a moment.`);
      setTimeout(() => void qc.invalidateQueries({ queryKey: ['stewardship'] }), 3000);
    },
  });
  const r = query.data?.report;
  const pct = r?.total ? Math.floor((100 * r.checkedWithinPeriod) / r.total) : 0;

  const columns: DataTableColumn<FixityFailureDto>[] = [
    {
      key: 'file',
      header: 'File',
      render: (f) => (
        <div className="max-w-[16rem]">
          <p className="truncate font-medium text-ink-900" title={f.fileName}>
            {f.fileName}
          </p>
          <p className="text-micro text-ink-500">
            {f.teamName} · file {f.rawFileId} · {f.archiveState}
          </p>
        </div>
      ),
    },
    {
      key: 'campaign',
      header: 'Campaign',
      render: (f) =>
        f.campaignId ? (
          <Link href={`/campaigns/${f.campaignId}/citation`} className="text-lobe-800 hover:underline">
            {f.campaignName}
          </Link>
        ) : (
          '—'
        ),
    },
    {
      key: 'outcome',
      header: 'Found',
      render: (f) => <Badge tone="bad">{f.outcome === 'missing' ? 'object missing' : 'checksum differs'}</Badge>,
    },
    {
      key: 'hashes',
      header: 'Expected and found SHA-256',
      render: (f) => (
        <div className="max-w-[26rem] space-y-1">
          <p>
            <span className="text-micro text-ink-500">expected </span>
            <Hash value={f.expected} tone="plain" />
          </p>
          <p>
            <span className="text-micro text-ink-500">found </span>
            <Hash value={f.found} tone="bad" />
          </p>
          {f.bucket ? (
            <p className="truncate text-micro text-ink-500" title={`${f.bucket}/${f.key}`}>
              read from {f.bucket}/{f.key}
            </p>
          ) : null}
        </div>
      ),
    },
    {
      key: 'when',
      header: 'Checked',
      render: (f) => (
        <div className="whitespace-nowrap">
          {formatDateTime(f.checkedAt)}
          <span className="block text-micro text-ink-500">flagged since {formatDateTime(f.flaggedSince)}</span>
        </div>
      ),
    },
  ];

  return (
    <div className="space-y-6">
      <PageHeader
        eyebrow="Data stewardship"
        title="Fixity report"
        description="Lobeline re-hashes every stored raw file, online or archived, on a rolling plan and compares the result with the SHA-256 recorded when the file was catalogued. A file that no longer matches is flagged here and in the file register, and the data stewards get an e-mail. Nothing is changed or removed by a check."
        actions={
          <Link href="/stewardship" className="text-small font-medium text-lobe-700 hover:underline">
            Back to the file register
          </Link>
        }
      />
      {query.isError ? <ErrorState message={query.error.message} onRetry={() => query.refetch()} /> : null}
      <Panel
        title="Coverage"
        description={
          r
            ? `The job runs ${every(r.everyMs)} and re-hashes ${r.batchSize} file${r.batchSize === 1 ? '' : 's'} each time, so that every stored file is checked within ${r.periodDays} days.`
            : undefined
        }
        actions={
          <Button size="sm" variant="secondary" isLoading={run.isPending} onClick={() => run.mutate(50)}>
            Check 50 files now
          </Button>
        }
      >
        {r ? (
          <dl className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="fixity-coverage">
            <Figure
              label={`Checked within ${r.periodDays} days`}
              value={`${r.checkedWithinPeriod} / ${r.total}`}
              note={`${pct} % of stored files`}
            />
            <Figure label="Never checked" value={String(r.neverChecked)} />
            <Figure
              label="Oldest check"
              value={r.oldestCheckAt ? formatDateTime(r.oldestCheckAt) : '—'}
              note={r.lastCheckAt ? `latest ${formatDateTime(r.lastCheckAt)}` : undefined}
            />
            <Figure label="Checks in the last 24 h" value={String(r.checksLast24h)} />
          </dl>
        ) : null}
        {queued ? <p className="mt-3 text-small text-lobe-700">{queued}</p> : null}
        {run.error ? (
          <p role="alert" className="mt-3 text-small text-fault-600">
            {run.error.message}
          </p>
        ) : null}
      </Panel>
      <Panel
        flush
        title={
          r ? `Failed checks: ${r.failures.total} file${r.failures.total === 1 ? '' : 's'} flagged` : 'Failed checks'
        }
        description="Files whose last check found the object missing or its bytes changed. Put good bytes back from another copy (the lab's backup, the archive) and check the file again: a file that matches again leaves this list."
      >
        <DataTable
          data-testid="fixity-failures"
          caption="Files whose last fixity check failed"
          columns={columns}
          rows={r?.failures.rows ?? []}
          rowKey={(f) => f.rawFileId}
          page={page}
          pageSize={PAGE_SIZE}
          total={r?.failures.total}
          onPageChange={setPage}
          isLoading={query.isPending}
          empty={<EmptyState title="Every checked file matches its recorded checksum" />}
        />
      </Panel>
    </div>
  );
}
