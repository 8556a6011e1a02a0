// C11 and C13 against the real MariaDB: a user's e-mail choices are stored through PUT /api/me/notifications and
// honoured by the senders' recipient lists (shift receipts, reduction failures), and the audit export keeps only
// the events of the chosen UTC days. Expected lists are written out here from the rows this test creates.
import { randomBytes } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

const { GET: getPrefs, PUT: putPrefs } = await import('@/app/api/me/notifications/route');
const { GET: exportAudit } = await import('@/app/api/audit/export/route');
const { setSessionSourceForTests } = await import('@/lib/auth/session-source');
const { getDb } = await import('@/lib/db');
const { closeSequelize } = await import('@/lib/db/client');
const { reductionFailureRecipients } = await import('@/lib/jobs/notify');
const { recipientsWanting } = await import('@/lib/mail/preferences');
const { AuditEvent, FacilityRoleGrant, Membership, Team, User } = await import('@/models');
const { callRoute } = await import('./helpers/call');

const tag = randomBytes(4).toString('hex');
const ids = { quiet: 0, loud: 0, steward: 0, team: 0 };
const email = (n: string) => `${n}-${tag}@harbor-point.example`;
const as = (userId: number | null) => setSessionSourceForTests(async () => (userId ? { userId } : null));

beforeAll(async () => {
  getDb();
  const team = await Team.create({ slug: `nt-${tag}`, name: `Notices ${tag}`, description: null });
  ids.team = team.id;
  const mk = (n: string) =>
    User.create({ email: email(n), name: n, password_hash: null, notification_prefs: null, last_sign_in_at: null });
  const [q, l, s] = await Promise.all([mk('quiet'), mk('loud'), mk('steward')]);
  ids.quiet = q.id;
  ids.loud = l.id;
  ids.steward = s.id;
  await Membership.create({ user_id: q.id, team_id: team.id, role: 'analyst' });
  await Membership.create({ user_id: l.id, team_id: team.id, role: 'analyst' });
  await FacilityRoleGrant.create({ user_id: s.id, role: 'steward' } as never);
});

afterAll(async () => {
  setSessionSourceForTests(null);
  await closeSequelize();
});

describe('notification preferences', () => {
  it('start all on, are stored per user, and only the user’s own', async () => {
    as(ids.quiet);
    const before = await callRoute(getPrefs, { method: 'GET', path: '/api/me/notifications' });
    expect(before.json).toEqual({ prefs: { shift_receipt: true, reduction_failed: true, fixity_alert: true } });
    const put = await callRoute(putPrefs, {
      method: 'PUT',
      path: '/api/me/notifications',
      body: { shift_receipt: false, reduction_failed: false, fixity_alert: true },
    });
    expect(put.status).toBe(200);
    expect((await User.findByPk(ids.quiet))?.notification_prefs).toEqual({
      shift_receipt: false,
      reduction_failed: false,
      fixity_alert: true,
    });
    expect((await User.findByPk(ids.loud))?.notification_prefs).toBeNull();
  });

  it('refuse an unknown kind or a non-boolean with a sentence per field', async () => {
    as(ids.loud);
    const bad = await callRoute(putPrefs, {
      method: 'PUT',
      path: '/api/me/notifications',
      body: { shift_receipt: 'no', reduction_failed: true, fixity_alert: true, invitation: false },
    });
    expect(bad.status).toBe(400);
    expect((await User.findByPk(ids.loud))?.notification_prefs).toBeNull();
  });

  it('are honoured by the shift receipt and the reduction-failure recipient lists', async () => {
    expect(
      await recipientsWanting([email('quiet'), email('loud'), 'external@elsewhere.example'], 'shift_receipt'),
    ).toEqual([email('loud'), 'external@elsewhere.example']);
    expect(await reductionFailureRecipients(ids.team)).toEqual([email('loud')]);
  });
});

describe('audit export', () => {
  it('keeps only the chosen UTC days, oldest first, in CSV and JSON', async () => {
    const mkEvent = (at: string, what: string) =>
      AuditEvent.create({
        at: new Date(at),
        action: 'team.updated',
        actor_id: null,
        actor_email: email(what),
        team_id: ids.team,
        target_type: 'team',
        target_id: String(ids.team),
        ip: null,
        outcome: 'ok',
        details: null,
      } as never);
    await mkEvent('2001-03-01T23:59:59Z', 'before');
    await mkEvent('2001-03-02T00:00:00Z', 'first');
    await mkEvent('2001-03-03T23:59:59Z', 'last');
    await mkEvent('2001-03-04T00:00:00Z', 'after');
    as(ids.steward);
    const json = await callRoute(exportAudit, {
      method: 'GET',
      path: '/api/audit/export',
      query: { format: 'json', from: '2001-03-02', to: '2001-03-03', teamId: ids.team },
    });
    expect(json.status).toBe(200);
    const events = (json.json as { events: { actorEmail: string }[] }).events;
    expect(events.map((e) => e.actorEmail)).toEqual([email('first'), email('last')]);

    const csv = await callRoute(exportAudit, {
      method: 'GET',
      path: '/api/audit/export',
      query: { format: 'csv', from: '2001-03-02', to: '2001-03-03', teamId: ids.team },
    });
    expect(csv.response.headers.get('content-type')).toMatch(/^text\/csv/);
    const lines = String(csv.json).trim().split('\r\n');
    expect(lines).toHaveLength(3);
    expect(lines[1]).toMatch(/^2001-03-02T00:00:00\.000Z,team\.updated,first-/);

    const reversed = await callRoute(exportAudit, {
      method: 'GET',
      path: '/api/audit/export',
      query: { format: 'csv', from: '2001-03-03', to: '2001-03-02' },
    });
    expect(reversed.status).toBe(400);
  });
});
