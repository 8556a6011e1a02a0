// /api/campaigns/[campaignId]/reduce
//   GET   the latest re-reduction batches with their progress
//   POST  { calibrationId?, settingsId? } re-reduces every scan of the campaign (not quarantined) as one batch with
//         the given versions (default: the current approved pair). Older results stay, linked to their versions.
import { z } from 'zod';
import { apiRoute, idParam } from '@/lib/api/route';
import { recordAudit } from '@/lib/audit';
import { createBatch, getCampaignOverview, listBatches, listReducibleScanIds } from '@/lib/db/queries/scans';
import { AppError } from '@/lib/errors';
import { log } from '@/lib/log';
import { enqueueReductionForScan } from '@/lib/queue/enqueue';
import { campaignFor, campaignParams } from '../access';

export const GET = apiRoute({ params: campaignParams }, async ({ actor, params }) => {
  await campaignFor(actor, params.campaignId, 'campaign.view');
  return { batches: await listBatches({ campaignId: params.campaignId }) };
});

const body = z.object({ calibrationId: idParam.optional(), settingsId: idParam.optional() });

export const POST = apiRoute({ params: campaignParams, body }, async ({ actor, params, body, ip }) => {
  const teamId = await campaignFor(actor, params.campaignId, 'reduction.start');
  const campaign = await getCampaignOverview({ campaignId: params.campaignId });
  const calibrationId = body.calibrationId ?? campaign.currentCalibration?.id;
  const settingsId = body.settingsId ?? campaign.currentSettings?.id;
  if (!calibrationId || !settingsId) {
    throw new AppError('conflict:reduction', {
      message: 'The campaign has no approved calibration and settings yet; approve both (or choose versions) first.',
    });
  }
  const scanIds = await listReducibleScanIds({ campaignId: params.campaignId });
  if (!scanIds.length) throw new AppError('conflict:reduction', { message: 'The campaign has no scans to reduce.' });
  const batchId = await createBatch({
    campaignId: params.campaignId,
    calibrationId,
    settingsId,
    requestedBy: actor.userId,
    total: scanIds.length,
  });
  let queued = 0;
  const problems: string[] = [];
  for (const scanId of scanIds) {
    try {
      const o = await enqueueReductionForScan(scanId, {
        calibrationId,
        settingsId,
        batchId,
        requestedBy: actor.userId,
      });
      if (o.queued) queued += 1;
      else problems.push(`scan ${scanId}: ${o.reason}`);
    } catch (err) {
      log.warn('batch: scan not queued', { scanId, batchId, err });
      problems.push(`scan ${scanId}: ${(err as Error).message}`);
      if (err instanceof AppError && err.code === 'unavailable:queue') throw err;
    }
  }
  await recordAudit({
    action: 'reduction.batch_requested',
    actorId: actor.userId,
    actorEmail: actor.email,
    teamId,
    targetType: 'campaign',
    targetId: params.campaignId,
    ip,
    details: { batchId, calibrationId, settingsId, scans: scanIds.length, queued },
  });
  return { batchId, total: scanIds.length, queued, problems: problems.slice(0, 20) };
});
