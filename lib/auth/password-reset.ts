// Password resets (C1). The request never says whether the account exists; an active account gets a single-use
// link valid for 1 hour (at most RESETS_PER_HOUR mails an hour per account, the others are skipped silently).
import { recordAudit } from '@/lib/audit';
import {
  completeResetRecord,
  countRecentResetTokens,
  findResetByHash,
  getUserForSignIn,
  insertResetToken,
  normalizeEmail,
} from '@/lib/db/queries/accounts';
import { log } from '@/lib/log';
import { sendMail } from '@/lib/mail/transport';
import { resetMail } from './emails';
import { hashPassword } from './password';
import { hashToken, looksLikeToken, newToken, RESET_TTL_MS, type TokenState } from './tokens';

export const RESETS_PER_HOUR = 3;

const pending = new Set<Promise<void>>();

/**
 * What the request route calls: starts requestPasswordReset off the request path and returns at once, so the
 * answer takes the same time whether or not the account exists (OWASP ASVS 4.0 V2.5.x / V3.x account enumeration
 * through timing; the lookup, the token and the e-mail all happen after the answer is sent).
 */
export function schedulePasswordResetRequest(input: { email: string; ip: string }): void {
  const work: Promise<void> = requestPasswordReset(input)
    .catch((err: unknown) => log.error('password reset request failed', { err }))
    .finally(() => pending.delete(work));
  pending.add(work);
}

/** How many scheduled reset requests are still running (for tests and a clean shutdown). */
export function pendingPasswordResetRequests(): number {
  return pending.size;
}

/** Waits until every scheduled reset request has finished. */
export async function settlePasswordResetRequests(): Promise<void> {
  while (pending.size > 0) await Promise.all([...pending]);
}

/** Always resolves the same way for known and unknown addresses (mail failures are logged, not shown). */
export async function requestPasswordReset(input: { email: string; ip: string }): Promise<void> {
  const email = normalizeEmail(input.email);
  const user = await getUserForSignIn({ email });
  let outcome: 'sent' | 'unknown_account' | 'deactivated' | 'too_many' | 'mail_failed' = 'sent';
  if (!user) outcome = 'unknown_account';
  else if (!user.isActive) outcome = 'deactivated';
  else if (
    (await countRecentResetTokens({ userId: user.id, since: new Date(Date.now() - 3600_000) })) >= RESETS_PER_HOUR
  ) {
    outcome = 'too_many';
  } else {
    const { token, hash } = newToken();
    await insertResetToken({ userId: user.id, tokenHash: hash, expiresAt: new Date(Date.now() + RESET_TTL_MS) });
    try {
      await sendMail({ to: user.email, ...resetMail({ token, name: user.name }) });
    } catch (err) {
      outcome = 'mail_failed';
      log.error('password reset mail failed', { err });
    }
  }
  await recordAudit({
    action: 'auth.password_reset_requested',
    actorId: user?.id ?? null,
    actorEmail: email,
    targetType: user ? 'user' : null,
    targetId: user?.id ?? null,
    ip: input.ip,
    outcome: outcome === 'sent' ? 'ok' : 'failed',
    details: { outcome },
  });
}

/** The state of a reset link; a link that cannot be used is audited. */
export async function inspectReset(token: string, ip: string): Promise<{ state: TokenState; email: string | null }> {
  const found = looksLikeToken(token)
    ? await findResetByHash({ tokenHash: hashToken(token) })
    : { state: 'unknown' as const, userId: null, email: null };
  if (found.state !== 'valid') {
    await recordAudit({
      action: 'auth.password_reset',
      actorId: found.userId,
      actorEmail: found.email,
      targetType: found.userId ? 'user' : null,
      targetId: found.userId,
      ip,
      outcome: 'failed',
      details: { reason: found.state, stage: 'opened' },
    });
  }
  return { state: found.state, email: found.state === 'valid' ? found.email : null };
}

export async function completePasswordReset(input: {
  token: string;
  password: string;
  ip: string;
}): Promise<{ ok: true; email: string } | { ok: false; state: TokenState }> {
  if (!looksLikeToken(input.token)) {
    await recordAudit({
      action: 'auth.password_reset',
      ip: input.ip,
      outcome: 'failed',
      details: { reason: 'unknown', stage: 'complete' },
    });
    return { ok: false, state: 'unknown' };
  }
  const passwordHash = await hashPassword(input.password);
  const r = await completeResetRecord({ tokenHash: hashToken(input.token), passwordHash }, input.ip);
  if (!r.ok) {
    await recordAudit({
      action: 'auth.password_reset',
      actorId: r.userId,
      targetType: r.userId ? 'user' : null,
      targetId: r.userId,
      ip: input.ip,
      outcome: 'failed',
      details: { reason: r.state, stage: 'complete' },
    });
    return { ok: false, state: r.state };
  }
  return { ok: true, email: r.email };
}
