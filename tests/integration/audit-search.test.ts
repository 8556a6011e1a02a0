// Searching the audit trail (C13, issue 14) against the real MariaDB: who sees which events (a PI the teams they
// lead, both when they lead two; an analyst none; a data steward all), the server-side filters (kind of event,
// campaign, who, object checksum or file name, UTC days) with paging, and that an event never shows a result value
// to a reader who may not see the team's results. Events are written through lib/audit.ts recordAudit, which
// also files each under its campaign and object checksum (found from the target when the caller gives neither).
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { TeamData, World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { closeSequelize } = await import('@/lib/db');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client } = await import('@/lib/storage/s3');
const { recordAudit } = await import('@/lib/audit');
const { AuditEvent, Membership, RawFile, Scan } = await import('@/models');
const audit = await import('@/app/api/audit/route');
const auditExport = await import('@/app/api/audit/export/route');

// biome-ignore lint/suspicious/noExplicitAny: JSON read back from the API, narrowed by the assertions
type Loose = any;

let w: World;
let piOfBoth: number;
const files: Record<'A' | 'B', { rawFileId: number; scanId: number; sha256: string; name: string }> = {} as never;
beforeAll(async () => {
  w = await makeWorld({ data: false });
  piOfBoth = await w.freshUser({ teamId: w.teamA, role: 'pi' });
  await Membership.create({ user_id: piOfBoth, team_id: w.teamB, role: 'pi' });
  for (const [key, teamId, campaignId, shiftId] of [
    ['A', w.teamA, w.campaignA, w.shiftA],
    ['B', w.teamB, w.campaignB, w.shiftB],
  ] as const) {
    // freshScan reads only these three fields of TeamData (tests/integration/helpers/world.ts)
    const scanId = await w.freshScan({ teamId, campaignId, shiftId } as TeamData);
    const scan = await Scan.findByPk(scanId);
    const raw = await RawFile.findByPk(scan!.raw_file_id);
    await raw!.update({ original_name: `audit-search-${w.run}-${key}.h5` });
    files[key] = { rawFileId: raw!.id, scanId, sha256: raw!.sha256, name: raw!.original_name };
    const actorEmail = key === 'A' ? w.emails.operator : w.emails.memberB;
    // who uploaded (sha256 in the details), re-reduced (the result's offset in the details), asked for deletion
    // (target only: campaign and checksum are found from the raw file)
    await recordAudit({
      action: 'file.uploaded',
      actorEmail,
      teamId,
      targetType: 'raw_file',
      targetId: raw!.id,
      details: { fileName: raw!.original_name, sha256: raw!.sha256, scanId },
    });
    await recordAudit({
      action: 'reduction.completed',
      actorEmail,
      teamId,
      targetType: 'scan',
      targetId: scanId,
      details: { resultId: 1, offsetDeg: 11.5 },
    });
    await recordAudit({
      action: 'file.deletion_requested',
      actorEmail: w.emails.steward,
      teamId,
      targetType: 'raw_file',
      targetId: raw!.id,
      details: { reason: 'past retention' },
    });
  }
  // Six more uploads in team A for paging, one of them dated 2020-01-02.
  for (let i = 0; i < 6; i++) {
    await recordAudit({ action: 'shift.log_added', teamId: w.teamA, targetType: 'shift', targetId: w.shiftA });
  }
  const old = await AuditEvent.findOne({
    where: { action: 'shift.log_added', team_id: w.teamA },
    order: [['id', 'ASC']],
  });
  await old!.update({ at: new Date('2020-01-02T12:00:00Z') });
});
afterAll(async () => {
  clearSession();
  await w?.cleanup();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
});

const search = (query: Record<string, string | number>) =>
  callRoute(audit.GET, { method: 'GET', path: '/api/audit', query });
const events = (r: { json: unknown }) => (r.json as Loose).events as Loose[];

