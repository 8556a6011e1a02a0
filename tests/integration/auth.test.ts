// Accounts and access (C1) against the real MariaDB and SMTP catcher: wrong passwords, the failed-sign-in limits,
// password reset links (expired, reused, unknown), invitations accepted through the e-mailed link, forged session
// tokens, deactivation, sign-out, and the audit rows each of these writes.
// Token hashing is checked against node:crypto's SHA-256 (FIPS 180-4); bcrypt hashes against bcryptjs.compare.
import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { Op } = await import('sequelize');
const bcrypt = (await import('bcryptjs')).default;
const { encode } = await import('next-auth/jwt');
const { NextRequest } = await import('next/server');
const { callRoute } = await import('./helpers/call');
const { actAs, actWithToken, clearSession } = await import('./helpers/session');
const { makeUser, makeWorld, TEST_PASSWORD } = await import('./helpers/world');
const { attemptSignIn, FREE_FAILURES_PER_ACCOUNT, MAX_ACCOUNT_WAIT_SECONDS, MAX_FAILURES_PER_ADDRESS } = await import(
  '@/lib/auth/sign-in'
);
const { accountWaitSeconds, closeSignInThrottle, endAccountWaitForTests } = await import('@/lib/auth/throttle');
const { clientAddressFromForwardedFor, forwardedForHeader, parseTrustedProxyHops } = await import(
  '@/lib/auth/client-address'
);
const { settlePasswordResetRequests } = await import('@/lib/auth/password-reset');
const { changePassword } = await import('@/lib/auth/change-password');
const passwordRoute = await import('@/app/api/me/password/route');
const { authOptions } = await import('@/lib/auth/options');
const { claimsFromSessionToken } = await import('@/lib/auth/session-source');
const { getActor } = await import('@/lib/auth/actor');
const { closeSequelize, getDb } = await import('@/lib/db');
const { getEnv } = await import('@/lib/env');
const { waitForCaughtMessage } = await import('@/lib/mail/catcher-store');
const { closeMailTransport } = await import('@/lib/mail/transport');
const { AuditEvent, Invitation, Membership, PasswordResetToken, SignInAttempt, User } = await import('@/models');
const meRoute = await import('@/app/api/me/route');
const campaignsRoute = await import('@/app/api/campaigns/route');
const shiftsRoute = await import('@/app/api/shifts/route');
const resetRoute = await import('@/app/api/auth/password-reset/route');
const resetCompleteRoute = await import('@/app/api/auth/password-reset/complete/route');
const acceptRoute = await import('@/app/api/auth/invitations/accept/route');
const inviteRoute = await import('@/app/api/admin/users/invite/route');
const statusRoute = await import('@/app/api/admin/users/[userId]/status/route');
const membershipsRoute = await import('@/app/api/admin/memberships/route');
const { proxy } = await import('@/proxy');

let w: World;
let ipCounter = 0;
/** A fresh address per test so the per-address limit of one test does not leak into another. */
const freshIp = () => {
  ipCounter = (ipCounter + 1) % 250;
  return `10.${Math.floor(Math.random() * 200) + 20}.${ipCounter}.${Math.floor(Math.random() * 250) + 1}`;
};

async function auditRows(where: Record<string, unknown>) {
  return AuditEvent.findAll({ where, order: [['id', 'ASC']], raw: true });
}

function tokenFromLink(text: string, kind: 'invite' | 'reset-password'): string {
  const origin = getEnv().APP_ORIGIN.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  const m = text.match(new RegExp(`${origin}/${kind}/([A-Za-z0-9_-]+)`));
  if (!m?.[1]) throw new Error(`no ${kind} link in: ${text}`);
  return m[1];
}

beforeAll(async () => {
  getDb();
  w = await makeWorld();
});

const normalize = (email: string) => email.trim().toLowerCase();

afterAll(async () => {
  clearSession();
  await settlePasswordResetRequests();
  await closeSignInThrottle();
  closeMailTransport();
  await closeSequelize();
});

