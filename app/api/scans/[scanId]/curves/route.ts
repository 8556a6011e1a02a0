// GET /api/scans/[scanId]/curves?step=&resultId=: the angular distribution in the radial window and the radial
// distribution of one step, from the stored result file.
import { z } from 'zod';
import { apiRoute, idParam, jsonResponse } from '@/lib/api/route';
import { readResultCurves } from '@/lib/jobs/result-arrays';
import { resultWithFile, scanParams } from '../access';

const query = z.object({
  step: z.coerce.number().int('a whole number').min(0, 'at least 0').max(4095).default(0),
  resultId: idParam.optional(),
});

export const GET = apiRoute({ params: scanParams, query }, async ({ actor, params, query }) => {
  const r = await resultWithFile(actor, params.scanId, query.resultId);
  const curves = await readResultCurves({
    resultId: r.id,
    bucket: r.derivedBucket,
    key: r.derivedKey,
    step: query.step,
  });
  return jsonResponse({ resultId: r.id, ...curves }, { headers: { 'cache-control': 'private, max-age=3600' } });
});
