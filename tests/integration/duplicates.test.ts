// A file sent twice into one campaign (issue: a linked duplicate became a second scan in the campaign's counts and
// trend). The second upload is the team's stored scan file again, byte for byte (SHA-256 by node:crypto, FIPS
// 180-4, on both sides). Expected: it is linked to the stored file, named as the campaign scan it duplicates, not
// queued for reduction, and the campaign's counts, table and trend count the file once. The drop panel's question
// "is this checksum stored already?" answers with that scan.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

const { POST: completePOST } = await import('@/app/api/uploads/[uploadId]/complete/route');
const storedRoute = await import('@/app/api/shifts/[shiftId]/stored/route');
const { closeSequelize } = await import('@/lib/db');
const { getCampaignOverview, getCampaignTrend, listCampaignScans } = await import('@/lib/db/queries/scans');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client } = await import('@/lib/storage/s3');
const models = await import('@/models');
const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');

type World = Awaited<ReturnType<typeof makeWorld>>;
let world: World;

beforeAll(async () => {
  world = await makeWorld({ data: true });
});

afterAll(async () => {
  clearSession();
  await world?.cleanup();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
});

const table = (campaignId: number) => listCampaignScans({ campaignId, page: 1, pageSize: 50, sort: 'id', dir: 'asc' });

describe('a file sent twice into one campaign', () => {
  it('is shown as stored before sending, linked once, and counted once', async () => {
    const t = world.a;
    const first = await models.Scan.findByPk(t.scanId);
    const raw = await models.RawFile.findByPk(first!.raw_file_id);
    actAs(world.users.operator);

    // Before sending: the browser asks by checksum and learns which scan the file already is.
    const asked = await callRoute(storedRoute.GET, {
      method: 'GET',
      path: `/api/shifts/${t.shiftId}/stored`,
      params: { shiftId: String(t.shiftId) },
      query: { sha256: `${raw!.sha256},${'0'.repeat(64)}` },
    });
    expect(asked.status, JSON.stringify(asked.json)).toBe(200);
    const matches = (asked.json as { matches: { sha256: string; campaignScanId: number | null }[] }).matches;
    expect(matches).toHaveLength(1);
    expect(matches[0]).toMatchObject({ sha256: raw!.sha256, campaignScanId: t.scanId });

    const before = await getCampaignOverview({ campaignId: t.campaignId });
    const uploadId = await world.freshUpload(t, world.users.operator, 'single');
    const done = await callRoute(completePOST, {
      method: 'POST',
      path: `/api/uploads/${uploadId}/complete`,
      params: { uploadId: String(uploadId) },
      body: { sha256: raw!.sha256 },
    });
    expect(done.status, JSON.stringify(done.json)).toBe(200);
    const outcome = done.json as { outcome: string; scanId: number; rawFileId: number; countedAsScanId: number };
    expect(outcome.outcome).toBe('duplicate');
    expect(outcome.rawFileId).toBe(raw!.id);
    expect(outcome.countedAsScanId).toBe(t.scanId);
    expect(outcome.scanId).not.toBe(t.scanId);
    // not queued for a second reduction
    expect(await models.ReductionJob.count({ where: { scan_id: outcome.scanId } })).toBe(0);

    const after = await getCampaignOverview({ campaignId: t.campaignId });
    expect(after.counts.total).toBe(before.counts.total);
    const rows = await table(t.campaignId);
    expect(rows.rows.filter((r) => r.id === outcome.scanId)).toHaveLength(0);
    expect(rows.total).toBe(before.counts.total);

    // Even if the second row had been reduced (rows written before this fix), the trend has the file once.
    await models.Scan.update(
      { status: 'reduced', latest_result_id: first!.latest_result_id },
      { where: { id: outcome.scanId } },
    );
    const trend = await getCampaignTrend({ campaignId: t.campaignId });
    expect(new Set(trend.map((p) => p.scanId))).toEqual(new Set([t.scanId]));

    // What the queries read: the insert trigger (migrations/2026.12.03T10.00.00.scan-counted-as.ts) names the
    // campaign's first scan of the file on the second row, and nothing on the first.
    expect(await duplicateOf(outcome.scanId)).toBe(t.scanId);
    expect(await duplicateOf(t.scanId)).toBeNull();
  });

  it('counts the same file once in each campaign it was sent to', async () => {
    const first = await models.Scan.findByPk(world.a.scanId);
    const b = world.b;
    const { id: _id, created_at: _c, updated_at: _u, ...row } = first!.get({ plain: true }) as Record<string, unknown>;
    const before = await getCampaignOverview({ campaignId: b.campaignId });
    const other = await models.Scan.create({
      ...row,
      team_id: b.teamId,
      campaign_id: b.campaignId,
      shift_id: b.shiftId,
      status: 'uploaded',
      latest_result_id: null,
    } as never);
    expect(await duplicateOf(other.id)).toBeNull();
    const after = await getCampaignOverview({ campaignId: b.campaignId });
    expect(after.counts.total).toBe(before.counts.total + 1);
    expect((await table(b.campaignId)).rows.map((r) => r.id)).toContain(other.id);
  });
});

async function duplicateOf(scanId: number): Promise<number | null> {
  const [rows] = (await models.Scan.sequelize!.query('SELECT duplicate_of_scan_id AS d FROM scans WHERE id = ?', {
    replacements: [scanId],
  })) as [{ d: number | null }[], unknown];
  return rows[0]?.d == null ? null : Number(rows[0].d);
}
