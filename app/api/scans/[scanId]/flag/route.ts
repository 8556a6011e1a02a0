// PUT /api/scans/[scanId]/flag { flagged, reason }: an analyst flags a scan (or clears its flag) with a reason.
// Flagged scans keep their results; the campaign table can filter them and the trend draws them hollow.
import { z } from 'zod';
import { apiRoute } from '@/lib/api/route';
import { setScanFlag } from '@/lib/db/queries/scan-flags';
import { scanFor, scanParams } from '../access';

const body = z.object({
  flagged: z.boolean({ error: 'Say whether the scan is flagged.' }),
  reason: z
    .string({ error: 'Give a reason.' })
    .trim()
    .min(3, { error: 'Give a reason of at least a few words, so that the team knows why.' })
    .max(500, { error: 'Keep the reason under 500 characters.' }),
});

export const PUT = apiRoute({ params: scanParams, body }, async ({ actor, params, body, ip }) => {
  const teamId = await scanFor(actor, params.scanId, 'scan.flag');
  return setScanFlag({ scanId: params.scanId, flagged: body.flagged, reason: body.reason, actor, teamId, ip });
});
