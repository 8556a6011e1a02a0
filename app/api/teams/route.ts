// GET /api/teams: the teams the user may see. Members see their own teams; stewards (metadata) and administrators
// (team management) see every team. Member counts only for administrators.
import { apiRoute } from '@/lib/api/route';
import { listTeams } from '@/lib/db/queries/accounts';
import { can, roleInTeam } from '@/lib/policy';

export const dynamic = 'force-dynamic';

export const GET = apiRoute({}, async ({ actor }) => {
  const seesAll = can(actor, 'campaign.metadata') || can(actor, 'admin.teams');
  const teams = await listTeams(seesAll ? {} : { ids: actor.memberships.map((m) => m.teamId) });
  const isAdmin = can(actor, 'admin.teams');
  return {
    teams: teams.map((t) => ({
      id: t.id,
      slug: t.slug,
      name: t.name,
      description: t.description,
      role: roleInTeam(actor, t.id),
      ...(isAdmin ? { memberCount: t.memberCount } : {}),
    })),
  };
});
