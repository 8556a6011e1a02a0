// Retention, legal hold and the two-step deletion of a stored raw file (C10, issue 14) against the real MariaDB and
// S3 store: nothing is deleted before its retention date (PRODUCT.md C10) or without one; a data steward asks, a
// PI of the team or an administrator — another person — confirms, and only then is the object removed from
// storage; a legal hold blocks it outright; every step is audited with the file's SHA-256; a PI cannot delete
// anything alone. Access per role: policy-matrix.test.ts.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { freshDeletableFile } = await import('./helpers/stewardship');
const { closeSequelize } = await import('@/lib/db');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client, headObject } = await import('@/lib/storage/s3');
const { AuditEvent, Campaign, DeletionRequest, RawFile } = await import('@/models');
const requestRoute = await import('@/app/api/raw-files/[id]/deletion/route');
const confirmRoute = await import('@/app/api/deletion-requests/[requestId]/confirm/route');
const cancelRoute = await import('@/app/api/deletion-requests/[requestId]/cancel/route');
const listRoute = await import('@/app/api/deletion-requests/route');
const fileRetention = await import('@/app/api/raw-files/[id]/retention/route');
const campaignRetention = await import('@/app/api/campaigns/[campaignId]/retention/route');

// biome-ignore lint/suspicious/noExplicitAny: JSON read back from the API, narrowed by the assertions
type Loose = any;

let w: World;
beforeAll(async () => {
  w = await makeWorld({ data: true });
});
afterAll(async () => {
  clearSession();
  await w?.cleanup();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
});

const ask = (rawFileId: number, reason = 'Past retention; superseded by the re-measured scan.') =>
  callRoute(requestRoute.POST, {
    method: 'POST',
    path: `/api/raw-files/${rawFileId}/deletion`,
    params: { id: String(rawFileId) },
    body: { reason },
  });
const confirm = (requestId: number) =>
  callRoute(confirmRoute.POST, {
    method: 'POST',
    path: `/api/deletion-requests/${requestId}/confirm`,
    params: { requestId: String(requestId) },
  });
const setHold = (rawFileId: number, legalHold: boolean) =>
  callRoute(fileRetention.PUT, {
    method: 'PUT',
    path: `/api/raw-files/${rawFileId}/retention`,
    params: { id: String(rawFileId) },
    body: { retentionUntil: '2020-01-01', embargoUntil: null, legalHold },
  });
const stored = async (bucket: string, key: string) =>
  headObject(bucket, key).then(
    () => true,
    () => false,
  );
const audit = (action: string, rawFileId: number) =>
  AuditEvent.findOne({ where: { action, target_id: String(rawFileId) }, order: [['id', 'DESC']] });
const details = (e: { details: unknown } | null) =>
  (typeof e?.details === 'string' ? JSON.parse(e.details) : e?.details) as Loose;