describe('who reads which events', () => {
  it('a PI of two teams sees both teams’ events', async () => {
    actAs(piOfBoth);
    const a = await search({ campaignId: w.campaignA, pageSize: 200 });
    const b = await search({ campaignId: w.campaignB, pageSize: 200 });
    expect(a.status).toBe(200);
    expect(events(a).map((e) => e.action)).toContain('file.uploaded');
    expect(events(b).map((e) => e.action)).toContain('file.uploaded');
    expect((a.json as Loose).scope).toBe('teams');
  });

  it('a PI of one team does not see the other team’s events, by campaign or by team', async () => {
    actAs(w.users.pi);
    const b = await search({ campaignId: w.campaignB });
    expect(b.status).toBe(200);
    expect(events(b)).toEqual([]);
    expect((await search({ teamId: w.teamB })).status).toBe(403);
    const own = await search({ object: files.A.sha256, pageSize: 200 });
    expect(events(own).length).toBeGreaterThan(0);
    expect(events(own).every((e) => e.teamId === w.teamA)).toBe(true);
    const other = await search({ object: files.B.sha256 });
    expect(events(other)).toEqual([]);
  });

  it('an analyst reads no audit trail', async () => {
    actAs(w.users.analyst);
    expect((await search({})).status).toBe(403);
    actAs(w.users.analyst);
    expect(
      (
        await callRoute(auditExport.GET, {
          method: 'GET',
          path: '/api/audit/export',
          query: { format: 'csv', from: '2026-01-01', to: '2026-01-02' },
        })
      ).status,
    ).toBe(403);
  });

  it('a data steward sees every team, and never a result value', async () => {
    actAs(w.users.steward);
    // a reduction event of a scan carries the checksum of the scan's raw file: found by the file's name
    const all = events(await search({ kind: 'reduced', object: `audit-search-${w.run}`, pageSize: 200 }));
    expect(all.map((e) => e.campaignId).sort()).toEqual([w.campaignA, w.campaignB].sort());
    for (const e of all) {
      expect(e.action).toBe('reduction.completed');
      expect(e.details).toEqual({ resultId: 1 });
    }
    const csv = await callRoute(auditExport.GET, {
      method: 'GET',
      path: '/api/audit/export',
      query: { format: 'csv', from: '2026-01-01', to: '2099-12-31', kind: 'reduced', campaignId: w.campaignA },
    });
    expect(csv.status).toBe(200);
    expect(String(csv.json)).toContain('reduction.completed');
    expect(String(csv.json)).not.toContain('11.5');
  });

  it('the team’s PI, who may see results, reads the offset in the same event', async () => {
    actAs(w.users.pi);
    const r = events(await search({ kind: 'reduced', campaignId: w.campaignA }));
    expect(r).toHaveLength(1);
    expect(r[0].details.offsetDeg).toBe(11.5);
  });
});

describe('filters and paging', () => {
  it('by object: a checksum prefix or part of the file name finds upload and deletion request of that file', async () => {
    actAs(w.users.steward);
    for (const object of [files.A.sha256.slice(0, 10), files.A.name.slice(-16)]) {
      const r = events(await search({ object, pageSize: 200 }));
      expect(r.map((e) => e.action).sort(), object).toEqual([
        'file.deletion_requested',
        'file.uploaded',
        'reduction.completed',
      ]);
      for (const e of r) {
        expect(e.sha256).toBe(files.A.sha256);
        expect(e.campaignId).toBe(w.campaignA);
      }
    }
  });

  it('by kind and by who', async () => {
    actAs(w.users.steward);
    const asked = events(await search({ kind: 'deletion_requested', actor: w.emails.steward, pageSize: 200 }));
    expect(asked.map((e) => e.campaignId).sort()).toEqual([w.campaignA, w.campaignB].sort());
    const uploadsB = events(await search({ kind: 'uploaded', actor: w.emails.memberB }));
    expect(uploadsB).toHaveLength(1);
    expect(uploadsB[0].sha256).toBe(files.B.sha256);
  });

  it('by UTC days, and paged on the server', async () => {
    actAs(w.users.pi);
    const old = events(await search({ campaignId: w.campaignA, from: '2020-01-02', to: '2020-01-02' }));
    expect(old).toHaveLength(1);
    expect(old[0].action).toBe('shift.log_added');
    const p1 = await search({ campaignId: w.campaignA, pageSize: 5, page: 1 });
    const p2 = await search({ campaignId: w.campaignA, pageSize: 5, page: 2 });
    // 3 file/reduction events + 6 log entries in campaign A = 9 (setup above)
    expect((p1.json as Loose).total).toBe(9);
    expect(events(p1)).toHaveLength(5);
    expect(events(p2)).toHaveLength(4);
    const ids = new Set([...events(p1), ...events(p2)].map((e) => e.id));
    expect(ids.size).toBe(9);
  });

  it('refuses bad input with plain sentences', async () => {
    actAs(w.users.steward);
    const r = await search({ kind: 'everything', campaignId: 'x', object: 'x'.repeat(200) });
    expect(r.status).toBe(400);
    const details = (r.json as Loose).error.details.join(' ');
    expect(details).toMatch(/kind: Choose a kind of event/);
    expect(details).toMatch(/campaignId: must be a number/);
    expect(details).toMatch(/object: Search for at most 128 characters/);
  });
});