describe('sign-in', () => {
  it('accepts the right password, records the attempt and audits auth.sign_in', async () => {
    const ip = freshIp();
    const r = await attemptSignIn({ email: w.emails.analyst.toUpperCase(), password: TEST_PASSWORD, ip });
    expect(r).toMatchObject({ ok: true, user: { id: w.users.analyst } });
    expect(await auditRows({ action: 'auth.sign_in', actor_id: w.users.analyst, ip })).toHaveLength(1);
    expect(await SignInAttempt.count({ where: { email: w.emails.analyst, ip, succeeded: true } })).toBe(1);
    expect((await User.findByPk(w.users.analyst))?.last_sign_in_at).not.toBeNull();
  });

  it('refuses a wrong password and an unknown account with the same answer, auditing each reason', async () => {
    const ip = freshIp();
    const wrong = await attemptSignIn({ email: w.emails.operator, password: 'not the password', ip });
    const unknown = await attemptSignIn({ email: `nobody-${w.run}@matrix.example`, password: 'whatever', ip });
    expect(wrong).toEqual({ ok: false, reason: 'wrong_password' });
    expect(unknown).toEqual({ ok: false, reason: 'unknown_account' });
    const rows = await auditRows({ action: 'auth.sign_in_failed', ip });
    expect(rows.map((r) => (r.details as { reason: string }).reason)).toEqual(['wrong_password', 'unknown_account']);
    expect(rows.every((r) => r.outcome === 'failed')).toBe(true);
  });

  it('refuses a deactivated account even with the right password', async () => {
    const email = `deact-${w.run}@matrix.example`;
    await makeUser({ email, teamId: w.teamA, role: 'operator', isActive: false });
    const ip = freshIp();
    expect(await attemptSignIn({ email, password: TEST_PASSWORD, ip })).toEqual({ ok: false, reason: 'deactivated' });
    const [row] = await auditRows({ action: 'auth.sign_in_failed', ip });
    expect(row?.details).toMatchObject({ reason: 'deactivated' });
  });

  it(`slows an account after ${FREE_FAILURES_PER_ACCOUNT} failures instead of locking it (ASVS 4.0 V2.2.1)`, async () => {
    const email = `slowed-${w.run}@matrix.example`;
    await makeUser({ email, teamId: w.teamA, role: 'operator' });
    for (let i = 0; i < FREE_FAILURES_PER_ACCOUNT - 1; i++) {
      // Different addresses: the per-account limit must not depend on where the attempts come from.
      const r = await attemptSignIn({ email, password: `wrong-${i}`, ip: freshIp() });
      expect(r).toEqual({ ok: false, reason: 'wrong_password' });
    }
    // The free failures cost no wait: the right password still works at once.
    expect(await attemptSignIn({ email, password: TEST_PASSWORD, ip: freshIp() })).toMatchObject({ ok: true });

    // After the free failures each further failure doubles the wait, never past the bound.
    const waits: number[] = [];
    for (let i = 0; i < FREE_FAILURES_PER_ACCOUNT + 8; i++) {
      const r = await attemptSignIn({ email, password: `wrong-again-${i}`, ip: freshIp() });
      if (r.ok === false && r.reason === 'rate_limited') {
        waits.push(r.retryAfterSeconds ?? -1);
        await endAccountWaitForTests(normalize(email)); // as if the wait had passed
      }
    }
    expect(waits.length).toBeGreaterThan(0);
    expect(Math.max(...waits)).toBeLessThanOrEqual(MAX_ACCOUNT_WAIT_SECONDS);
    expect(accountWaitSeconds(FREE_FAILURES_PER_ACCOUNT)).toBe(1);
    expect(accountWaitSeconds(FREE_FAILURES_PER_ACCOUNT + 3)).toBe(8);
    expect(accountWaitSeconds(FREE_FAILURES_PER_ACCOUNT + 50)).toBe(MAX_ACCOUNT_WAIT_SECONDS);

    // A failure now starts a wait: an attempt inside it is refused with how long to wait, and audited.
    await attemptSignIn({ email, password: 'one more wrong', ip: freshIp() });
    const ip = freshIp();
    const slowed = await attemptSignIn({ email, password: TEST_PASSWORD, ip });
    expect(slowed).toMatchObject({ ok: false, reason: 'rate_limited' });
    const retry = (slowed as { retryAfterSeconds: number }).retryAfterSeconds;
    expect(retry).toBeGreaterThanOrEqual(1);
    expect(retry).toBeLessThanOrEqual(MAX_ACCOUNT_WAIT_SECONDS);
    const [row] = await auditRows({ action: 'auth.sign_in_failed', ip });
    expect(row?.outcome).toBe('refused');
    expect(row?.details).toMatchObject({ reason: 'rate_limited', limitedBy: 'account' });

    // The provider turns the wait into the code the sign-in page shows as a plain sentence.
    const provider = authOptions.providers[0] as unknown as {
      options: { authorize: (c: unknown, req: unknown) => Promise<unknown> };
    };
    await expect(
      provider.options.authorize({ email, password: TEST_PASSWORD }, { headers: { 'x-forwarded-for': freshIp() } }),
    ).rejects.toThrow('rate_limited');

    // Once the wait is over, the right password works again: slowed, never locked out.
    await endAccountWaitForTests(normalize(email));
    expect(await attemptSignIn({ email, password: TEST_PASSWORD, ip: freshIp() })).toMatchObject({ ok: true });
  });

  it(`limits an address after ${MAX_FAILURES_PER_ADDRESS} failures, whatever the accounts`, async () => {
    const ip = freshIp();
    for (let i = 0; i < MAX_FAILURES_PER_ADDRESS; i++) {
      await attemptSignIn({ email: `spray-${i}-${w.run}@matrix.example`, password: 'guess', ip });
    }
    const r = await attemptSignIn({ email: w.emails.pi, password: TEST_PASSWORD, ip });
    expect(r).toMatchObject({ ok: false, reason: 'rate_limited' });
    const rows = await auditRows({ action: 'auth.sign_in_failed', ip, outcome: 'refused' });
    expect(rows.at(-1)?.details).toMatchObject({ limitedBy: 'ip' });
    // The same account from another address is not affected.
    expect(await attemptSignIn({ email: w.emails.pi, password: TEST_PASSWORD, ip: freshIp() })).toMatchObject({
      ok: true,
    });
  });

  it('takes the client address from x-forwarded-for as scripts/serve.ts writes it, not as the client sent it', () => {
    // serve.ts with no trusted proxy: the client's own header is replaced by the socket address.
    expect(forwardedForHeader('1.2.3.4, 5.6.7.8', '203.0.113.9', 0)).toBe('203.0.113.9');
    expect(clientAddressFromForwardedFor(forwardedForHeader('1.2.3.4', '203.0.113.9', 0), 0)).toBe('203.0.113.9');
    expect(clientAddressFromForwardedFor(forwardedForHeader(undefined, '::ffff:127.0.0.1', 0), 0)).toBe('127.0.0.1');
    // One trusted proxy (it appended the client it saw, 198.51.100.7); anything before that is the client's own.
    const one = forwardedForHeader('6.6.6.6, 198.51.100.7', '10.0.0.2', 1);
    expect(one).toBe('6.6.6.6, 198.51.100.7, 10.0.0.2');
    expect(clientAddressFromForwardedFor(one, 1)).toBe('198.51.100.7');
    // Two trusted proxies.
    expect(clientAddressFromForwardedFor(forwardedForHeader('6.6.6.6, 198.51.100.7, 10.0.0.3', '10.0.0.2', 2), 2)).toBe(
      '198.51.100.7',
    );
    expect(parseTrustedProxyHops('')).toBe(0);
    expect(parseTrustedProxyHops('2')).toBe(2);
    for (const bad of ['-1', 'one', '11', '1.5']) expect(parseTrustedProxyHops(bad)).toBeNull();
  });

  it('stores bcrypt hashes that bcryptjs verifies', async () => {
    const u = await User.findByPk(w.users.operator);
    expect(u?.password_hash).toMatch(/^\$2[aby]\$\d\d\$/);
    expect(await bcrypt.compare(TEST_PASSWORD, u!.password_hash!)).toBe(true);
  });
});

