// Who is asking: the signed-in user as an Actor (lib/policy.ts), read fresh from MariaDB on every call so that a
// role change or a deactivation applies at once. Server only (route handlers, server pages, server actions).
import { getServerSession } from 'next-auth';
import { getActorByUserId } from '@/lib/db/queries/accounts';
import { AppError } from '@/lib/errors';
import type { Actor } from '@/lib/policy';
import { authOptions } from './options';
import { type SessionClaims, testSessionSource } from './session-source';

async function currentClaims(): Promise<SessionClaims | null> {
  const override = testSessionSource();
  if (override) return override();
  const session = await getServerSession(authOptions);
  const userId = session?.userId;
  return typeof userId === 'number' && Number.isInteger(userId) && userId > 0 ? { userId } : null;
}

/** The signed-in actor, or null (no session, unknown or deactivated user). */
export async function getActor(): Promise<Actor | null> {
  const claims = await currentClaims();
  if (!claims) return null;
  return getActorByUserId({ userId: claims.userId });
}

/** The signed-in actor; throws AppError('unauthorized:auth') without one. */
export async function requireActor(): Promise<Actor> {
  const actor = await getActor();
  if (!actor) throw new AppError('unauthorized:auth');
  return actor;
}
