'use client';

import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { type ReactNode, useState } from 'react';
import { Badge } from '@/components/ui/badge';
import { DataTable } from '@/components/ui/data-table';
import { EmptyState } from '@/components/ui/empty-state';
import { ErrorState } from '@/components/ui/error-state';
import { compactInputClass } from '@/components/ui/input-class';
import { Panel } from '@/components/ui/panel';
import { apiFetch } from '@/lib/api/client';
import type { AuditAction } from '@/lib/audit';
import { formatBytes, formatDateTime } from '@/lib/format';

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
  /** The app's own words for the ids (e.g. "calibration v2"), from the server. */
  labels?: { target?: string; details: Record<string, string> };
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

/** Plain words for every kind of event; the code itself stays in a tooltip for admins who search the logs. */
const ACTION_WORDS: Record<AuditAction, string> = {
  'auth.sign_in': 'Signed in',
  'auth.sign_in_failed': 'Sign-in failed',
  'auth.sign_out': 'Signed out',
  'auth.password_reset_requested': 'Asked for a password reset',
  'auth.password_reset': 'Password reset',
  'auth.password_changed': 'Password changed',
  'auth.access_refused': 'Access refused',
  'auth.session_rejected': 'Session refused',
  'invitation.created': 'Invitation sent',
  'invitation.accepted': 'Invitation accepted',
  'invitation.revoked': 'Invitation withdrawn',
  'user.created': 'Account created',
  'user.updated': 'Account changed',
  'user.deactivated': 'Account deactivated',
  'team.created': 'Team created',
  'team.updated': 'Team changed',
  'membership.added': 'Member added',
  'membership.changed': 'Member role changed',
  'membership.removed': 'Member removed',
  'facility_role.granted': 'Facility role granted',
  'facility_role.revoked': 'Facility role withdrawn',
  'campaign.created': 'Campaign created',
  'campaign.updated': 'Campaign changed',
  'shift.opened': 'Shift opened',
  'shift.closed': 'Shift closed',
  'shift.log_added': 'Shift log entry',
  'file.uploaded': 'File uploaded',
  'file.duplicate_linked': 'Duplicate file linked',
  'file.quarantined': 'File quarantined',
  'file.released': 'File released',
  'file.replaced': 'File replaced',
  'calibration.created': 'Calibration version created',
  'calibration.approved': 'Calibration version approved',
  'settings.created': 'Analysis settings created',
  'settings.approved': 'Analysis settings approved',
  'reduction.requested': 'Reduction requested',
  'reduction.batch_requested': 'Batch reduction requested',
  'reduction.completed': 'Reduction finished',
  'reduction.failed': 'Reduction failed',
  'scan.flagged': 'Scan flagged',
  'file.archived': 'File archived',
  'file.restored': 'File restored',
  'file.retention_set': 'Retention set',
  'file.fixity_checked': 'Fixity checked',
  'file.deletion_requested': 'Deletion requested',
  'file.deleted': 'File deleted',
  'export.created': 'Export created',
  'comparison.saved': 'Comparison saved',
  'comparison.deleted': 'Comparison deleted',
  'citation.updated': 'Citation metadata changed',
  'citation.record_downloaded': 'Citation record downloaded',
  'campaign.retention_set': 'Campaign retention or embargo set',
  'file.deletion_confirmed': 'Deletion confirmed',
  'file.deletion_cancelled': 'Deletion request withdrawn',
  'file.deletion_refused': 'Deletion refused',
  // archive, restore and fixity (issue 14)
  'file.archive_requested': 'Archive asked for',
  'file.archive_failed': 'Archive failed',
  'file.restore_requested': 'Restore asked for',
  'file.restore_failed': 'Restore failed',
  'file.fixity_failed': 'Fixity check failed',
  'fixity.run_requested': 'Fixity check started by hand',
};

