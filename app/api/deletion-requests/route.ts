// GET /api/deletion-requests: deletions that wait for their second step (C10): data stewards and administrators
// see every team's, a PI those of the teams they lead; `teamId` narrows to one team.
import { z } from 'zod';
import { apiRoute, idParam } from '@/lib/api/route';
import { listOpenDeletionRequests } from '@/lib/db/queries/retention';
import { AppError } from '@/lib/errors';
import { authorize, can, teamsWhere } from '@/lib/policy';

export const dynamic = 'force-dynamic';

const query = z.object({ teamId: idParam.optional() });

export const GET = apiRoute({ query }, async ({ actor, query }) => {
  let teamIds: number[] | 'all';
  if (can(actor, 'deletion.request') || can(actor, 'deletion.approve.any')) {
    teamIds = query.teamId ? [query.teamId] : 'all';
  } else {
    const mine = teamsWhere(actor, 'deletion.approve');
    if (mine.length === 0) {
      throw new AppError('forbidden:archive', {
        message: 'Deletion requests are open to data stewards, administrators and PIs (for their teams).',
        context: { action: 'deletion.approve' },
      });
    }
    if (query.teamId) authorize(actor, 'deletion.approve', { teamId: query.teamId });
    teamIds = query.teamId ? [query.teamId] : mine;
  }
  return { requests: await listOpenDeletionRequests({ teamIds }) };
});
