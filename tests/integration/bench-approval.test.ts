// The PI's approval from the calibration bench re-reduces the campaign (issue 15): POST approve with
// `{ rereduce: true }` makes the draft current and queues one batch of every reducible scan with the new pair
// (the PI needs no analyst's right for it: the approval is the decision); without the body the approval does what
// it always did and starts nothing. Older results stay linked to their versions.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

const approveRoute = await import('@/app/api/campaigns/[campaignId]/calibrations/[versionId]/approve/route');
const { closeSequelize } = await import('@/lib/db');
const { listReducibleScanIds } = await import('@/lib/db/queries/scans');
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

describe('approval from the bench', () => {
  it('without a body: approved, no batch', async () => {
    const t = world.a;
    const draftId = await world.freshDraft(t, 'calibration');
    actAs(world.users.pi);
    const before = await models.ReductionBatch.count({ where: { campaign_id: t.campaignId } });
    const r = await callRoute(approveRoute.POST, {
      method: 'POST',
      path: `/api/campaigns/${t.campaignId}/calibrations/${draftId}/approve`,
      params: { campaignId: String(t.campaignId), versionId: String(draftId) },
    });
    expect(r.status, JSON.stringify(r.json)).toBe(200);
    expect((r.json as Record<string, unknown>).batch).toBeUndefined();
    expect(await models.ReductionBatch.count({ where: { campaign_id: t.campaignId } })).toBe(before);
  });

  it('with { rereduce: true }: the draft is current and one batch queues every reducible scan with it', async () => {
    const t = world.a;
    const draftId = await world.freshDraft(t, 'calibration');
    actAs(world.users.pi);
    const r = await callRoute(approveRoute.POST, {
      method: 'POST',
      path: `/api/campaigns/${t.campaignId}/calibrations/${draftId}/approve`,
      params: { campaignId: String(t.campaignId), versionId: String(draftId) },
      body: { rereduce: true },
    });
    expect(r.status, JSON.stringify(r.json)).toBe(200);
    const body = r.json as { currentCalibrationId: number; batch: { batchId: number; total: number; queued: number } };
    expect(body.currentCalibrationId).toBe(draftId);
    const scans = await listReducibleScanIds({ campaignId: t.campaignId });
    expect(body.batch.total).toBe(scans.length);
    expect(body.batch.queued).toBe(scans.length);
    const batch = await models.ReductionBatch.findByPk(body.batch.batchId);
    expect(batch).toMatchObject({ campaign_id: t.campaignId, calibration_id: draftId });
    const jobs = await models.ReductionJob.findAll({ where: { batch_id: body.batch.batchId } });
    expect(new Set(jobs.map((j) => j.scan_id))).toEqual(new Set(scans));
    expect(jobs.every((j) => j.calibration_id === draftId)).toBe(true);
    // the earlier result stays, linked to its version
    expect(await models.ScanResult.count({ where: { id: t.resultId, calibration_id: t.calibrationId } })).toBe(1);
  });

  it('an analyst cannot approve, with or without a batch', async () => {
    const t = world.a;
    const draftId = await world.freshDraft(t, 'calibration');
    actAs(world.users.analyst);
    const r = await callRoute(approveRoute.POST, {
      method: 'POST',
      path: `/api/campaigns/${t.campaignId}/calibrations/${draftId}/approve`,
      params: { campaignId: String(t.campaignId), versionId: String(draftId) },
      body: { rereduce: true },
    });
    expect(r.status).toBe(403);
  });
});
