// GET /api/admin/users: every account with its memberships and facility roles, and the pending invitations.
import { apiRoute } from '@/lib/api/route';
import { listPendingInvitations, listUsers } from '@/lib/db/queries/accounts';
import { authorize } from '@/lib/policy';

export const dynamic = 'force-dynamic';

export const GET = apiRoute({}, async ({ actor }) => {
  authorize(actor, 'admin.users');
  const [users, invitations] = await Promise.all([listUsers(), listPendingInvitations()]);
  return { users, invitations };
});
