// POST /api/admin/invitations/[invitationId]/revoke: withdraws a pending invitation (its link stops working).
import { z } from 'zod';
import { apiRoute, idParam } from '@/lib/api/route';
import { revokeInvitation } from '@/lib/db/queries/accounts';
import { AppError } from '@/lib/errors';
import { authorize } from '@/lib/policy';

export const dynamic = 'force-dynamic';

export const POST = apiRoute({ params: z.object({ invitationId: idParam }) }, async ({ actor, params, ip }) => {
  authorize(actor, 'admin.users');
  const ok = await revokeInvitation(params, { userId: actor.userId, email: actor.email, ip });
  if (!ok) throw new AppError('not_found:invitation', { message: 'There is no pending invitation with this id.' });
  return { revoked: true };
});
