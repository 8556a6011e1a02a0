// POST /api/admin/users/[userId]/status { isActive }: deactivates (or reactivates) an account. A deactivated
// account cannot sign in, and its open sessions stop working at once (getActor re-reads the account).
import { apiRoute } from '@/lib/api/route';
import { countAdmins, getUserById, setUserActiveAudited } from '@/lib/db/queries/accounts';
import { AppError } from '@/lib/errors';
import { authorize } from '@/lib/policy';
import { userIdParams, userStatusBody } from '../../../schema';

export const dynamic = 'force-dynamic';

export const POST = apiRoute({ params: userIdParams, body: userStatusBody }, async ({ actor, params, body, ip }) => {
  authorize(actor, 'admin.users');
  const user = await getUserById({ userId: params.userId });
  if (!user) throw new AppError('not_found:user', { message: 'There is no such user.' });
  if (!body.isActive && user.id === actor.userId) {
    throw new AppError('conflict:user', { message: 'You cannot deactivate your own account.' });
  }
  if (!body.isActive && user.facilityRoles.includes('admin') && (await countAdmins()) <= 1) {
    throw new AppError('conflict:user', { message: 'This is the last active administrator; add another one first.' });
  }
  await setUserActiveAudited(
    { userId: user.id, isActive: body.isActive },
    { userId: actor.userId, email: actor.email, ip },
  );
  return { user: await getUserById({ userId: user.id }) };
});
