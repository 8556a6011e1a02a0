// Who is asking: the signed-in user as an Actor (lib/policy.ts), read fresh from MariaDB on every call so that a
// role change or a deactivation applies at once. Server only (route handlers, server pages, server actions).
import { createHash } from 'node:crypto';
import { cookies, headers } from 'next/headers';
import { getServerSession } from 'next-auth';
import { recordAudit } from '@/lib/audit';
import { getActorByUserId } from '@/lib/db/queries/accounts';
import { AppError } from '@/lib/errors';
import type { Actor } from '@/lib/policy';
import { authOptions } from './options';
import { inspectSessionToken, type SessionClaims, type SessionRejection, testSessionSource } from './session-source';
import { ipFromHeaders } from './sign-in';

const SESSION_COOKIES = ['__Secure-next-auth.session-token', 'next-auth.session-token'];
/** One audit row per refused token per 10 minutes and process (a stale tab polls; the trail should not flood). */
const AUDIT_EVERY_MS = 10 * 60_000;
const lastAudited = new Map<string, number>();

/**
 * Records a session cookie that was sent but not accepted (forged, tampered, signed with another secret, or
 * expired) as `auth.session_rejected`. Used by getActor for real requests and by the tests' session hook.
 */
export async function auditRejectedSession(token: string, ip: string): Promise<SessionRejection | null> {
  const r = await inspectSessionToken(token);
  if ('claims' in r) return null;
  const key = createHash('sha256').update(token).digest('hex');
  const now = Date.now();
  if ((lastAudited.get(key) ?? 0) + AUDIT_EVERY_MS > now) return r.rejected;
  if (lastAudited.size > 5000) lastAudited.clear();
  lastAudited.set(key, now);
  await recordAudit({
    action: 'auth.session_rejected',
    ip,
    outcome: 'refused',
    details: { reason: r.rejected, token: `sha256:${key.slice(0, 12)}` },
  });
  return r.rejected;
}

async function currentClaims(): Promise<SessionClaims | null> {
  const override = testSessionSource();
  if (override) return override();
  const session = await getServerSession(authOptions);
  const userId = session?.userId;
  if (typeof userId === 'number' && Number.isInteger(userId) && userId > 0) {
    return { userId, sessionVersion: typeof session?.sessionVersion === 'number' ? session.sessionVersion : 0 };
  }
  // No valid session: if the request carried a session cookie anyway, it was refused — put that in the trail.
  const jar = await cookies();
  const raw = SESSION_COOKIES.map((n) => jar.get(n)?.value).find((v) => !!v);
  if (raw) await auditRejectedSession(raw, ipFromHeaders(await headers()));
  return null;
}

/** The signed-in actor, or null (no session, unknown or deactivated user, or a session that was ended). */
export async function getActor(): Promise<Actor | null> {
  const claims = await currentClaims();
  if (!claims) return null;
  return getActorByUserId({ userId: claims.userId, sessionVersion: claims.sessionVersion });
}

/** The signed-in actor; throws AppError('unauthorized:auth') without one. */
export async function requireActor(): Promise<Actor> {
  const actor = await getActor();
  if (!actor) throw new AppError('unauthorized:auth');
  return actor;
}
