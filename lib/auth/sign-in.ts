// The credentials check behind the sign-in form, with the failed-attempt limits (C1) and the audit trail.
//
// Limits (sliding window of SIGN_IN_WINDOW_MINUTES):
//   - an account is locked after MAX_FAILURES_PER_ACCOUNT failed attempts since its last successful sign-in;
//   - an address is locked after MAX_FAILURES_PER_IP failed attempts, whatever the accounts.
// Only real failures are counted (a refused attempt while locked is audited but not counted), so a lock ends
// SIGN_IN_WINDOW_MINUTES after the failure that caused it. Counts come from the `sign_in_attempts` table, so the
// limits hold across server processes.
import { recordAudit } from '@/lib/audit';
import {
  countFailedSignIns,
  getUserForSignIn,
  markSignedIn,
  normalizeEmail,
  oldestFailureSince,
  recordSignInAttempt,
} from '@/lib/db/queries/accounts';
import { log } from '@/lib/log';
import { DUMMY_HASH, verifyPassword } from './password';

export const SIGN_IN_WINDOW_MINUTES = 15;
export const MAX_FAILURES_PER_ACCOUNT = 5;
export const MAX_FAILURES_PER_IP = 20;

export type SignInFailure = 'unknown_account' | 'wrong_password' | 'deactivated' | 'rate_limited';

export type SignInOutcome =
  | { ok: true; user: { id: number; email: string; name: string } }
  | { ok: false; reason: SignInFailure; retryAfterSeconds?: number };

/** Checks e-mail and password, applies the limits, records the attempt and an audit event. Never throws for bad input. */
export async function attemptSignIn(input: { email: string; password: string; ip: string }): Promise<SignInOutcome> {
  const email = normalizeEmail(input.email);
  const ip = input.ip || 'unknown';
  const windowMs = SIGN_IN_WINDOW_MINUTES * 60_000;
  const since = new Date(Date.now() - windowMs);

  const counts = await countFailedSignIns({ email, ip, since });
  if (counts.byAccount >= MAX_FAILURES_PER_ACCOUNT || counts.byIp >= MAX_FAILURES_PER_IP) {
    const by = counts.byAccount >= MAX_FAILURES_PER_ACCOUNT ? 'account' : 'ip';
    const oldest = await oldestFailureSince({ email, ip, since, by });
    const retryAfterSeconds = oldest ? Math.max(1, Math.ceil((oldest.getTime() + windowMs - Date.now()) / 1000)) : 60;
    await recordAudit({
      action: 'auth.sign_in_failed',
      actorEmail: email,
      ip,
      outcome: 'refused',
      details: { reason: 'rate_limited', limitedBy: by, failures: by === 'account' ? counts.byAccount : counts.byIp },
    });
    log.warn('sign-in rate-limited', { limitedBy: by, ip });
    return { ok: false, reason: 'rate_limited', retryAfterSeconds };
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

  await markSignedIn({ userId: user.id });
  await recordAudit({
    action: 'auth.sign_in',
    actorId: user.id,
    actorEmail: user.email,
    targetType: 'user',
    targetId: user.id,
    ip,
  });
  return { ok: true, user: { id: user.id, email: user.email, name: user.name } };
}

/**
 * Client address for the limits and the audit trail: the LAST entry of x-forwarded-for (the address the nearest
 * proxy saw; a client can only prepend entries), else x-real-ip, else 'unknown'. Next sets x-forwarded-for to the
 * socket address only when the request has none, so without a reverse proxy in front a client can choose this
 * value: the per-account limit does not depend on it.
 */
export function ipFromHeaders(headers: Headers | Record<string, unknown> | undefined): string {
  const get = (name: string): string | undefined => {
    if (!headers) return undefined;
    if (headers instanceof Headers) return headers.get(name) ?? undefined;
    const v = headers[name];
    return Array.isArray(v) ? String(v[0]) : typeof v === 'string' ? v : undefined;
  };
  const forwarded = get('x-forwarded-for')?.split(',').at(-1)?.trim();
  const ip = forwarded || get('x-real-ip')?.trim() || 'unknown';
  return ip.slice(0, 64);
}

/** The sentence shown on the sign-in page for each failure code (never says whether the account exists). */
export const SIGN_IN_MESSAGES: Record<string, string> = {
  CredentialsSignin: 'The e-mail address or password is not right.',
  deactivated: 'This account has been deactivated. Ask a Lobeline administrator if you need access again.',
  rate_limited: `Too many failed sign-ins. Please wait ${SIGN_IN_WINDOW_MINUTES} minutes before trying again.`,
  unavailable: 'Signing in is not possible right now because a service is not answering. Please try again in a minute.',
};
