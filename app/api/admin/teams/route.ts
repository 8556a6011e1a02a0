// GET /api/admin/teams: every team with its member count. POST: creates a team (administrators).
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { createTeam, getTeamById, listTeams } from '@/lib/db/queries/accounts';
import { authorize } from '@/lib/policy';
import { createTeamBody } from '../schema';

export const dynamic = 'force-dynamic';

export const GET = apiRoute({}, async ({ actor }) => {
  authorize(actor, 'admin.teams');
  return { teams: await listTeams() };
});

export const POST = apiRoute({ body: createTeamBody }, async ({ actor, body, ip }) => {
  authorize(actor, 'admin.teams');
  const { id } = await createTeam(body, { userId: actor.userId, email: actor.email, ip });
  return jsonResponse({ team: await getTeamById({ teamId: id }) }, { status: 201 });
});
