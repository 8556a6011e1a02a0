// Who may act on a deletion request (C10; not a route): confirming or refusing needs a PI of the file's team
// ('deletion.approve') or an administrator ('deletion.approve.any'); withdrawing is also open to the steward who
// asked. Someone who may not see the team gets 404, as for every object addressed by id (lib/policy.ts).
import { z } from 'zod';
import { idParam } from '@/lib/api/route';
import { getDeletionRequestTeam } from '@/lib/db/queries/retention';
import { type Actor, authorizeObject, can } from '@/lib/policy';

export const requestParams = z.object({ requestId: idParam });

export async function requestFor(actor: Actor, requestId: number, mode: 'confirm' | 'cancel'): Promise<number> {
  const { teamId, requestedBy } = await getDeletionRequestTeam({ requestId });
  if (can(actor, 'deletion.approve.any')) return teamId;
  if (mode === 'cancel' && requestedBy === actor.userId && can(actor, 'deletion.request')) return teamId;
  authorizeObject(actor, 'deletion.approve', { teamId, surface: 'upload' });
  return teamId;
}
