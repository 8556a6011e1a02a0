// The team the user is working in, chosen with the team switcher and kept in the `lobeline_team` cookie.
// Server only. The cookie is a preference, not a permission: every read is still checked by lib/policy.
import { cookies } from 'next/headers';
import type { Actor } from '@/lib/policy';

export const TEAM_COOKIE = 'lobeline_team';

/**
 * Picks the current team: the requested one when the actor is a member of it, else the first team (by name) the
 * actor belongs to, else null (stewards and admins without a membership).
 */
export function pickTeamId(actor: Actor, requested: number | null | undefined): number | null {
  if (requested != null && actor.memberships.some((m) => m.teamId === requested)) return requested;
  const sorted = [...actor.memberships].sort((a, b) => a.teamName.localeCompare(b.teamName));
  return sorted[0]?.teamId ?? null;
}

/** Reads the cookie of the current request (null outside a request) and applies pickTeamId. */
export async function getCurrentTeamId(actor: Actor): Promise<number | null> {
  let requested: number | null = null;
  try {
    const raw = (await cookies()).get(TEAM_COOKIE)?.value;
    const n = Number(raw);
    requested = raw && Number.isInteger(n) && n > 0 ? n : null;
  } catch {
    requested = null; // no request scope (scripts, tests)
  }
  return pickTeamId(actor, requested);
}
