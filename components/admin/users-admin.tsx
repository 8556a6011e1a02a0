'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { type FormEvent, useState } from 'react';
import { Badge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { ConfirmDialog } from '@/components/ui/confirm-dialog';
import { ErrorState } from '@/components/ui/error-state';
import { Field } from '@/components/ui/field';
import { compactInputClass, inputClass } from '@/components/ui/input-class';
import { LoadingBlock } from '@/components/ui/loading-block';
import { Panel } from '@/components/ui/panel';
import { ApiError, apiFetch, detailsByField } from '@/lib/api/client';
import { formatDay } from '@/lib/format';

type TeamRole = 'operator' | 'analyst' | 'pi';
type FacilityRole = 'steward' | 'admin';

interface UserRow {
  id: number;
  email: string;
  name: string;
  isActive: boolean;
  hasPassword: boolean;
  lastSignInAt: string | null;
  memberships: { teamId: number; teamName: string; role: TeamRole }[];
  facilityRoles: FacilityRole[];
}
interface InvitationRow {
  id: number;
  email: string;
  teamName: string | null;
  role: TeamRole | null;
  facilityRole: FacilityRole | null;
  expiresAt: string;
}
interface TeamRow {
  id: number;
  name: string;
  slug: string;
}

const ROLE: Record<TeamRole, string> = { operator: 'Operator', analyst: 'Analyst', pi: 'PI' };
/** What each team role may do, in the words of the confirmation (the policy itself is lib/policy.ts). */
const ROLE_SCOPE: Record<TeamRole, string> = {
  operator: 'will open shifts and send files, and no longer edit calibrations or approve.',
  analyst: 'will send files, edit calibration and settings drafts and start reductions, but not approve.',
  pi: 'will approve calibration and settings versions, create campaigns and read the team’s audit trail, but not open shifts or edit drafts.',
};
const FACILITY: Record<FacilityRole, string> = { steward: 'Data steward', admin: 'Administrator' };
const PAGE = 40;
const msg = (e: unknown) => (e instanceof Error ? e.message : 'Something went wrong.');
const day = (iso: string | null) => formatDay(iso);

export function UsersAdmin({ selfId }: { selfId: number }) {
  const qc = useQueryClient();
  const users = useQuery({
    queryKey: ['admin', 'users'],
    queryFn: () => apiFetch<{ users: UserRow[]; invitations: InvitationRow[] }>('/api/admin/users'),
  });
  const teams = useQuery({
    queryKey: ['admin', 'teams'],
    queryFn: () => apiFetch<{ teams: TeamRow[] }>('/api/admin/teams'),
  });
  const [notice, setNotice] = useState<{ tone: 'ok' | 'error'; text: string } | null>(null);
  const [filter, setFilter] = useState('');
  const [showAll, setShowAll] = useState(false);
  // A role change waits here for the admin's answer: the menu itself changes nothing (arrow keys move its value).
  const [roleChange, setRoleChange] = useState<{
    userId: number;
    userName: string;
    teamId: number;
    teamName: string;
    from: TeamRole;
    to: TeamRole;
  } | null>(null);

  const act = useMutation({
    mutationFn: (a: { url: string; method: 'POST' | 'DELETE'; json?: unknown; done: string }) =>
      apiFetch(a.url, { method: a.method, json: a.json }).then(() => a.done),
    onSuccess: async (done) => {
      setNotice({ tone: 'ok', text: done });
      await qc.invalidateQueries({ queryKey: ['admin'] });
    },
    onError: (e) => setNotice({ tone: 'error', text: msg(e) }),
  });

  if (users.isPending || teams.isPending)
    return (
      <Panel>
        <LoadingBlock label="Loading users…" />
      </Panel>
    );
  if (users.isError) return <ErrorState message={msg(users.error)} onRetry={() => void users.refetch()} />;
  if (teams.isError) return <ErrorState message={msg(teams.error)} onRetry={() => void teams.refetch()} />;
  const teamList = teams.data.teams;
  const needle = filter.trim().toLowerCase();
  const matching = users.data.users.filter(
    (u) =>
      !needle ||
      u.email.includes(needle) ||
      u.name.toLowerCase().includes(needle) ||
      u.memberships.some((m) => m.teamName.toLowerCase().includes(needle)),
  );
  const shown = showAll ? matching : matching.slice(0, PAGE);

  return (
    <div className="space-y-6">
      {roleChange ? (
        <ConfirmDialog
          title="Change this role?"
          confirmLabel={`Change the role to ${ROLE[roleChange.to]}`}
          cancelLabel="Keep the current role"
          busy={act.isPending}
          onCancel={() => setRoleChange(null)}
          onConfirm={() => {
            const c = roleChange;
            act.mutate(
              {
                url: '/api/admin/memberships',
                method: 'POST',
                json: { userId: c.userId, teamId: c.teamId, role: c.to },
                done: `${c.userName} is now ${ROLE[c.to]} in ${c.teamName}.`,
              },
              { onSettled: () => setRoleChange(null) },
            );
          }}
        >
          <p>
            {roleChange.userName} is {ROLE[roleChange.from]} in {roleChange.teamName}. As {ROLE[roleChange.to]} they{' '}
            {ROLE_SCOPE[roleChange.to]}
          </p>
          <p className="text-small text-ink-500">
            The change takes effect at their next request and is recorded in the audit trail.
          </p>
        </ConfirmDialog>
      ) : null}
      <InviteForm teams={teamList} onDone={(t) => setNotice({ tone: 'ok', text: t })} />
      {notice ? (
        <p
          role={notice.tone === 'error' ? 'alert' : 'status'}
          data-testid="admin-notice"
          className={
            notice.tone === 'error'
              ? 'rounded-md border border-fault-100 bg-fault-50 px-3 py-2 text-small text-fault-700'
              : 'rounded-md bg-lobe-50 px-3 py-2 text-small text-lobe-800'
          }
        >
          {notice.text}
        </p>
      ) : null}
      <Panel
        title="Accounts"
        description={
          needle
            ? `${matching.length} of ${users.data.users.length} accounts match`
            : `${users.data.users.length} accounts`
        }
        actions={
          <>
            <label htmlFor="user-filter" className="sr-only">
              Find an account
            </label>
            <input
              id="user-filter"
              type="search"
              value={filter}
              onChange={(e) => setFilter(e.target.value)}
              placeholder="Name, e-mail or team"
              className={compactInputClass('w-64')}
            />
          </>
        }
        flush
      >
        <div className="overflow-x-auto">
          <table className="min-w-full text-small" data-testid="users-table">
            <thead className="bg-ink-50 text-left text-micro font-semibold tracking-wide text-ink-500 uppercase">
              <tr>
                <th scope="col" className="px-4 py-2">
                  Person
                </th>
                <th scope="col" className="px-4 py-2">
                  Team roles
                </th>
                <th scope="col" className="px-4 py-2">
                  Facility roles
                </th>
                <th scope="col" className="px-4 py-2">
                  Last sign-in
                </th>
                <th scope="col" className="px-4 py-2 text-right">
                  Account
                </th>
              </tr>
            </thead>
            <tbody className="divide-y divide-ink-100 align-top">
              {shown.map((u) => (
                <tr
                  key={u.id}
                  data-testid={`user-row-${u.email}`}
                  className={u.isActive ? '' : 'bg-ink-50/70 text-ink-500'}
                >
                  <td className="px-4 py-3">
                    <p className="font-medium text-ink-900">{u.name}</p>
                    <p className="text-ink-500">{u.email}</p>
                    {!u.isActive ? (
                      <Badge tone="bad" className="mt-1">
                        deactivated
                      </Badge>
                    ) : null}
                    {!u.hasPassword ? (
                      <Badge tone="warn" className="mt-1">
                        not activated
                      </Badge>
                    ) : null}
                  </td>
                  <td className="px-4 py-3">
                    <ul className="space-y-1.5">
                      {u.memberships.map((m) => (
                        <li key={m.teamId} className="flex flex-wrap items-center gap-2">
                          <span className="min-w-[8rem] text-ink-700">{m.teamName}</span>
                          <label className="sr-only" htmlFor={`role-${u.id}-${m.teamId}`}>
                            Role of {u.name} in {m.teamName}
                          </label>
                          <select
                            id={`role-${u.id}-${m.teamId}`}
                            value={m.role}
                            disabled={act.isPending}
                            onChange={(e) => {
                              const to = e.target.value as TeamRole;
                              if (to === m.role) return;
                              setRoleChange({
                                userId: u.id,
                                userName: u.name,
                                teamId: m.teamId,
                                teamName: m.teamName,
                                from: m.role,
                                to,
                              });
                            }}
                            className="h-7 rounded-md bg-white py-0 pr-7 pl-2 text-small ring-1 ring-ink-200 ring-inset"
                          >
                            {(Object.keys(ROLE) as TeamRole[]).map((r) => (
                              <option key={r} value={r}>
                                {ROLE[r]}
                              </option>
                            ))}
                          </select>
                          <Button
                            size="sm"
                            variant="ghost"
                            className="h-7 px-2 text-fault-600"
                            disabled={act.isPending}
                            onClick={() =>
                              act.mutate({
                                url: `/api/admin/memberships?userId=${u.id}&teamId=${m.teamId}`,
                                method: 'DELETE',
                                done: `${u.name} was removed from ${m.teamName}.`,
                              })
                            }
                          >
                            Remove
                          </Button>
                        </li>
                      ))}
                      {u.memberships.length === 0 ? <li className="text-ink-400">no team</li> : null}
                    </ul>
                  </td>
                  <td className="px-4 py-3">
                    <div className="flex flex-wrap items-center gap-1.5">
                      {u.facilityRoles.map((r) => (
                        <span key={r} className="inline-flex items-center gap-1">
                          <Badge tone="warn">{FACILITY[r]}</Badge>
                          {!(r === 'admin' && u.id === selfId) ? (
                            <button
                              type="button"
                              aria-label={`Revoke ${FACILITY[r]} from ${u.name}`}
                              className="rounded px-1 text-ink-400 hover:bg-ink-100 hover:text-fault-600"
                              disabled={act.isPending}
                              onClick={() =>
                                act.mutate({
                                  url: `/api/admin/facility-roles?userId=${u.id}&role=${r}`,
                                  method: 'DELETE',
                                  done: `${FACILITY[r]} was revoked from ${u.name}.`,
                                })
                              }
                            >
                              ×
                            </button>
                          ) : null}
                        </span>
                      ))}
                      {(['steward', 'admin'] as FacilityRole[])
                        .filter((r) => !u.facilityRoles.includes(r))
                        .map((r) => (
                          <Button
                            key={r}
                            size="sm"
                            variant="ghost"
                            className="h-7 px-2"
                            disabled={act.isPending || !u.isActive}
                            onClick={() =>
                              act.mutate({
                                url: '/api/admin/facility-roles',
                                method: 'POST',
                                json: { userId: u.id, role: r },
                                done: `${u.name} is now ${FACILITY[r].toLowerCase()}.`,
                              })
                            }
                          >
                            Grant {r}
                          </Button>
                        ))}
                    </div>
                  </td>
                  <td className="px-4 py-3 text-ink-600">{day(u.lastSignInAt)}</td>
                  <td className="px-4 py-3 text-right">
                    {u.id === selfId ? (
                      <span className="text-ink-400">you</span>
                    ) : (
                      <Button
                        size="sm"
                        variant={u.isActive ? 'secondary' : 'primary'}
                        disabled={act.isPending}
                        onClick={() =>
                          act.mutate({
                            url: `/api/admin/users/${u.id}/status`,
                            method: 'POST',
                            json: { isActive: !u.isActive },
                            done: u.isActive ? `${u.name} was deactivated.` : `${u.name} was reactivated.`,
                          })
                        }
                      >
                        {u.isActive ? 'Deactivate' : 'Reactivate'}
                      </Button>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
        {matching.length > shown.length ? (
          <div className="border-t border-ink-100 px-4 py-2.5 text-small text-ink-600">
            Showing {shown.length} of {matching.length}.{' '}
            <button
              type="button"
              className="font-medium text-lobe-700 hover:underline"
              onClick={() => setShowAll(true)}
            >
              Show all
            </button>
          </div>
        ) : null}
      </Panel>
      <Panel title="Pending invitations" data-testid="invitations">
        {users.data.invitations.length === 0 ? (
          <p className="text-small text-ink-500">No invitation is waiting to be accepted.</p>
        ) : (
          <ul className="divide-y divide-ink-100">
            {users.data.invitations.map((i) => (
              <li key={i.id} className="flex flex-wrap items-center justify-between gap-2 py-2 text-small">
                <span>
                  <span className="font-medium text-ink-900">{i.email}</span>
                  <span className="text-ink-500">
                    {' '}
                    · {i.teamName && i.role ? `${ROLE[i.role]} in ${i.teamName}` : ''}
                    {i.facilityRole ? `${i.teamName ? ', ' : ''}${FACILITY[i.facilityRole]}` : ''} · expires{' '}
                    {day(i.expiresAt)}
                  </span>
                </span>
                <Button
                  size="sm"
                  variant="ghost"
                  disabled={act.isPending}
                  onClick={() =>
                    act.mutate({
                      url: `/api/admin/invitations/${i.id}/revoke`,
                      method: 'POST',
                      done: `The invitation to ${i.email} was withdrawn.`,
                    })
                  }
                >
                  Withdraw
                </Button>
              </li>
            ))}
          </ul>
        )}
      </Panel>
    </div>
  );
}

function InviteForm({ teams, onDone }: { teams: TeamRow[]; onDone: (text: string) => void }) {
  const qc = useQueryClient();
  const [pending, setPending] = useState(false);
  const [fields, setFields] = useState<Record<string, string>>({});
  const [error, setError] = useState<string | null>(null);

  async function onSubmit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = e.currentTarget;
    const f = new FormData(form);
    const teamId = String(f.get('teamId') ?? '');
    const role = String(f.get('role') ?? '');
    const facilityRole = String(f.get('facilityRole') ?? '');
    const body = {
      email: String(f.get('email') ?? ''),
      name: String(f.get('name') ?? ''),
      teamId: teamId ? Number(teamId) : null,
      role: teamId ? role || null : null,
      facilityRole: facilityRole || null,
    };
    setPending(true);
    setFields({});
    setError(null);
    try {
      const r = await apiFetch<{ status: 'invited' | 'added' }>('/api/admin/users/invite', {
        method: 'POST',
        json: body,
      });
      onDone(
        r.status === 'invited'
          ? `An invitation was sent to ${body.email}. The link is valid for 7 days.`
          : `${body.email} already has an account; the access was added and they were told by e-mail.`,
      );
      form.reset();
      await qc.invalidateQueries({ queryKey: ['admin'] });
    } catch (err) {
      const byField = detailsByField(err);
      setFields(byField);
      setError(Object.keys(byField).length ? null : err instanceof ApiError ? err.message : msg(err));
    } finally {
      setPending(false);
    }
  }

  return (
    <Panel title="Invite someone" description="They receive a single-use link to choose their password.">
      <form onSubmit={onSubmit} noValidate className="space-y-4" data-testid="invite-form">
        {error ? (
          <p
            role="alert"
            className="rounded-md border border-fault-100 bg-fault-50 px-3 py-2 text-small text-fault-700"
          >
            {error}
          </p>
        ) : null}
        <div className="grid gap-4 md:grid-cols-2">
          <Field label="E-mail address" name="email" type="email" required error={fields.email} />
          <Field label="Name (optional)" name="name" error={fields.name} />
        </div>
        <div className="grid gap-4 md:grid-cols-3">
          <Field label="Team" error={fields.teamId}>
            {({ id, invalid, describedBy }) => (
              <select
                id={id}
                name="teamId"
                aria-describedby={describedBy}
                className={inputClass(invalid)}
                defaultValue=""
              >
                <option value="">No team</option>
                {teams.map((t) => (
                  <option key={t.id} value={t.id}>
                    {t.name}
                  </option>
                ))}
              </select>
            )}
          </Field>
          <Field label="Role in the team" error={fields.role}>
            {({ id, invalid, describedBy }) => (
              <select
                id={id}
                name="role"
                aria-describedby={describedBy}
                className={inputClass(invalid)}
                defaultValue="operator"
              >
                {(Object.keys(ROLE) as TeamRole[]).map((r) => (
                  <option key={r} value={r}>
                    {ROLE[r]}
                  </option>
                ))}
              </select>
            )}
          </Field>
          <Field label="Facility role" error={fields.facilityRole}>
            {({ id, invalid, describedBy }) => (
              <select
                id={id}
                name="facilityRole"
                aria-describedby={describedBy}
                className={inputClass(invalid)}
                defaultValue=""
              >
                <option value="">None</option>
                <option value="steward">Data steward</option>
                <option value="admin">Administrator</option>
              </select>
            )}
          </Field>
        </div>
        <Button type="submit" isLoading={pending}>
          Send the invitation
        </Button>
      </form>
    </Panel>
  );
}
