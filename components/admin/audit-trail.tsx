'use client';

import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { type FormEvent, type ReactNode, useState } from 'react';
import { Badge } from '@/components/ui/badge';
import { DataTable } from '@/components/ui/data-table';
import { EmptyState } from '@/components/ui/empty-state';
import { ErrorState } from '@/components/ui/error-state';
import { compactInputClass } from '@/components/ui/input-class';
import { Panel } from '@/components/ui/panel';
import { apiFetch } from '@/lib/api/client';
import type { AuditAction } from '@/lib/audit';
import { AUDIT_KINDS, type AuditKind } from '@/lib/audit-kinds';
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
  campaignId?: number | null;
  campaignName?: string | null;
  /** SHA-256 of the file the event concerns, when known. */
  sha256?: string | null;
  /** The app's own words for the ids (e.g. "calibration v2"), from the server. */
  labels?: { target?: string; details: Record<string, string> };
}

const PAGE_SIZE = 50;
/** Areas of the app, matched by the start of the action name (the `action` filter of /api/audit). */
const ACTION_GROUPS: { value: string; label: string }[] = [
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
  'campaign.landing_published': 'Public page published',
  'campaign.landing_withdrawn': 'Public page withdrawn',
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
  changed: 'changed',
  score: 'completeness',
  requiredMissing: 'still needed',
  page: 'address',
  requestId: 'request',
  requestedBy: 'asked by',
  format: 'format',
  doi: 'DOI',
};

const words = (code: string) => code.replace(/_/g, ' ');