const TARGET_WORDS: Record<string, string> = {
  raw_file: 'File',
  upload: 'Upload',
  scan: 'Scan',
  shift: 'Shift',
  campaign: 'Campaign',
  team: 'Team',
  user: 'Account',
  invitation: 'Invitation',
};

const DETAIL_WORDS: Record<string, string> = {
  fileName: 'file',
  sizeBytes: 'size',
  sha256: 'SHA-256',
  shiftId: 'shift',
  scanId: 'scan',
  scans: 'scans',
  campaignId: 'campaign',
  calibrationId: 'calibration',
  settingsId: 'settings',
  reductionJobId: 'reduction job',
  resultId: 'result',
  batchId: 'batch',
  offsetDeg: 'offset',
  version: 'version',
  previousId: 'replaces',
  replacedBy: 'replaced by',
  entryId: 'log entry',
  invitationId: 'invitation',
  wavelengthNm: 'wavelength',
  facilityRole: 'facility role',
  sameTeam: 'same team',
  limitedBy: 'limited by',
  reasonsBefore: 'problems before',
  reason: 'why',
  attempts: 'attempts',
  message: 'message',
  queued: 'queued',
  cancelled: 'cancelled',
  abandoned: 'not stored',
  token: 'session token',
};

const words = (code: string) => code.replace(/_/g, ' ');

function detailValue(key: string, v: unknown): ReactNode {
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  if (typeof v === 'number') {
    if (key.endsWith('Bytes')) return formatBytes(v);
    if (key.endsWith('Deg')) return `${v.toFixed(2).replace('-', '−')}°`;
    if (key === 'wavelengthNm') return `${v} nm`;
    if (key === 'version') return `v${v}`;
    if (key.endsWith('Id')) return `no. ${v}`;
    return Number.isInteger(v) ? String(v) : v.toPrecision(4).replace('-', '−');
  }
  if (typeof v === 'string') {
    if (key === 'sha256' && /^[0-9a-f]{64}$/i.test(v)) {
      return (
        <span className="font-mono" title={v}>
          {v.slice(0, 12)}…{v.slice(-4)}
        </span>
      );
    }
    return key === 'reason' || key === 'role' || key === 'to' || key === 'from' || key === 'stage' ? words(v) : v;
  }
  if (Array.isArray(v) && v.every((x) => typeof x === 'string')) return v.length ? v.join('; ') : null;
  return null; // nested objects (e.g. a metadata override) are not summarised here
}

function Details({
  action,
  details,
  labels = {},
}: {
  action: string;
  details: Record<string, unknown> | null;
  labels?: Record<string, string>;
}) {
  if (!details) return null;
  const reasons = Array.isArray(details.reasons) ? details.reasons.filter((x) => typeof x === 'string') : [];
  const parts = Object.entries(details)
    .filter(([k, v]) => k !== 'reasons' && v !== null && v !== undefined)
    .map(([k, v]) => [k, labels[k] ? labels[k].replace(/^(calibration|settings) /, '') : detailValue(k, v)] as const)
    .filter(([, v]) => v !== null && v !== '')
    .slice(0, 5);
  return (
    <>
      {reasons.length ? (
        <span className={action === 'file.quarantined' ? 'block text-flare-700' : 'block'}>
          {action === 'file.quarantined' ? 'Why: ' : 'Problems: '}
          {reasons.join('; ')}
        </span>
      ) : null}
      {parts.map(([k, v], i) => (
        <span key={k}>
          {i > 0 ? ' · ' : ''}
          <span className="text-ink-500">{DETAIL_WORDS[k] ?? words(k)}</span> {v}
        </span>
      ))}
    </>
  );
}

