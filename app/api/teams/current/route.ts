// POST /api/teams/current { teamId }: chooses the team the user works in (cookie `lobeline_team`). Only teams the
// user is a member of can be chosen.
import { z } from 'zod';
import { apiRoute, idParam, jsonResponse } from '@/lib/api/route';
import { TEAM_COOKIE } from '@/lib/auth/current-team';
import { AppError } from '@/lib/errors';
import { roleInTeam } from '@/lib/policy';

export const dynamic = 'force-dynamic';

const bodySchema = z.object({ teamId: idParam });

export const POST = apiRoute({ body: bodySchema }, async ({ actor, body, request }) => {
  // Only own teams can be chosen (a steward reads other teams' metadata without choosing them).
  if (roleInTeam(actor, body.teamId) === null) {
    throw new AppError('forbidden:team', {
      message: 'You can only switch to a team you are a member of.',
      context: { action: 'team.view', teamId: body.teamId, userId: actor.userId },
    });
  }
  const secure = new URL(request.url).protocol === 'https:';
  const cookie = [
    `${TEAM_COOKIE}=${body.teamId}`,
    'Path=/',
    'SameSite=Lax',
    'HttpOnly',
    `Max-Age=${60 * 60 * 24 * 180}`,
    secure ? 'Secure' : '',
  ]
    .filter(Boolean)
    .join('; ');
  return jsonResponse({ currentTeamId: body.teamId }, { headers: { 'set-cookie': cookie } });
});
