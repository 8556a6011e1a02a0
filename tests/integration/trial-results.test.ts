// Trial results (issue: a result of a calibration that was never approved became the scan's latest result and
// entered the trend, marked only "cal v2"). A scan reduced with the approved pair, then once more with a draft
// calibration (the same body, so both reductions succeed; the forward model's own detector, reduction/synth):
// the scan's current result, the campaign table and the trend keep the approved one, the draft's result is listed
// as a trial; the approval preview lists what approving the draft changes; after the approval the draft's result
// is the current one.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

const approveRoute = await import('@/app/api/campaigns/[campaignId]/calibrations/[versionId]/approve/route');
const { closeSequelize } = await import('@/lib/db');
const { getCampaignTrend, getScanDetail, getScanResult, listCampaignScans } = await import('@/lib/db/queries/scans');
const { processReduction } = await import('@/lib/jobs/reduce-scan');
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

describe('results of a calibration that was never approved', () => {
  it('stay trial results until the PI approves, after seeing what changes', async () => {
    const t = world.a;
    const approvedResult = t.resultId;
    const draftId = await world.freshDraft(t, 'calibration');
    const draft = await models.DetectorCalibrationVersion.findByPk(draftId);
    const job = await models.ReductionJob.create({
      scan_id: t.scanId,
      calibration_id: draftId,
      settings_id: t.settingsId,
      batch_id: null,
      requested_by: null,
      queue_job_id: null,
      error_message: null,
      started_at: null,
      finished_at: null,
    } as never);
    const outcome = await processReduction(
      { scanId: t.scanId, calibrationId: draftId, settingsId: t.settingsId, reductionJobId: job.id },
      { attemptsMade: 0, maxAttempts: 1, updateProgress: async () => undefined },
    );
    const trialResult = outcome.resultId;
    expect(trialResult).not.toBe(approvedResult);

    const detail = await getScanDetail({ scanId: t.scanId });
    expect(detail.scan.latestResultId).toBe(approvedResult);
    expect(detail.results.find((r) => r.id === trialResult)).toMatchObject({ trial: true, isLatest: false });
    expect(detail.results.find((r) => r.id === approvedResult)).toMatchObject({ trial: false, isLatest: true });
    expect((await getScanResult({ scanId: t.scanId })).id).toBe(approvedResult);
    const table = await listCampaignScans({ campaignId: t.campaignId, page: 1, pageSize: 50, sort: 'id', dir: 'asc' });
    expect(table.rows.find((r) => r.id === t.scanId)?.latestResultId).toBe(approvedResult);
    const trend = await getCampaignTrend({ campaignId: t.campaignId });
    expect(new Set(trend.filter((p) => p.scanId === t.scanId).map((p) => p.resultId))).toEqual(
      new Set([approvedResult]),
    );

    // The PI first sees what the approval changes.
    actAs(world.users.pi);
    const params = { campaignId: String(t.campaignId), versionId: String(draftId) };
    const path = `/api/campaigns/${t.campaignId}/calibrations/${draftId}/approve`;
    const preview = await callRoute(approveRoute.GET, { method: 'GET', path, params });
    expect(preview.status, JSON.stringify(preview.json)).toBe(200);
    const p = (preview.json as { preview: Record<string, unknown> }).preview;
    const cal = await models.DetectorCalibrationVersion.findByPk(t.calibrationId);
    expect(p.before).toMatchObject({ calibration: cal!.version });
    expect(p.after).toMatchObject({ calibration: draft!.version });
    expect(p.trialResultsBecomingCurrent).toBe(1);
    expect((p.scansToReduce as { scanId: number }[]).map((s) => s.scanId)).not.toContain(t.scanId);

    const approved = await callRoute(approveRoute.POST, { method: 'POST', path, params });
    expect(approved.status, JSON.stringify(approved.json)).toBe(200);
    expect((await getScanDetail({ scanId: t.scanId })).scan.latestResultId).toBe(trialResult);
  });
});
