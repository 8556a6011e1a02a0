'use client';

import { useQuery } from '@tanstack/react-query';
import Link from 'next/link';
import { Badge } from '@/components/ui/badge';
import { EmptyState } from '@/components/ui/empty-state';
import { ErrorState } from '@/components/ui/error-state';
import { LinkButton } from '@/components/ui/link-button';
import { LoadingBlock } from '@/components/ui/loading-block';
import { Panel } from '@/components/ui/panel';
import { ApiError, apiFetch } from '@/lib/api/client';
import { formatDateTime } from '@/lib/format';
import { formatWavelength, KIND_LABEL, ROLE_LABEL } from './labels';
import type { CampaignsResponse, MeResponse } from './types';

const errorMessage = (e: unknown) => (e instanceof ApiError || e instanceof Error ? e.message : 'Unknown error.');

export function HomeOverview() {
  const me = useQuery({ queryKey: ['me'], queryFn: () => apiFetch<MeResponse>('/api/me') });
  const teamId = me.data?.currentTeamId ?? null;
  const campaigns = useQuery({
    queryKey: ['campaigns', teamId ?? 'none'],
    queryFn: () => apiFetch<CampaignsResponse>('/api/campaigns'),
    enabled: me.isSuccess,
  });

  if (me.isPending) {
    return (
      <Panel>
        <LoadingBlock label="Loading your teams…" />
      </Panel>
    );
  }
  if (me.isError) {
    return <ErrorState message={errorMessage(me.error)} onRetry={() => void me.refetch()} />;
  }

  const m = me.data;
  const team = m.memberships.find((x) => x.teamId === teamId) ?? null;
  const canOpenShift = m.allowed.includes('shift.open');
  const canCreateCampaign = m.allowed.includes('campaign.create');

  return (
    <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_20rem]">
      <div className="min-w-0 space-y-6">
        <Panel
          title={team ? `Campaigns of ${team.teamName}` : m.facility.metadata ? 'Campaigns of every team' : 'Campaigns'}
          description={
            campaigns.data?.metadataOnly
              ? 'As data steward you see the catalogue metadata of every team; results stay with the teams.'
              : team
                ? `Your role in this team: ${ROLE_LABEL[team.role] ?? team.role}.`
                : undefined
          }
          actions={
            <>
              {canOpenShift ? (
                <LinkButton href="/shifts/new" size="sm" data-testid="action-open-shift">
                  Open a shift
                </LinkButton>
              ) : null}
              {canCreateCampaign ? (
                <LinkButton href="/campaigns/new" size="sm" variant="secondary" data-testid="action-new-campaign">
                  New campaign
                </LinkButton>
              ) : null}
            </>
          }
          flush
          data-testid="campaigns-panel"
        >
          <CampaignTable
            query={campaigns}
            showTeam={!team}
            emptyTitle={!team && m.facility.admin ? 'No campaigns to show' : 'No campaigns yet'}
            emptyHint={
              team
                ? canCreateCampaign
                  ? 'Create the first campaign of this team to start collecting shifts.'
                  : 'An analyst or PI of this team can create the first campaign.'
                : m.facility.admin
                  ? 'Administrators manage users and teams; campaigns belong to the teams.'
                  : 'You are not a member of any team yet. Ask an administrator to add you.'
            }
          />
        </Panel>
        <OpenShifts query={campaigns} canOpenShift={canOpenShift} />
      </div>
      <aside className="space-y-6">
        <Panel title="Your access" data-testid="teams-panel">
          {m.memberships.length === 0 && m.facilityRoles.length === 0 ? (
            <p className="text-small text-ink-500">You hold no role yet. An administrator can add you to a team.</p>
          ) : (
            <ul className="space-y-2.5">
              {m.memberships.map((x) => (
                <li key={x.teamId} className="flex items-center justify-between gap-3" data-testid="team-role">
                  <span className="min-w-0">
                    <span className="block truncate text-body font-medium text-ink-800">{x.teamName}</span>
                    {x.teamId === teamId ? <span className="text-micro text-lobe-700">current team</span> : null}
                  </span>
                  <Badge tone={x.role === 'pi' ? 'info' : x.role === 'analyst' ? 'good' : 'neutral'}>
                    {ROLE_LABEL[x.role]}
                  </Badge>
                </li>
              ))}
              {m.facilityRoles.map((r) => (
                <li key={r} className="flex items-center justify-between gap-3" data-testid="facility-role">
                  <span className="text-body font-medium text-ink-800">Facility</span>
                  <Badge tone="warn">{ROLE_LABEL[r]}</Badge>
                </li>
              ))}
            </ul>
          )}
        </Panel>
        {m.facility.admin ? (
          <Panel title="Administration">
            <ul className="space-y-1.5 text-small">
              <li>
                <Link className="font-medium text-lobe-700 hover:underline" href="/admin/users">
                  Users and invitations
                </Link>
              </li>
              <li>
                <Link className="font-medium text-lobe-700 hover:underline" href="/admin/teams">
                  Teams
                </Link>
              </li>
              <li>
                <Link className="font-medium text-lobe-700 hover:underline" href="/admin/audit">
                  Audit trail
                </Link>
              </li>
            </ul>
          </Panel>
        ) : null}
      </aside>
    </div>
  );
}

