// Password change by the signed-in user (OWASP ASVS 4.0 V2.1.6: the current password is asked for; V3.3.3: the
// other sessions end). The new hash and a raised session version are written in one transaction; the session of
// the browser that asked is re-issued with the new version so that it stays signed in.
import { cookies } from 'next/headers';
import { decode, encode } from 'next-auth/jwt';
import { type By, changePasswordRecord, getPasswordCheck } from '@/lib/db/queries/accounts';
import { getEnv } from '@/lib/env';
import { AppError } from '@/lib/errors';
import { SESSION_MAX_AGE_SECONDS } from './options';
import { hashPassword, verifyPassword } from './password';
import { checkSignInThrottle, recordSignInFailure } from './throttle';

export async function changePassword(input: {
  userId: number;
  currentPassword: string;
  newPassword: string;
  by: By;
}): Promise<{ sessionVersion: number }> {
  const account = await getPasswordCheck({ userId: input.userId });
  if (!account) throw new AppError('unauthorized:auth');
  // A wrong current password counts against the account like a failed sign-in (no guessing through this form).
  const verdict = await checkSignInThrottle({ email: account.email, ip: input.by.ip });
  if (!verdict.allowed) {
    throw new AppError('rate_limited:auth', {
      message: 'Too many wrong passwords. Please wait a minute before trying again.',
      retryAfterSeconds: verdict.retryAfterSeconds,
    });
  }
  const ok = account.passwordHash ? await verifyPassword(input.currentPassword, account.passwordHash) : false;
  if (!ok) {
    await recordSignInFailure({ email: account.email, ip: input.by.ip });
    throw new AppError('bad_request:auth', {
      message: 'The current password is not right.',
      details: ['currentPassword: The current password is not right.'],
      context: { fields: { currentPassword: 'The current password is not right.' } },
    });
  }
  const sessionVersion = await changePasswordRecord(
    { userId: input.userId, passwordHash: await hashPassword(input.newPassword) },
    input.by,
  );
  return { sessionVersion };
}

/**
 * A Set-Cookie value that replaces the caller's session cookie by the same token with `sessionVersion`, or null
 * when the request carries no session cookie (route handlers called outside a request, e.g. in tests).
 */
export async function reissuedSessionCookie(sessionVersion: number): Promise<string | null> {
  let jar: Awaited<ReturnType<typeof cookies>>;
  try {
    jar = await cookies();
  } catch {
    return null;
  }
  const secure = getEnv().NEXTAUTH_URL.startsWith('https://');
  const name = secure ? '__Secure-next-auth.session-token' : 'next-auth.session-token';
  const raw = jar.get(name)?.value;
  if (!raw) return null;
  const secret = getEnv().NEXTAUTH_SECRET;
  const token = await decode({ token: raw, secret }).catch(() => null);
  if (!token) return null;
  const value = await encode({ token: { ...token, sv: sessionVersion }, secret, maxAge: SESSION_MAX_AGE_SECONDS });
  const expires = new Date(Date.now() + SESSION_MAX_AGE_SECONDS * 1000).toUTCString();
  return `${name}=${value}; Path=/; Expires=${expires}; HttpOnly; SameSite=Lax${secure ? '; Secure' : ''}`;
}
