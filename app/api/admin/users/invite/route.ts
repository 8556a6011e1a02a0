// POST /api/admin/users/invite: invites an address to a team role and/or a facility role (administrators).
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { inviteUser } from '@/lib/auth/invitations';
import { authorize } from '@/lib/policy';
import { inviteBody } from '../../schema';

export const dynamic = 'force-dynamic';

export const POST = apiRoute({ body: inviteBody }, async ({ actor, body, ip }) => {
  authorize(actor, 'admin.users');
  if (body.teamId) authorize(actor, 'admin.memberships');
  const outcome = await inviteUser(
    {
      email: body.email,
      name: body.name,
      teamId: body.teamId ?? null,
      role: body.role ?? null,
      facilityRole: body.facilityRole ?? null,
    },
    { userId: actor.userId, email: actor.email, name: actor.name, ip },
  );
  return jsonResponse(outcome, { status: outcome.status === 'invited' ? 201 : 200 });
});
