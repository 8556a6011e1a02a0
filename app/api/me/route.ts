// GET /api/me: the signed-in user, their teams and roles, the current team and what they may do in it.
import { apiRoute } from '@/lib/api/route';
import { getCurrentTeamId } from '@/lib/auth/current-team';
import { can, TEAM_ACTIONS } from '@/lib/policy';

export const dynamic = 'force-dynamic';

export const GET = apiRoute({}, async ({ actor }) => {
  const currentTeamId = await getCurrentTeamId(actor);
  const scope = { teamId: currentTeamId };
  return {
    user: { id: actor.userId, email: actor.email, name: actor.name },
    memberships: actor.memberships,
    facilityRoles: actor.facilityRoles,
    currentTeamId,
    /** Team actions allowed in the current team (for showing buttons; the server checks again). */
    allowed: currentTeamId ? TEAM_ACTIONS.filter((a) => can(actor, a, scope)) : [],
    facility: {
      metadata: can(actor, 'campaign.metadata'),
      admin: can(actor, 'admin.users'),
      auditAll: can(actor, 'audit.view.all') || can(actor, 'admin.audit'),
    },
  };
});
