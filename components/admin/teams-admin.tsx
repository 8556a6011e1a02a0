'use client';

import { useQuery, useQueryClient } from '@tanstack/react-query';
import { type FormEvent, useState } from 'react';
import { Button } from '@/components/ui/button';
import { EmptyState } from '@/components/ui/empty-state';
import { ErrorState } from '@/components/ui/error-state';
import { Field } from '@/components/ui/field';
import { LoadingBlock } from '@/components/ui/loading-block';
import { Panel } from '@/components/ui/panel';
import { ApiError, apiFetch, detailsByField } from '@/lib/api/client';

interface TeamRow {
  id: number;
  slug: string;
  name: string;
  description: string | null;
  memberCount: number;
}

export function TeamsAdmin() {
  const qc = useQueryClient();
  const teams = useQuery({
    queryKey: ['admin', 'teams'],
    queryFn: () => apiFetch<{ teams: TeamRow[] }>('/api/admin/teams'),
  });
  const [pending, setPending] = useState(false);
  const [fields, setFields] = useState<Record<string, string>>({});
  const [notice, setNotice] = useState<{ tone: 'ok' | 'error'; text: string } | null>(null);

  async function onSubmit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = e.currentTarget;
    const f = new FormData(form);
    const body = {
      slug: String(f.get('slug') ?? ''),
      name: String(f.get('name') ?? ''),
      description: String(f.get('description') ?? ''),
    };
    setPending(true);
    setFields({});
    setNotice(null);
    try {
      await apiFetch('/api/admin/teams', { method: 'POST', json: body });
      setNotice({ tone: 'ok', text: `The team ${body.name} was created. Invite its members on the users page.` });
      form.reset();
      await qc.invalidateQueries({ queryKey: ['admin'] });
    } catch (err) {
      const byField = detailsByField(err);
      setFields(byField);
      if (!Object.keys(byField).length)
        setNotice({ tone: 'error', text: err instanceof ApiError ? err.message : 'Not created.' });
    } finally {
      setPending(false);
    }
  }

  return (
    <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_22rem]">
      <Panel title="Teams" flush>
        {teams.isPending ? (
          <div className="px-5 py-4">
            <LoadingBlock />
          </div>
        ) : teams.isError ? (
          <div className="px-5 py-4">
            <ErrorState message={teams.error.message} onRetry={() => void teams.refetch()} />
          </div>
        ) : teams.data.teams.length === 0 ? (
          <div className="px-5 py-4">
            <EmptyState title="No team yet">Create the first team with the form.</EmptyState>
          </div>
        ) : (
          <ul className="divide-y divide-ink-100" data-testid="teams-list">
            {teams.data.teams.map((t) => (
              <li key={t.id} className="flex items-start justify-between gap-4 px-5 py-3">
                <div className="min-w-0">
                  <p className="font-medium text-ink-900">{t.name}</p>
                  <p className="font-mono text-micro text-ink-500">{t.slug}</p>
                  {t.description ? <p className="mt-1 text-small text-ink-600">{t.description}</p> : null}
                </div>
                <span className="shrink-0 text-small text-ink-500 tabular-nums">
                  {t.memberCount} {t.memberCount === 1 ? 'member' : 'members'}
                </span>
              </li>
            ))}
          </ul>
        )}
      </Panel>
      <Panel title="Create a team">
        <form onSubmit={onSubmit} noValidate className="space-y-4" data-testid="team-form">
          {notice ? (
            <p
              role={notice.tone === 'error' ? 'alert' : 'status'}
              className={
                notice.tone === 'error'
                  ? 'text-small text-fault-700'
                  : 'rounded-md bg-lobe-50 px-3 py-2 text-small text-lobe-800'
              }
            >
              {notice.text}
            </p>
          ) : null}
          <Field label="Name" name="name" required error={fields.name} placeholder="Molecular frame group" />
          <Field label="Short name" name="slug" required error={fields.slug} hint="Lower-case, e.g. molframe." />
          <Field label="Description (optional)" name="description" error={fields.description} />
          <Button type="submit" isLoading={pending}>
            Create the team
          </Button>
        </form>
      </Panel>
    </div>
  );
}
