// Where getActor() learns who is signed in. In the app this is the next-auth session (a signed, encrypted JWT in
// a cookie). Tests that call route handlers directly have no request scope for next-auth, so they may replace the
// source with `setSessionSourceForTests` (tests/integration/helpers/session.ts). The override is honoured only
// when NODE_ENV is 'test' (vitest sets it); a production or development server never reads it.
import { decode } from 'next-auth/jwt';
import { getEnv } from '@/lib/env';

export interface SessionClaims {
  userId: number;
  /**
   * The account's session version when the token was issued (lib/db/queries/accounts.ts getActorByUserId refuses
   * a token whose version is no longer the account's). Absent only in claims a test hook makes up.
   */
  sessionVersion?: number;
}

export type SessionSource = () => Promise<SessionClaims | null>;

const g = globalThis as typeof globalThis & { __lobelineTestSessionSource?: SessionSource | null };

/** Test hook: every later getActor() call asks `source` instead of next-auth. Pass null to remove it. */
export function setSessionSourceForTests(source: SessionSource | null): void {
  if (process.env.NODE_ENV !== 'test') throw new Error('setSessionSourceForTests is only available in tests');
  g.__lobelineTestSessionSource = source;
}

/** The test override when one is set and NODE_ENV is 'test', else null. */
export function testSessionSource(): SessionSource | null {
  if (process.env.NODE_ENV !== 'test') return null;
  return g.__lobelineTestSessionSource ?? null;
}

/**
 * Decodes a next-auth session cookie value with NEXTAUTH_SECRET; a forged, tampered or expired token gives null.
 * Used by tests to exercise the real token check, and usable by any server code holding a raw cookie.
 */
export async function claimsFromSessionToken(token: string): Promise<SessionClaims | null> {
  const r = await inspectSessionToken(token);
  return 'claims' in r ? r.claims : null;
}

/** Why a session token was not accepted: past its expiry, or not a token signed with our secret at all. */
export type SessionRejection = 'expired' | 'invalid';

/** Like claimsFromSessionToken, but says why a token is refused (for the audit trail). */
export async function inspectSessionToken(
  token: string,
): Promise<{ claims: SessionClaims } | { rejected: SessionRejection }> {
  let decoded: Awaited<ReturnType<typeof decode>>;
  try {
    decoded = await decode({ token, secret: getEnv().NEXTAUTH_SECRET });
  } catch (err) {
    // jose reports an expired but authentic token as JWTExpired (code ERR_JWT_EXPIRED); anything else is forged,
    // tampered, from another secret or not a token.
    const code = (err as { code?: string } | null)?.code;
    return { rejected: code === 'ERR_JWT_EXPIRED' ? 'expired' : 'invalid' };
  }
  const userId = decoded?.userId;
  if (typeof userId !== 'number' || !Number.isInteger(userId) || userId <= 0) return { rejected: 'invalid' };
  const exp = decoded?.exp;
  if (typeof exp === 'number' && exp * 1000 < Date.now()) return { rejected: 'expired' };
  const sv = decoded?.sv;
  return { claims: { userId, sessionVersion: typeof sv === 'number' && Number.isInteger(sv) ? sv : 0 } };
}
