'use client';

import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { Badge } from '@/components/ui/badge';
import { DataTable } from '@/components/ui/data-table';
import { EmptyState } from '@/components/ui/empty-state';
import { ErrorState } from '@/components/ui/error-state';
import { inputClass } from '@/components/ui/input-class';
import { Panel } from '@/components/ui/panel';
import { apiFetch } from '@/lib/api/client';

interface AuditRow {
  id: number;
  at: string;
  action: string;
  actorEmail: string | null;
  teamName: string | null;
  targetType: string | null;
  targetId: string | null;
  ip: string | null;
  outcome: 'ok' | 'refused' | 'failed';
  details: Record<string, unknown> | null;
}

const PAGE_SIZE = 50;
const ACTION_GROUPS: { value: string; label: string }[] = [
  { value: '', label: 'Everything' },
  { value: 'auth.', label: 'Sign-in and access' },
  { value: 'invitation.', label: 'Invitations' },
  { value: 'membership.', label: 'Memberships' },
  { value: 'facility_role.', label: 'Facility roles' },
  { value: 'user.', label: 'Accounts' },
  { value: 'team.', label: 'Teams' },
  { value: 'campaign.', label: 'Campaigns' },
  { value: 'shift.', label: 'Shifts' },
  { value: 'file.', label: 'Files' },
  { value: 'calibration.', label: 'Calibrations' },
  { value: 'reduction.', label: 'Reductions' },
];

function summarize(details: Record<string, unknown> | null): string {
  if (!details) return '';
  return Object.entries(details)
    .filter(([, v]) => v !== null && v !== undefined && typeof v !== 'object')
    .slice(0, 4)
    .map(([k, v]) => `${k}: ${String(v)}`)
    .join(' · ');
}

export function AuditTrail({ scopeNote }: { scopeNote: string }) {
  const [page, setPage] = useState(1);
  const [action, setAction] = useState('');
  const [outcome, setOutcome] = useState('');
  const params = new URLSearchParams({ page: String(page), pageSize: String(PAGE_SIZE) });
  if (action) params.set('action', action);
  if (outcome) params.set('outcome', outcome);
  const q = useQuery({
    queryKey: ['audit', page, action, outcome],
    queryFn: () => apiFetch<{ events: AuditRow[]; total: number }>(`/api/audit?${params}`),
    placeholderData: keepPreviousData,
  });

  return (
    <Panel
      title="Events"
      description={scopeNote}
      flush
      actions={
        <div className="flex items-center gap-2">
          <label htmlFor="audit-action" className="sr-only">
            Kind of event
          </label>
          <select
            id="audit-action"
            value={action}
            onChange={(e) => {
              setAction(e.target.value);
              setPage(1);
            }}
            className={`${inputClass()} h-8 py-0 text-small`}
          >
            {ACTION_GROUPS.map((g) => (
              <option key={g.value} value={g.value}>
                {g.label}
              </option>
            ))}
          </select>
          <label htmlFor="audit-outcome" className="sr-only">
            Outcome
          </label>
          <select
            id="audit-outcome"
            value={outcome}
            onChange={(e) => {
              setOutcome(e.target.value);
              setPage(1);
            }}
            className={`${inputClass()} h-8 py-0 text-small`}
          >
            <option value="">Any outcome</option>
            <option value="ok">Done</option>
            <option value="failed">Failed</option>
            <option value="refused">Refused</option>
          </select>
        </div>
      }
    >
      {q.isError ? (
        <div className="px-5 py-4">
          <ErrorState message={q.error.message} onRetry={() => void q.refetch()} />
        </div>
      ) : (
        <DataTable
          data-testid="audit-table"
          caption="Audit events, newest first"
          rows={q.data?.events ?? []}
          rowKey={(r) => r.id}
          isLoading={q.isFetching}
          page={page}
          pageSize={PAGE_SIZE}
          total={q.data?.total}
          onPageChange={setPage}
          empty={<EmptyState title="No events match">Try another kind of event or outcome.</EmptyState>}
          columns={[
            {
              key: 'at',
              header: 'When',
              className: 'whitespace-nowrap tabular-nums',
              render: (r) => new Date(r.at).toLocaleString('en-GB', { dateStyle: 'medium', timeStyle: 'medium' }),
            },
            { key: 'action', header: 'Event', className: 'font-mono text-micro', render: (r) => r.action },
            { key: 'actor', header: 'Who', render: (r) => r.actorEmail ?? <span className="text-ink-400">—</span> },
            { key: 'team', header: 'Team', render: (r) => r.teamName ?? <span className="text-ink-400">—</span> },
            {
              key: 'target',
              header: 'Object',
              className: 'whitespace-nowrap',
              render: (r) =>
                r.targetType ? `${r.targetType} ${r.targetId ?? ''}` : <span className="text-ink-400">—</span>,
            },
            {
              key: 'outcome',
              header: 'Outcome',
              render: (r) => (
                <Badge tone={r.outcome === 'ok' ? 'good' : r.outcome === 'refused' ? 'warn' : 'bad'}>
                  {r.outcome === 'ok' ? 'done' : r.outcome}
                </Badge>
              ),
            },
            {
              key: 'details',
              header: 'Details',
              className: 'max-w-[22rem] break-all text-ink-600',
              render: (r) => summarize(r.details),
            },
          ]}
        />
      )}
    </Panel>
  );
}