describe('sessions', () => {
  it('accepts a token signed with NEXTAUTH_SECRET and refuses forged, tampered and expired ones', async () => {
    const secret = getEnv().NEXTAUTH_SECRET;
    const good = await encode({ token: { userId: w.users.analyst, email: w.emails.analyst }, secret, maxAge: 3600 });
    const forged = await encode({
      token: { userId: w.users.admin },
      secret: 'an attacker who does not know the secret-000000000',
      maxAge: 3600,
    });
    const tampered = `${good.slice(0, -6)}${good.slice(-6).split('').reverse().join('')}`;
    const expired = await encode({ token: { userId: w.users.analyst }, secret, maxAge: -120 });

    expect(await claimsFromSessionToken(good)).toEqual({ userId: w.users.analyst, sessionVersion: 0 });
    for (const t of [forged, tampered, expired, 'not-a-token']) expect(await claimsFromSessionToken(t)).toBeNull();

    actWithToken(good);
    expect((await callRoute(meRoute.GET, { method: 'GET', path: '/api/me' })).status).toBe(200);
    for (const t of [forged, tampered, expired]) {
      actWithToken(t);
      expect((await callRoute(meRoute.GET, { method: 'GET', path: '/api/me' })).status).toBe(401);
    }

    // The proxy sends a request with a forged cookie to the sign-in page and lets a real one through.
    const at = (cookie: string) =>
      proxy(
        new NextRequest('http://127.0.0.1:3100/campaigns/new', {
          headers: { cookie: `next-auth.session-token=${cookie}` },
        }),
      );
    const refused = await at(forged);
    expect(refused.status).toBe(307);
    // (NextURL spells a loopback host "localhost" outside a server; compare path and query.)
    const location = new URL(refused.headers.get('location') ?? '');
    expect(`${location.pathname}${location.search}`).toBe('/sign-in?next=%2Fcampaigns%2Fnew');
    const passed = await at(good);
    expect(passed.headers.get('x-middleware-next')).toBe('1');
  });

  it('re-reads the account on every call: deactivation and role changes apply at once', async () => {
    const userId = await makeUser({ email: `live-${w.run}@matrix.example`, teamId: w.teamA, role: 'operator' });
    actAs(userId);
    expect((await getActor())?.memberships.map((m) => m.role)).toEqual(['operator']);
    const body = { teamId: w.teamA, name: `Live ${w.run}`, target: 'He', wavelengthNm: 800, experimentKind: 'image' };
    expect((await callRoute(campaignsRoute.POST, { method: 'POST', path: '/api/campaigns', body })).status).toBe(403);

    actAs(w.users.admin);
    const changed = await callRoute(membershipsRoute.POST, {
      method: 'POST',
      path: '/api/admin/memberships',
      body: { userId, teamId: w.teamA, role: 'analyst' },
    });
    expect(changed.status).toBe(200);
    const [audit] = await auditRows({ action: 'membership.changed', target_id: String(userId) });
    expect(audit?.details).toEqual({ from: 'operator', to: 'analyst' });

    actAs(userId);
    expect((await callRoute(campaignsRoute.POST, { method: 'POST', path: '/api/campaigns', body })).status).toBe(201);

    actAs(w.users.admin);
    const off = await callRoute(statusRoute.POST, {
      method: 'POST',
      path: `/api/admin/users/${userId}/status`,
      params: { userId: String(userId) },
      body: { isActive: false },
    });
    expect(off.status).toBe(200);
    expect(await auditRows({ action: 'user.deactivated', target_id: String(userId) })).toHaveLength(1);
    actAs(userId);
    expect(await getActor()).toBeNull();
    expect((await callRoute(meRoute.GET, { method: 'GET', path: '/api/me' })).status).toBe(401);
  });

  it('ends every session of the account on sign-out, password reset and password change (ASVS 4.0 V3.3.1, V3.3.3)', async () => {
    const secret = getEnv().NEXTAUTH_SECRET;
    const email = `sessions-${w.run}@matrix.example`;
    const userId = await makeUser({ email, teamId: w.teamA, role: 'operator' });
    const me = async () => (await callRoute(meRoute.GET, { method: 'GET', path: '/api/me' })).status;
    /** A session token as next-auth issues it at sign-in (the jwt callback copies the account's version). */
    const sessionToken = async () => {
      const signIn = await attemptSignIn({ email, password: TEST_PASSWORD, ip: freshIp() });
      if (!signIn.ok) throw new Error(`sign-in failed: ${signIn.reason}`);
      const jwt = authOptions.callbacks?.jwt as (a: unknown) => Promise<Record<string, unknown>>;
      const token = await jwt({
        token: { email },
        user: { id: String(signIn.user.id), email, sessionVersion: signIn.user.sessionVersion },
      });
      return encode({ token, secret, maxAge: 3600 });
    };

    // Sign-out in one browser ends the session of another browser at once.
    const laptop = await sessionToken();
    const lab = await sessionToken();
    actWithToken(lab);
    expect(await me()).toBe(200);
    const signOut = authOptions.events?.signOut as (m: { token: Record<string, unknown> }) => Promise<void>;
    await signOut({ token: { userId, email } });
    actWithToken(lab);
    expect(await me()).toBe(401);
    actWithToken(laptop);
    expect(await me()).toBe(401);

    // A password change ends the other sessions; a wrong current password changes nothing.
    const other = await sessionToken();
    const here = await sessionToken();
    actWithToken(here);
    const wrong = await callRoute(passwordRoute.POST, {
      method: 'POST',
      path: '/api/me/password',
      body: { currentPassword: 'not it at all', password: 'tidal pool lantern', confirm: 'tidal pool lantern' },
    });
    expect(wrong.status).toBe(400);
    expect((wrong.json as { error: { details: string[] } }).error.details).toEqual([
      'currentPassword: The current password is not right.',
    ]);
    actWithToken(other);
    expect(await me()).toBe(200);
    actWithToken(here);
    const changed = await callRoute(passwordRoute.POST, {
      method: 'POST',
      path: '/api/me/password',
      body: { currentPassword: TEST_PASSWORD, password: 'tidal pool lantern', confirm: 'tidal pool lantern' },
    });
    expect(changed.status).toBe(200);
    actWithToken(other);
    expect(await me()).toBe(401);
    expect(await auditRows({ action: 'auth.password_changed', target_id: String(userId) })).toHaveLength(1);
    expect(await attemptSignIn({ email, password: 'tidal pool lantern', ip: freshIp() })).toMatchObject({ ok: true });

    // A password reset ends every session too.
    await changePassword({
      userId,
      currentPassword: 'tidal pool lantern',
      newPassword: TEST_PASSWORD,
      by: { userId, email, ip: freshIp() },
    });
    const before = await sessionToken();
    actWithToken(before);
    expect(await me()).toBe(200);
    actAs(null);
    await callRoute(resetRoute.POST, { method: 'POST', path: '/api/auth/password-reset', body: { email } });
    await settlePasswordResetRequests();
    const token = tokenFromLink((await waitForCaughtMessage((m) => m.to.includes(email))).text, 'reset-password');
    const done = await callRoute(resetCompleteRoute.POST, {
      method: 'POST',
      path: '/api/auth/password-reset/complete',
      body: { token, password: 'quay crane at dusk', confirm: 'quay crane at dusk' },
    });
    expect(done.status).toBe(200);
    actWithToken(before);
    expect(await me()).toBe(401);
  });

  it('audits sign-out and refused access', async () => {
    const signOut = authOptions.events?.signOut as (m: { token: Record<string, unknown> }) => Promise<void>;
    await signOut({ token: { userId: w.users.pi, email: w.emails.pi } });
    expect(await auditRows({ action: 'auth.sign_out', actor_id: w.users.pi })).toHaveLength(1);

    actAs(w.users.operator);
    const ip = freshIp();
    const r = await callRoute(campaignsRoute.GET, {
      method: 'GET',
      path: '/api/campaigns',
      query: { teamId: w.teamB },
      ip,
    });
    expect(r.status).toBe(403);
    const [row] = await auditRows({ action: 'auth.access_refused', actor_id: w.users.operator, ip });
    expect(row).toMatchObject({ outcome: 'refused', team_id: w.teamB });
    expect(row?.details).toMatchObject({ method: 'GET', path: '/api/campaigns', action: 'campaign.view' });

    // another team's campaign by id: answered like a missing one (404), audited like a refusal
    const ip2 = freshIp();
    const s = await callRoute(shiftsRoute.POST, {
      method: 'POST',
      path: '/api/shifts',
      body: { campaignId: w.campaignB },
      ip: ip2,
    });
    expect(s.status).toBe(404);
    const [hidden] = await auditRows({ action: 'auth.access_refused', actor_id: w.users.operator, ip: ip2 });
    expect(hidden).toMatchObject({ outcome: 'refused', team_id: w.teamB });
    expect(hidden?.details).toMatchObject({ method: 'POST', path: '/api/shifts', code: 'not_found:campaign' });
  });
});