type CampaignsQuery = ReturnType<typeof useQuery<CampaignsResponse>>;

function CampaignTable({
  query,
  showTeam,
  emptyHint,
  emptyTitle,
}: {
  query: CampaignsQuery;
  showTeam: boolean;
  emptyHint: string;
  emptyTitle: string;
}) {
  if (query.isPending)
    return (
      <div className="px-5 py-4">
        <LoadingBlock label="Loading campaigns…" />
      </div>
    );
  if (query.isError) {
    return (
      <div className="px-5 py-4">
        <ErrorState message={errorMessage(query.error)} onRetry={() => void query.refetch()} />
      </div>
    );
  }
  const rows = query.data.campaigns;
  if (rows.length === 0) {
    return (
      <div className="px-5 py-4">
        <EmptyState title={emptyTitle}>{emptyHint}</EmptyState>
      </div>
    );
  }
  const th = 'px-4 py-2 text-left text-micro font-semibold tracking-wide text-ink-500 uppercase';
  return (
    <div className="overflow-x-auto">
      <table className="min-w-full text-small" data-testid="campaign-table">
        <thead className="bg-ink-50">
          <tr>
            <th scope="col" className={th}>
              Campaign
            </th>
            {showTeam ? (
              <th scope="col" className={th}>
                Team
              </th>
            ) : null}
            <th scope="col" className={th}>
              Target
            </th>
            <th scope="col" className={th}>
              Wavelength
            </th>
            <th scope="col" className={th}>
              Kind
            </th>
            <th scope="col" className={`${th} text-right`}>
              Shifts
            </th>
            <th scope="col" className={`${th} text-right`}>
              Scans
            </th>
          </tr>
        </thead>
        <tbody className="divide-y divide-ink-100">
          {rows.map((c) => (
            <tr key={c.id} className="hover:bg-ink-50/60">
              <td className="px-4 py-2.5">
                <Link
                  href={`/campaigns/${c.id}`}
                  className="font-medium text-ink-900 hover:text-lobe-700 hover:underline"
                >
                  {c.name}
                </Link>
                {c.status === 'closed' ? <Badge className="ml-2">closed</Badge> : null}
              </td>
              {showTeam ? <td className="px-4 py-2.5 text-ink-600">{c.teamName}</td> : null}
              <td className="px-4 py-2.5 font-medium text-ink-800">{c.target}</td>
              <td className="px-4 py-2.5 text-ink-700 tabular-nums">{formatWavelength(c.wavelengthNm)}</td>
              <td className="px-4 py-2.5 text-ink-700">{KIND_LABEL[c.experimentKind]}</td>
              <td className="px-4 py-2.5 text-right whitespace-nowrap text-ink-700 tabular-nums">
                {c.shiftCount}
                {c.openShiftCount ? (
                  <span className="ml-1 text-micro text-flare-700">({c.openShiftCount} open)</span>
                ) : null}
              </td>
              <td className="px-4 py-2.5 text-right text-ink-700 tabular-nums">{c.scanCount}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

function OpenShifts({ query, canOpenShift }: { query: CampaignsQuery; canOpenShift: boolean }) {
  if (!query.isSuccess) return null;
  const shifts = query.data.openShifts;
  return (
    <Panel title="Open shifts" description="Shifts that have been opened and not yet closed." data-testid="open-shifts">
      {shifts.length === 0 ? (
        <p className="text-small text-ink-500">
          No shift is open.{canOpenShift ? ' Open one when the beam time starts.' : ''}
        </p>
      ) : (
        <ul className="divide-y divide-ink-100">
          {shifts.map((s) => (
            <li key={s.id} className="flex flex-wrap items-center justify-between gap-2 py-2.5">
              <span className="min-w-0">
                <Link href={`/shifts/${s.id}`} className="font-medium text-ink-900 hover:text-lobe-700 hover:underline">
                  {s.title}
                </Link>
                <span className="block text-small text-ink-500">{s.campaignName}</span>
              </span>
              <span className="text-small text-ink-500">
                opened {formatDateTime(s.openedAt)}
                {s.openedBy ? ` by ${s.openedBy}` : ''}
              </span>
            </li>
          ))}
        </ul>
      )}
    </Panel>
  );
}