function detailValue(key: string, v: unknown): ReactNode {
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  if (typeof v === 'number') {
    if (key.endsWith('Bytes')) return formatBytes(v);
    if (key === 'score') return `${Math.round(v * 100)} %`;
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

function ShortSha({ sha256 }: { sha256: string }) {
  return (
    <span className="font-mono text-micro text-ink-500" title={`SHA-256 ${sha256}`}>
      {sha256.slice(0, 12)}…{sha256.slice(-4)}
    </span>
  );
}

function Details({
  action,
  details,
  labels = {},
  skip = [],
}: {
  action: string;
  details: Record<string, unknown> | null;
  labels?: Record<string, string>;
  /** Keys already shown in another column. */
  skip?: string[];
}) {
  if (!details) return null;
  const reasons = Array.isArray(details.reasons) ? details.reasons.filter((x) => typeof x === 'string') : [];
  const parts = Object.entries(details)
    .filter(([k, v]) => k !== 'reasons' && !skip.includes(k) && v !== null && v !== undefined)
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

export interface AuditCampaignOption {
  id: number;
  name: string;
  teamName: string;
}

/** The kind filter's value: "kind:<name>" (lib/audit-kinds.ts) or "area:<action prefix>". */
function kindParams(value: string, p: URLSearchParams) {
  if (value.startsWith('kind:')) p.set('kind', value.slice(5));
  if (value.startsWith('area:')) p.set('action', value.slice(5));
}

export function AuditTrail({ scopeNote, campaigns }: { scopeNote: string; campaigns: AuditCampaignOption[] }) {
  const [page, setPage] = useState(1);
  const [kind, setKind] = useState('');
  const [outcome, setOutcome] = useState('');
  const [from, setFrom] = useState('');
  const [to, setTo] = useState('');
  const [campaignId, setCampaignId] = useState('');
  // The two text filters apply when the search form is sent, not on every key.
  const [whoDraft, setWhoDraft] = useState('');
  const [objectDraft, setObjectDraft] = useState('');
  const [who, setWho] = useState('');
  const [object, setObject] = useState('');
  const filters = new URLSearchParams();
  kindParams(kind, filters);
  if (outcome) filters.set('outcome', outcome);
  if (campaignId) filters.set('campaignId', campaignId);
  if (who) filters.set('actor', who);
  if (object) filters.set('object', object);
  const params = new URLSearchParams(filters);
  params.set('page', String(page));
  params.set('pageSize', String(PAGE_SIZE));
  if (from) params.set('from', from);
  if (to) params.set('to', to);
  const onSearch = (e: FormEvent) => {
    e.preventDefault();
    setWho(whoDraft.trim());
    setObject(objectDraft.trim());
    setPage(1);
  };
  const filtered = !!(kind || outcome || campaignId || who || object || from || to);
  // The export takes the same kind of event and the chosen days (the last 30 days when none are chosen).
  const today = new Date().toISOString().slice(0, 10);
  const monthAgo = new Date(Date.now() - 29 * 86_400_000).toISOString().slice(0, 10);
  const exportHref = (format: 'csv' | 'json') => {
    const p = new URLSearchParams(filters);
    p.delete('outcome'); // the export takes every outcome
    p.set('format', format);
    p.set('from', from || (to && to < monthAgo ? to : monthAgo));
    p.set('to', to || today);
    return `/api/audit/export?${p}`;
  };
  const q = useQuery({
    queryKey: ['audit', params.toString()],
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
      <form
        onSubmit={onSearch}
        className="flex flex-wrap items-end gap-3 border-b border-ink-100 px-5 py-3"
        aria-label="Search the audit trail"
      >
        <div className="flex w-full flex-wrap items-end gap-x-3 gap-y-2">
          <div className="flex w-full flex-col gap-1 sm:w-auto">
            <label htmlFor="audit-action" className="text-small text-ink-600">
              Kind of event
            </label>
            <select
              id="audit-action"
              value={kind}
              onChange={(e) => {
                setKind(e.target.value);
                setPage(1);
              }}
              className={compactInputClass('w-full sm:w-[18rem]')}
            >
              <option value="">Every kind of event</option>
              <optgroup label="Who did what">
                {(Object.keys(AUDIT_KINDS) as AuditKind[]).map((k) => (
                  <option key={k} value={`kind:${k}`}>
                    {AUDIT_KINDS[k].label}
                  </option>
                ))}
              </optgroup>
              <optgroup label="By part of Lobeline">
                {ACTION_GROUPS.map((g) => (
                  <option key={g.value} value={`area:${g.value}`}>
                    {g.label}
                  </option>
                ))}
              </optgroup>
            </select>
          </div>
          <div className="flex w-full flex-col gap-1 sm:w-auto">
            <label htmlFor="audit-campaign" className="text-small text-ink-600">
              Campaign
            </label>
            <select
              id="audit-campaign"
              value={campaignId}
              onChange={(e) => {
                setCampaignId(e.target.value);
                setPage(1);
              }}
              className={compactInputClass('w-full sm:w-[16rem]')}
            >
              <option value="">Every campaign</option>
              {campaigns.map((c) => (
                <option key={c.id} value={String(c.id)}>
                  {c.teamName} · {c.name}
                </option>
              ))}
            </select>
          </div>
          <div className="flex flex-col gap-1">
            <label htmlFor="audit-outcome" className="text-small text-ink-600">
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
          </div>
          <div className="flex flex-col gap-1">
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
          </div>
          <div className="flex flex-col gap-1">
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
          </div>
        </div>
        <label className="flex flex-col gap-1 text-small text-ink-600">
          Who (part of an e-mail address)
          <input
            value={whoDraft}
            onChange={(e) => setWhoDraft(e.target.value)}
            maxLength={254}
            className={compactInputClass('w-56')}
            placeholder="e.g. quill@"
          />
        </label>
        <label className="flex flex-col gap-1 text-small text-ink-600">
          File: SHA-256 (first 6 or more digits) or part of its name
          <input
            value={objectDraft}
            onChange={(e) => setObjectDraft(e.target.value)}
            maxLength={128}
            className={compactInputClass('w-80 font-mono')}
            placeholder="e.g. 3f9a1c or scan_0042"
          />
        </label>
        <button
          type="submit"
          className="rounded-md bg-lobe-600 px-3 py-1.5 text-small font-medium text-white hover:bg-lobe-700"
        >
          Search
        </button>
        {filtered ? (
          <button
            type="button"
            className="text-small font-medium text-lobe-700 hover:underline"
            onClick={() => {
              setKind('');
              setOutcome('');
              setCampaignId('');
              setFrom('');
              setTo('');
              setWho('');
              setObject('');
              setWhoDraft('');
              setObjectDraft('');
              setPage(1);
            }}
          >
            Clear all filters
          </button>
        ) : null}
      </form>
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
          empty={
            <EmptyState title="No events match">
              {filtered
                ? 'Nothing matches all of these filters. Remove one to see more.'
                : 'Nothing has been recorded yet.'}
            </EmptyState>
          }
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
            {
              key: 'team',
              header: 'Team and campaign',
              render: (r) =>
                r.teamName || r.campaignName ? (
                  <>
                    {r.teamName ?? ''}
                    {r.campaignName ? <span className="block text-small text-ink-600">{r.campaignName}</span> : null}
                  </>
                ) : (
                  <span className="text-ink-400">—</span>
                ),
            },
            {
              key: 'target',
              header: 'Object',
              className: 'whitespace-nowrap',
              render: (r) => (
                <>
                  {r.labels?.target ? (
                    r.labels.target.charAt(0).toUpperCase() + r.labels.target.slice(1)
                  ) : r.targetType ? (
                    `${TARGET_WORDS[r.targetType] ?? words(r.targetType)}${r.targetId ? ` no. ${r.targetId}` : ''}`
                  ) : (
                    <span className="text-ink-400">—</span>
                  )}
                  {r.sha256 ? (
                    <span className="block">
                      <ShortSha sha256={r.sha256} />
                    </span>
                  ) : null}
                </>
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
              render: (r) => (
                <Details
                  action={r.action}
                  details={r.details}
                  labels={r.labels?.details}
                  skip={r.sha256 ? ['sha256'] : []}
                />
              ),
            },
          ]}
        />
      )}
    </Panel>
  );
}
