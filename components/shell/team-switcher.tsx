'use client';

import { useQueryClient } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { useState, useTransition } from 'react';
import { apiFetch } from '@/lib/api/client';

export interface TeamOption {
  teamId: number;
  teamName: string;
  role: string;
}

/** Chooses the current team (kept in the `lobeline_team` cookie by POST /api/teams/current). */
export function TeamSwitcher({ teams, currentTeamId }: { teams: TeamOption[]; currentTeamId: number | null }) {
  const router = useRouter();
  const queryClient = useQueryClient();
  const [pending, startTransition] = useTransition();
  const [error, setError] = useState<string | null>(null);

  if (teams.length === 0) return null;

  async function choose(teamId: number) {
    setError(null);
    try {
      await apiFetch('/api/teams/current', { method: 'POST', json: { teamId } });
      await queryClient.invalidateQueries();
      startTransition(() => router.refresh());
    } catch (err) {
      setError(err instanceof Error ? err.message : 'The team could not be changed.');
    }
  }

  return (
    <div className="flex items-center gap-2">
      <label
        htmlFor="team-switcher"
        className="hidden text-micro font-semibold tracking-wide text-ink-500 uppercase lg:block"
      >
        Team
      </label>
      <select
        id="team-switcher"
        data-testid="team-switcher"
        value={currentTeamId ?? ''}
        disabled={pending}
        onChange={(e) => choose(Number(e.target.value))}
        className="h-8 max-w-[20rem] rounded-md bg-white py-0 pr-8 pl-2.5 text-small font-medium text-ink-800 ring-1 ring-ink-200 ring-inset focus:ring-2 focus:ring-lobe-500 focus:outline-none"
      >
        {teams.map((t) => (
          <option key={t.teamId} value={t.teamId}>
            {t.teamName} · {t.role}
          </option>
        ))}
      </select>
      {error ? (
        <span className="text-small text-fault-600" role="status">
          {error}
        </span>
      ) : null}
    </div>
  );
}
