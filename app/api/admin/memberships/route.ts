// POST /api/admin/memberships { userId, teamId, role }: adds a user to a team or changes their role there.
// DELETE /api/admin/memberships?userId=&teamId=: removes the membership. Both audited.
import { apiRoute } from '@/lib/api/route';
import { getTeamById, getUserById, removeMembership, upsertMembership } from '@/lib/db/queries/accounts';
import { AppError } from '@/lib/errors';
import { authorize } from '@/lib/policy';
import { membershipBody, membershipQuery } from '../schema';

export const dynamic = 'force-dynamic';

async function checkTargets(userId: number, teamId: number) {
  const [user, team] = await Promise.all([getUserById({ userId }), getTeamById({ teamId })]);
  if (!user) throw new AppError('not_found:user', { message: 'There is no such user.' });
  if (!team) throw new AppError('not_found:team', { message: 'There is no such team.' });
}

export const POST = apiRoute({ body: membershipBody }, async ({ actor, body, ip }) => {
  authorize(actor, 'admin.memberships');
  await checkTargets(body.userId, body.teamId);
  const r = await upsertMembership(body, { userId: actor.userId, email: actor.email, ip });
  return { ...r, user: await getUserById({ userId: body.userId }) };
});

export const DELETE = apiRoute({ query: membershipQuery }, async ({ actor, query, ip }) => {
  authorize(actor, 'admin.memberships');
  await checkTargets(query.userId, query.teamId);
  const removed = await removeMembership(query, { userId: actor.userId, email: actor.email, ip });
  if (!removed) throw new AppError('not_found:team', { message: 'This user is not a member of that team.' });
  return { removed, user: await getUserById({ userId: query.userId }) };
});