describe('password reset', () => {
  it('sends a single-use link, stores only its SHA-256, and refuses reuse', async () => {
    const email = `reset-${w.run}@matrix.example`;
    const userId = await makeUser({ email, teamId: w.teamA, role: 'operator' });
    actAs(null);
    const asked = await callRoute(resetRoute.POST, {
      method: 'POST',
      path: '/api/auth/password-reset',
      body: { email },
    });
    expect(asked.status).toBe(202);
    const mail = await waitForCaughtMessage((m) => m.to.includes(email) && /Reset/.test(m.subject));
    const token = tokenFromLink(mail.text, 'reset-password');
    expect(Buffer.from(token, 'base64url')).toHaveLength(32);

    const rows = await PasswordResetToken.findAll({ where: { user_id: userId }, raw: true });
    expect(rows).toHaveLength(1);
    expect(rows[0]?.token_hash).toBe(createHash('sha256').update(token).digest('hex'));
    expect(JSON.stringify(rows)).not.toContain(token);
    const lifetime = new Date(rows[0]!.expires_at).getTime() - new Date(rows[0]!.created_at).getTime();
    expect(Math.abs(lifetime - 3600_000)).toBeLessThan(5_000);

    const newPassword = 'a brand new pass phrase';
    const body = { token, password: newPassword, confirm: newPassword };
    const done = await callRoute(resetCompleteRoute.POST, {
      method: 'POST',
      path: '/api/auth/password-reset/complete',
      body,
    });
    expect(done.status).toBe(200);
    expect(await attemptSignIn({ email, password: newPassword, ip: freshIp() })).toMatchObject({ ok: true });
    expect(await attemptSignIn({ email, password: TEST_PASSWORD, ip: freshIp() })).toMatchObject({ ok: false });

    const again = await callRoute(resetCompleteRoute.POST, {
      method: 'POST',
      path: '/api/auth/password-reset/complete',
      body,
    });
    expect(again.status).toBe(409);
    expect((again.json as { error: { message: string } }).error.message).toMatch(/already been used/);
    const failed = await auditRows({ action: 'auth.password_reset', target_id: String(userId), outcome: 'failed' });
    expect(failed.map((r) => (r.details as { reason: string }).reason)).toContain('used');
    expect(await auditRows({ action: 'auth.password_reset', target_id: String(userId), outcome: 'ok' })).toHaveLength(
      1,
    );
  });

  it('refuses an expired link with a clear message and an audit row', async () => {
    const email = `expired-${w.run}@matrix.example`;
    const userId = await makeUser({ email, teamId: w.teamA, role: 'operator' });
    await callRoute(resetRoute.POST, { method: 'POST', path: '/api/auth/password-reset', body: { email } });
    const token = tokenFromLink((await waitForCaughtMessage((m) => m.to.includes(email))).text, 'reset-password');
    await PasswordResetToken.update({ expires_at: new Date(Date.now() - 1000) }, { where: { user_id: userId } });
    const r = await callRoute(resetCompleteRoute.POST, {
      method: 'POST',
      path: '/api/auth/password-reset/complete',
      body: { token, password: 'another long password', confirm: 'another long password' },
    });
    expect(r.status).toBe(409);
    expect((r.json as { error: { message: string } }).error.message).toMatch(/expired/);
    const [row] = await auditRows({ action: 'auth.password_reset', target_id: String(userId), outcome: 'failed' });
    expect(row?.details).toMatchObject({ reason: 'expired' });
  });

  it('answers the same for unknown addresses and sends nothing; validates the new password', async () => {
    const known = await callRoute(resetRoute.POST, {
      method: 'POST',
      path: '/api/auth/password-reset',
      body: { email: w.emails.pi },
    });
    const unknownEmail = `ghost-${w.run}@matrix.example`;
    const unknown = await callRoute(resetRoute.POST, {
      method: 'POST',
      path: '/api/auth/password-reset',
      body: { email: unknownEmail },
    });
    expect(unknown.status).toBe(known.status);
    expect(unknown.json).toEqual(known.json);
    await expect(waitForCaughtMessage((m) => m.to.includes(unknownEmail), { timeoutMs: 1500 })).rejects.toThrow();

    const short = await callRoute(resetCompleteRoute.POST, {
      method: 'POST',
      path: '/api/auth/password-reset/complete',
      body: { token: 'x'.repeat(43), password: 'short', confirm: 'other' },
    });
    expect(short.status).toBe(400);
    expect((short.json as { error: { details: string[] } }).error.details).toEqual([
      'password: The password needs at least 12 characters.',
      'confirm: The two passwords are not the same.',
    ]);
  });
});

