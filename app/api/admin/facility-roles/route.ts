// POST /api/admin/facility-roles { userId, role }: grants steward or admin. DELETE ?userId=&role=: revokes it.
import { z } from 'zod';
import { apiRoute, idParam } from '@/lib/api/route';
import { countAdmins, getUserById, grantFacilityRole, revokeFacilityRole } from '@/lib/db/queries/accounts';
import { AppError } from '@/lib/errors';
import { authorize } from '@/lib/policy';
import { facilityRole, facilityRoleBody } from '../schema';

export const dynamic = 'force-dynamic';

async function requireUser(userId: number) {
  const user = await getUserById({ userId });
  if (!user) throw new AppError('not_found:user', { message: 'There is no such user.' });
  return user;
}

export const POST = apiRoute({ body: facilityRoleBody }, async ({ actor, body, ip }) => {
  authorize(actor, 'admin.users');
  await requireUser(body.userId);
  const granted = await grantFacilityRole(body, { userId: actor.userId, email: actor.email, ip });
  return { granted, user: await getUserById({ userId: body.userId }) };
});

export const DELETE = apiRoute(
  { query: z.object({ userId: idParam, role: facilityRole }) },
  async ({ actor, query, ip }) => {
    authorize(actor, 'admin.users');
    const user = await requireUser(query.userId);
    if (query.role === 'admin' && user.facilityRoles.includes('admin') && (await countAdmins()) <= 1) {
      throw new AppError('conflict:user', { message: 'This is the last active administrator; add another one first.' });
    }
    const revoked = await revokeFacilityRole(query, { userId: actor.userId, email: actor.email, ip });
    if (!revoked) throw new AppError('not_found:user', { message: 'This user does not hold that role.' });
    return { revoked, user: await getUserById({ userId: query.userId }) };
  },
);