export function AuditTrail({ scopeNote }: { scopeNote: string }) {
  const [page, setPage] = useState(1);
  const [action, setAction] = useState('');
  const [outcome, setOutcome] = useState('');
  const [from, setFrom] = useState('');
  const [to, setTo] = useState('');
  const params = new URLSearchParams({ page: String(page), pageSize: String(PAGE_SIZE) });
  if (action) params.set('action', action);
  if (outcome) params.set('outcome', outcome);
  if (from) params.set('from', from);
  if (to) params.set('to', to);
  // The export takes the same kind of event and the chosen days (the last 30 days when none are chosen).
  const today = new Date().toISOString().slice(0, 10);
  const monthAgo = new Date(Date.now() - 29 * 86_400_000).toISOString().slice(0, 10);
  const exportHref = (format: 'csv' | 'json') => {
    const p = new URLSearchParams({ format, from: from || (to && to < monthAgo ? to : monthAgo), to: to || today });
    if (action) p.set('action', action);
    return `/api/audit/export?${p}`;
  };
  const q = useQuery({
    queryKey: ['audit', page, action, outcome, from, to],
    queryFn: () => apiFetch<{ events: AuditRow[]; total: number }>(`/api/audit?${params}`),
    placeholderData: keepPreviousData,
  });

  return (
    <Panel
      title="Events"
      description={scopeNote}
      flush
      actions={
        <div className="flex flex-wrap items-center gap-2">
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
            className={compactInputClass()}
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
            className={compactInputClass()}
          >
            <option value="">Any outcome</option>
            <option value="ok">Done</option>
            <option value="failed">Failed</option>
            <option value="refused">Refused</option>
          </select>
          <label htmlFor="audit-from" className="text-small text-ink-600">
            From (UTC day)
          </label>
          <input
            id="audit-from"
            type="date"
            value={from}
            max={to || undefined}
            onChange={(e) => {
              setFrom(e.target.value);
              setPage(1);
            }}
            className={compactInputClass('w-36')}
          />
          <label htmlFor="audit-to" className="text-small text-ink-600">
            To (UTC day)
          </label>
          <input
            id="audit-to"
            type="date"
            value={to}
            min={from || undefined}
            onChange={(e) => {
              setTo(e.target.value);
              setPage(1);
            }}
            className={compactInputClass('w-36')}
          />
          <span className="flex items-center gap-1 text-small text-ink-600" data-testid="audit-export">
            Export
            <a
              className="rounded px-1.5 py-0.5 font-medium text-lobe-700 ring-1 ring-ink-200 hover:bg-ink-50"
              href={exportHref('csv')}
              download
            >
              CSV
            </a>
            <a
              className="rounded px-1.5 py-0.5 font-medium text-lobe-700 ring-1 ring-ink-200 hover:bg-ink-50"
              href={exportHref('json')}
              download
            >
              JSON
            </a>
          </span>
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
              render: (r) => <span title={r.at}>{formatDateTime(r.at)}</span>,
            },
            {
              key: 'action',
              header: 'Event',
              render: (r) => (
                <span title={r.action} data-action={r.action}>
                  {ACTION_WORDS[r.action as AuditAction] ?? words(r.action)}
                </span>
              ),
            },
            { key: 'actor', header: 'Who', render: (r) => r.actorEmail ?? <span className="text-ink-400">—</span> },
            { key: 'team', header: 'Team', render: (r) => r.teamName ?? <span className="text-ink-400">—</span> },
            {
              key: 'target',
              header: 'Object',
              className: 'whitespace-nowrap',
              render: (r) =>
                r.labels?.target ? (
                  r.labels.target.charAt(0).toUpperCase() + r.labels.target.slice(1)
                ) : r.targetType ? (
                  `${TARGET_WORDS[r.targetType] ?? words(r.targetType)}${r.targetId ? ` no. ${r.targetId}` : ''}`
                ) : (
                  <span className="text-ink-400">—</span>
                ),
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
              className: 'max-w-[26rem] break-words',
              render: (r) => <Details action={r.action} details={r.details} labels={r.labels?.details} />,
            },
          ]}
        />
      )}
    </Panel>
  );
}