describe('invitations', () => {
  it('an admin invites, the link creates the account and membership once, and the new user can sign in', async () => {
    const email = `newcomer-${w.run}@matrix.example`;
    actAs(w.users.admin);
    const invited = await callRoute(inviteRoute.POST, {
      method: 'POST',
      path: '/api/admin/users/invite',
      body: { email, name: 'New Comer', teamId: w.teamA, role: 'analyst' },
    });
    expect(invited.status).toBe(201);
    const mail = await waitForCaughtMessage((m) => m.to.includes(email));
    const token = tokenFromLink(mail.text, 'invite');
    const inv = await Invitation.findOne({ where: { email }, raw: true });
    expect(inv?.token_hash).toBe(createHash('sha256').update(token).digest('hex'));
    const days = (new Date(inv!.expires_at).getTime() - Date.now()) / 86_400_000;
    expect(days).toBeGreaterThan(6.99);
    expect(days).toBeLessThanOrEqual(7);

    actAs(null);
    const body = { token, name: 'New Comer', password: 'my own long password', confirm: 'my own long password' };
    const accepted = await callRoute(acceptRoute.POST, { method: 'POST', path: '/api/auth/invitations/accept', body });
    expect(accepted.status).toBe(201);
    const user = await User.findOne({ where: { email } });
    expect(user).not.toBeNull();
    expect(await Membership.findOne({ where: { user_id: user!.id, team_id: w.teamA }, raw: true })).toMatchObject({
      role: 'analyst',
    });
    expect(await attemptSignIn({ email, password: 'my own long password', ip: freshIp() })).toMatchObject({ ok: true });
    expect(await auditRows({ action: 'invitation.accepted', target_id: String(inv!.id), outcome: 'ok' })).toHaveLength(
      1,
    );
    expect(await auditRows({ action: 'membership.added', target_id: String(user!.id) })).toHaveLength(1);

    const reused = await callRoute(acceptRoute.POST, { method: 'POST', path: '/api/auth/invitations/accept', body });
    expect(reused.status).toBe(409);
    expect((reused.json as { error: { message: string } }).error.message).toMatch(/already been accepted/);
    expect(await User.count({ where: { email } })).toBe(1);
  });

  it('refuses an expired invitation and audits it', async () => {
    const email = `late-${w.run}@matrix.example`;
    actAs(w.users.admin);
    await callRoute(inviteRoute.POST, {
      method: 'POST',
      path: '/api/admin/users/invite',
      body: { email, teamId: w.teamB, role: 'operator' },
    });
    const token = tokenFromLink((await waitForCaughtMessage((m) => m.to.includes(email))).text, 'invite');
    await Invitation.update({ expires_at: new Date(Date.now() - 1000) }, { where: { email } });
    actAs(null);
    const r = await callRoute(acceptRoute.POST, {
      method: 'POST',
      path: '/api/auth/invitations/accept',
      body: { token, name: 'Too Late', password: 'long enough password', confirm: 'long enough password' },
    });
    expect(r.status).toBe(409);
    expect((r.json as { error: { message: string } }).error.message).toMatch(/expired/);
    expect(await User.count({ where: { email } })).toBe(0);
    const rows = await auditRows({ action: 'invitation.accepted', actor_email: email, outcome: 'failed' });
    expect(rows.map((x) => (x.details as { reason: string }).reason)).toContain('expired');
  });

  it('gives an existing account the access at once instead of a link', async () => {
    const userId = await makeUser({ email: `existing-${w.run}@matrix.example`, teamId: w.teamA, role: 'operator' });
    actAs(w.users.admin);
    const r = await callRoute(inviteRoute.POST, {
      method: 'POST',
      path: '/api/admin/users/invite',
      body: { email: `EXISTING-${w.run}@matrix.example`, teamId: w.teamB, role: 'pi' },
    });
    expect(r.status).toBe(200);
    expect(r.json).toEqual({ status: 'added', userId });
    expect(await Membership.count({ where: { user_id: userId, team_id: { [Op.in]: [w.teamA, w.teamB] } } })).toBe(2);
    expect(await Invitation.count({ where: { email: `existing-${w.run}@matrix.example` } })).toBe(0);
  });
});
