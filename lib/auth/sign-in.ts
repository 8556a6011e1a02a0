// The credentials check behind the sign-in form, with the sign-in throttle (lib/auth/throttle.ts) and the audit
// trail. Failures slow the account down (a growing wait, at most MAX_ACCOUNT_WAIT_SECONDS) instead of locking it,
// and an address that fails too often is refused until the window ends. The client address comes from
// ipFromHeaders below, so a client cannot spread its attempts over addresses it makes up. Every attempt is also
// kept in `sign_in_attempts` for the record.
import { recordAudit } from '@/lib/audit';
import { getUserForSignIn, markSignedIn, normalizeEmail, recordSignInAttempt } from '@/lib/db/queries/accounts';
import { log } from '@/lib/log';
import { clientAddressFromHeaders } from './client-address';
import { DUMMY_HASH, verifyPassword } from './password';
import {
  checkSignInThrottle,
  FREE_FAILURES_PER_ACCOUNT,
  MAX_ACCOUNT_WAIT_SECONDS,
  MAX_FAILURES_PER_ADDRESS,
  recordSignInFailure,
  recordSignInSuccess,
  SIGN_IN_WINDOW_SECONDS,
} from './throttle';

export const SIGN_IN_WINDOW_MINUTES = SIGN_IN_WINDOW_SECONDS / 60;
export { FREE_FAILURES_PER_ACCOUNT, MAX_ACCOUNT_WAIT_SECONDS, MAX_FAILURES_PER_ADDRESS };

export type SignInFailure = 'unknown_account' | 'wrong_password' | 'deactivated' | 'rate_limited';

export type SignInOutcome =
  | { ok: true; user: { id: number; email: string; name: string; sessionVersion: number } }
  | { ok: false; reason: SignInFailure; retryAfterSeconds?: number };

/** Checks e-mail and password, applies the throttle, records the attempt and an audit event. Never throws for bad input. */
export async function attemptSignIn(input: { email: string; password: string; ip: string }): Promise<SignInOutcome> {
  const email = normalizeEmail(input.email);
  const ip = input.ip || 'unknown';

  const verdict = await checkSignInThrottle({ email, ip });
  if (!verdict.allowed) {
    await recordAudit({
      action: 'auth.sign_in_failed',
      actorEmail: email,
      ip,
      outcome: 'refused',
      details: {
        reason: 'rate_limited',
        limitedBy: verdict.limitedBy === 'address' ? 'ip' : 'account',
        failures: verdict.failures,
        retryAfterSeconds: verdict.retryAfterSeconds,
      },
    });
    log.warn('sign-in throttled', { limitedBy: verdict.limitedBy, ip });
    return { ok: false, reason: 'rate_limited', retryAfterSeconds: verdict.retryAfterSeconds };
  }

  const user = await getUserForSignIn({ email });
  // Compare against a dummy hash for unknown accounts so the answer takes as long either way.
  const passwordOk = await verifyPassword(input.password, user?.passwordHash ?? DUMMY_HASH);

  let reason: SignInFailure | null = null;
  if (!user) reason = 'unknown_account';
  else if (!user.passwordHash || !passwordOk) reason = 'wrong_password';
  else if (!user.isActive) reason = 'deactivated';

  await recordSignInAttempt({ email, ip, succeeded: reason === null });
  if (reason !== null || !user) {
    // A deactivated account with the right password is not a guess: it does not count against the limits.
    if (reason !== 'deactivated') await recordSignInFailure({ email, ip });
    await recordAudit({
      action: 'auth.sign_in_failed',
      actorId: user?.id ?? null,
      actorEmail: email,
      targetType: user ? 'user' : null,
      targetId: user?.id ?? null,
      ip,
      outcome: 'failed',
      details: { reason: reason ?? 'unknown_account' },
    });
    return { ok: false, reason: reason ?? 'unknown_account' };
  }

  await recordSignInSuccess({ email });
  await markSignedIn({ userId: user.id });
  await recordAudit({
    action: 'auth.sign_in',
    actorId: user.id,
    actorEmail: user.email,
    targetType: 'user',
    targetId: user.id,
    ip,
  });
  return {
    ok: true,
    user: { id: user.id, email: user.email, name: user.name, sessionVersion: user.sessionVersion },
  };
}

/**
 * Client address for the limits and the audit trail: from x-forwarded-for as rewritten by scripts/serve.ts under
 * TRUSTED_PROXY_HOPS (see lib/auth/client-address.ts), never a value the client chose.
 */
export function ipFromHeaders(headers: Headers | Record<string, unknown> | undefined): string {
  return clientAddressFromHeaders(headers);
}

/** The sentence shown on the sign-in page for each failure code (never says whether the account exists). */
export const SIGN_IN_MESSAGES: Record<string, string> = {
  CredentialsSignin: 'The e-mail address or password is not right.',
  deactivated: 'This account has been deactivated. Ask a Lobeline administrator if you need access again.',
  rate_limited: 'Too many failed sign-ins. Please wait a minute before trying again.',
  unavailable: 'Signing in is not possible right now because a service is not answering. Please try again in a minute.',
};
