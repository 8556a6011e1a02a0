// GET /api/campaigns[?teamId=|?scope=all]: campaigns of a team with shift and scan counts, and its open shifts.
// POST /api/campaigns: creates a campaign in the current (or given) team (analysts and PIs).
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { getCurrentTeamId } from '@/lib/auth/current-team';
import { listTeams } from '@/lib/db/queries/accounts';
import { createCampaign, listCampaigns, listOpenShifts } from '@/lib/db/queries/campaigns';
import { AppError } from '@/lib/errors';
import { authorize, can, roleInTeam } from '@/lib/policy';
import { createCampaignBody, listCampaignsQuery } from './schema';

export const dynamic = 'force-dynamic';

export const GET = apiRoute({ query: listCampaignsQuery }, async ({ actor, query }) => {
  let teamIds: number[];
  let teamId: number | null = null;
  if (query.scope === 'all') {
    authorize(actor, 'campaign.metadata');
    teamIds = (await listTeams()).map((t) => t.id);
  } else if (query.teamId) {
    teamId = query.teamId;
    authorize(actor, 'campaign.view', { teamId });
    teamIds = [teamId];
  } else {
    teamId = await getCurrentTeamId(actor);
    if (teamId) teamIds = [teamId];
    else if (can(actor, 'campaign.metadata')) teamIds = (await listTeams()).map((t) => t.id);
    else teamIds = [];
  }
  const [campaigns, openShifts] = await Promise.all([listCampaigns({ teamIds }), listOpenShifts({ teamIds })]);
  return {
    teamId,
    /** True when the caller sees these as a steward (metadata), not as a team member. */
    metadataOnly: teamIds.some((id) => roleInTeam(actor, id) === null),
    campaigns,
    openShifts,
  };
});

export const POST = apiRoute({ body: createCampaignBody }, async ({ actor, body, ip }) => {
  const teamId = body.teamId ?? (await getCurrentTeamId(actor));
  if (!teamId) {
    throw new AppError('bad_request:campaign', {
      message: 'Choose a team first: you are not a member of any team.',
      details: ['teamId: Choose a team.'],
    });
  }
  authorize(actor, 'campaign.create', { teamId });
  const { id } = await createCampaign(
    {
      teamId,
      name: body.name,
      target: body.target,
      wavelengthNm: body.wavelengthNm,
      experimentKind: body.experimentKind,
      description: body.description,
    },
    { userId: actor.userId, email: actor.email, ip },
  );
  return jsonResponse({ campaign: { id, teamId } }, { status: 201 });
});
