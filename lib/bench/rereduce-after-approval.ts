import 'server-only';
// The PI's approval from the calibration bench re-reduces the campaign (C7): once the version is the campaign's
// current one, every reducible scan is queued as one batch with the new current pair, exactly as the campaign's
// "re-reduce" button does (app/api/campaigns/[campaignId]/reduce). Older results stay, linked to their versions.
// Starting it is part of the approval (calibration.approve), so the PI needs no analyst's right to start it.
import { recordAudit } from '@/lib/audit';
import { createBatch, getCampaignOverview, listReducibleScanIds } from '@/lib/db/queries/scans';
import { AppError } from '@/lib/errors';
import { log } from '@/lib/log';
import { enqueueReductionForScan } from '@/lib/queue/enqueue';

export interface ApprovalBatch {
  batchId: number;
  total: number;
  queued: number;
  problems: string[];
}

export async function rereduceAfterApproval({
  campaignId,
  teamId,
  actor,
  ip,
}: {
  campaignId: number;
  teamId: number;
  actor: { userId: number; email: string };
  ip?: string | null;
}): Promise<ApprovalBatch | null> {
  const campaign = await getCampaignOverview({ campaignId });
  const calibrationId = campaign.currentCalibration?.id;
  const settingsId = campaign.currentSettings?.id;
  // the other kind is not approved yet: nothing to reduce with
  if (!calibrationId || !settingsId) return null;
  const scanIds = await listReducibleScanIds({ campaignId });
  if (!scanIds.length) return null;
  const batchId = await createBatch({
    campaignId,
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
      log.warn('approval batch: scan not queued', { scanId, batchId, err });
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
    targetId: campaignId,
    ip: ip ?? null,
    details: { batchId, calibrationId, settingsId, scans: scanIds.length, queued, onApproval: true },
  });
  return { batchId, total: scanIds.length, queued, problems: problems.slice(0, 20) };
}
