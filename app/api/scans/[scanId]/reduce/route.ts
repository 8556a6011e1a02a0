// POST /api/scans/[scanId]/reduce { calibrationId?, settingsId? }: reduce the scan (again) with any calibration and
// settings version of its campaign (default: the current approved pair). The same versions twice is one job.
import { z } from 'zod';
import { apiRoute, idParam } from '@/lib/api/route';
import { recordAudit } from '@/lib/audit';
import { AppError } from '@/lib/errors';
import { enqueueReductionForScan } from '@/lib/queue/enqueue';
import { scanFor, scanParams } from '../access';

const body = z.object({ calibrationId: idParam.optional(), settingsId: idParam.optional() });

export const POST = apiRoute({ params: scanParams, body }, async ({ actor, params, body, ip }) => {
  const teamId = await scanFor(actor, params.scanId, 'reduction.start');
  const o = await enqueueReductionForScan(params.scanId, { ...body, requestedBy: actor.userId });
  if (!o.queued) throw new AppError('conflict:reduction', { message: o.reason });
  await recordAudit({
    action: 'reduction.requested',
    actorId: actor.userId,
    actorEmail: actor.email,
    teamId,
    targetType: 'scan',
    targetId: params.scanId,
    ip,
    details: { calibrationId: o.calibrationId, settingsId: o.settingsId, reductionJobId: o.reductionJobId },
  });
  return o;
});