describe('two-step deletion', () => {
  it('a steward asks, a PI confirms, and only then is the object removed; each step audited with the SHA-256', async () => {
    const f = await freshDeletableFile(w, w.a);
    actAs(w.users.steward);
    const asked = await ask(f.rawFileId);
    expect(asked.status).toBe(201);
    const requestId = (asked.json as Loose).request.id as number;
    expect((asked.json as Loose).request.state).toBe('waiting');
    expect(await stored(f.bucket, f.key)).toBe(true);
    expect(details(await audit('file.deletion_requested', f.rawFileId)).sha256).toBe(f.sha256);

    // the steward cannot do the second step, the PI sees it waiting and confirms
    expect((await confirm(requestId)).status).toBe(403);
    expect(await stored(f.bucket, f.key)).toBe(true);
    actAs(w.users.pi);
    const waiting = (await callRoute(listRoute.GET, { method: 'GET', path: '/api/deletion-requests' })).json as Loose;
    expect(waiting.requests.map((r: Loose) => r.id)).toContain(requestId);
    const done = await confirm(requestId);
    expect(done.status).toBe(200);
    expect((done.json as Loose).request.state).toBe('deleted');
    expect(await stored(f.bucket, f.key)).toBe(false);
    const raw = await RawFile.findByPk(f.rawFileId);
    expect(raw!.deleted_at).not.toBeNull();
    expect(details(await audit('file.deletion_confirmed', f.rawFileId)).sha256).toBe(f.sha256);
    const deleted = await audit('file.deleted', f.rawFileId);
    expect(deleted!.actor_id).toBe(w.users.pi);
    expect(details(deleted).sha256).toBe(f.sha256);
    // a second confirmation changes nothing
    expect((await confirm(requestId)).status).toBe(409);
  });

  it('a PI cannot delete anything alone: asking is the steward’s step', async () => {
    const f = await freshDeletableFile(w, w.a);
    actAs(w.users.pi);
    expect((await ask(f.rawFileId)).status).toBe(403);
    expect(await DeletionRequest.count({ where: { raw_file_id: f.rawFileId } })).toBe(0);
    expect(await stored(f.bucket, f.key)).toBe(true);
  });

  it('someone who holds both roles still needs a second person', async () => {
    const both = await w.freshUser({ teamId: w.teamA, role: 'pi', facility: 'steward' });
    const f = await freshDeletableFile(w, w.a);
    actAs(both);
    const asked = await ask(f.rawFileId);
    expect(asked.status).toBe(201);
    const r = await confirm((asked.json as Loose).request.id);
    expect(r.status).toBe(409);
    expect(JSON.stringify(r.json)).toMatch(/two people/);
    expect(await stored(f.bucket, f.key)).toBe(true);
    actAs(w.users.admin);
    expect((await confirm((asked.json as Loose).request.id)).status).toBe(200);
    expect(await stored(f.bucket, f.key)).toBe(false);
  });

  it('a legal hold set after the request blocks the confirmation; lifting it lets the deletion go ahead', async () => {
    const f = await freshDeletableFile(w, w.a);
    actAs(w.users.steward);
    const requestId = ((await ask(f.rawFileId)).json as Loose).request.id as number;
    expect((await setHold(f.rawFileId, true)).status).toBe(200);
    actAs(w.users.pi);
    const held = await confirm(requestId);
    expect(held.status).toBe(409);
    expect(JSON.stringify(held.json)).toMatch(/legal hold/);
    expect(await stored(f.bucket, f.key)).toBe(true);
    actAs(w.users.steward);
    await setHold(f.rawFileId, false);
    actAs(w.users.pi);
    expect((await confirm(requestId)).status).toBe(200);
  });

  it('nothing is asked for before the retention date, nor without one, nor under a campaign hold', async () => {
    actAs(w.users.steward);
    const future = await freshDeletableFile(w, w.a, { retentionUntil: '2099-12-31' });
    const r1 = await ask(future.rawFileId);
    expect(r1.status).toBe(409);
    expect(JSON.stringify(r1.json)).toMatch(/kept until 2099-12-31/);
    const none = await freshDeletableFile(w, w.a, { retentionUntil: null });
    expect(JSON.stringify((await ask(none.rawFileId)).json)).toMatch(/No retention date/);

    // the campaign's retention applies where the file has none; its legal hold blocks every file of it
    const put = (body: unknown) =>
      callRoute(campaignRetention.PUT, {
        method: 'PUT',
        path: `/api/campaigns/${w.campaignA}/retention`,
        params: { campaignId: String(w.campaignA) },
        body,
      });
    try {
      expect((await put({ retentionUntil: '2021-01-01', embargoUntil: null })).status).toBe(200);
      const viaCampaign = await ask(none.rawFileId);
      expect(viaCampaign.status).toBe(201);
      const holdless = await put({ retentionUntil: '2021-01-01', legalHold: true });
      expect(holdless.status).toBe(400);
      expect(JSON.stringify(holdless.json)).toContain('legalHoldNote');
      expect(
        (await put({ retentionUntil: '2021-01-01', legalHold: true, legalHoldNote: 'Patent dispute, legal office.' }))
          .status,
      ).toBe(200);
      const other = await freshDeletableFile(w, w.a);
      const r3 = await ask(other.rawFileId);
      expect(r3.status).toBe(409);
      expect(JSON.stringify(r3.json)).toMatch(/campaign is under a legal hold/);
      expect(await audit('campaign.retention_set', w.campaignA)).not.toBeNull();
    } finally {
      await Campaign.update(
        { retention_until: null, legal_hold: false, legal_hold_note: null },
        { where: { id: w.campaignA } },
      );
    }
  });

  it('a PI may refuse a request with a reason; the file stays and the refusal is audited', async () => {
    const f = await freshDeletableFile(w, w.a);
    actAs(w.users.steward);
    const asked = await ask(f.rawFileId);
    expect(asked.status, JSON.stringify(asked.json)).toBe(201);
    const requestId = (asked.json as Loose).request.id as number;
    actAs(w.users.pi);
    const r = await callRoute(cancelRoute.POST, {
      method: 'POST',
      path: `/api/deletion-requests/${requestId}/cancel`,
      params: { requestId: String(requestId) },
      body: { reason: 'The paper revision still needs these raw data.' },
    });
    expect(r.status).toBe(200);
    expect((r.json as Loose).request.state).toBe('withdrawn');
    expect(details(await audit('file.deletion_refused', f.rawFileId)).reason).toMatch(/paper revision/);
    expect((await confirm(requestId)).status).toBe(409);
    expect(await stored(f.bucket, f.key)).toBe(true);
  });
});
