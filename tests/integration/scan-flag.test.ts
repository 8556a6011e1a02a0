// Flagging a scan (PUT /api/scans/[scanId]/flag; PRODUCT.md "Who uses it": the analyst flags scans) against the real
// MariaDB: the flag and its note land on the scan, the audit trail (C13) gets one event with the reason and the state
// before, the campaign table's flag filter lists the scan, clearing needs a reason too, and a missing or too short
// reason is refused with a sentence that names it and changes nothing. Access per role is in policy-matrix.test.ts.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { closeSequelize } = await import('@/lib/db');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client } = await import('@/lib/storage/s3');
const { AuditEvent, Scan } = await import('@/models');
const { PUT } = await import('@/app/api/scans/[scanId]/flag/route');
const { GET: listScans } = await import('@/app/api/campaigns/[campaignId]/scans/route');

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

const flag = (scanId: number, body: unknown) =>
  callRoute(PUT, { method: 'PUT', path: `/api/scans/${scanId}/flag`, params: { scanId: String(scanId) }, body });

describe('PUT /api/scans/[scanId]/flag', () => {
  it('sets the flag with its note, audits it and shows in the flag filter; clearing needs a reason too', async () => {
    const scanId = await w.freshScan(w.a);
    actAs(w.users.analyst);
    const reason = `MCP gain drifted during the scan ${w.run}`;
    const r = await flag(scanId, { flagged: true, reason });
    expect(r.status).toBe(200);
    expect(r.json).toEqual({ scanId, flagged: true, flagNote: reason });
    const row = await Scan.findByPk(scanId);
    expect(row?.flagged).toBe(true);
    expect(row?.flag_note).toBe(reason);
    const events = await AuditEvent.findAll({
      where: { action: 'scan.flagged', target_type: 'scan', target_id: String(scanId) },
    });
    expect(events).toHaveLength(1);
    expect(events[0]?.actor_id).toBe(w.users.analyst);
    expect(events[0]?.details).toMatchObject({ flagged: true, reason, before: { flagged: false } });

    const listed = await callRoute(listScans, {
      method: 'GET',
      path: `/api/campaigns/${w.a.campaignId}/scans`,
      params: { campaignId: String(w.a.campaignId) },
      query: { flagged: 'true', pageSize: 100 },
    });
    expect(listed.status).toBe(200);
    expect((listed.json as { rows: { id: number }[] }).rows.map((x) => x.id)).toContain(scanId);

    const cleared = await flag(scanId, { flagged: false, reason: 'Gain re-measured; counts are fine.' });
    expect(cleared.status).toBe(200);
    const after = await Scan.findByPk(scanId);
    expect(after?.flagged).toBe(false);
    expect(after?.flag_note).toBeNull();
    expect(
      await AuditEvent.count({ where: { action: 'scan.flagged', target_type: 'scan', target_id: String(scanId) } }),
    ).toBe(2);
  });

  it('refuses a missing or too short reason with a sentence and changes nothing', async () => {
    const scanId = await w.freshScan(w.a);
    actAs(w.users.analyst);
    for (const body of [{ flagged: true }, { flagged: true, reason: ' x ' }]) {
      const r = await flag(scanId, body);
      expect(r.status).toBe(400);
      expect(JSON.stringify(r.json)).toMatch(/reason/i);
    }
    expect((await Scan.findByPk(scanId))?.flagged).toBe(false);
    expect(await AuditEvent.count({ where: { action: 'scan.flagged', target_id: String(scanId) } })).toBe(0);
  });
});
