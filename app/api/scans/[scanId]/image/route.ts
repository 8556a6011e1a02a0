// GET /api/scans/[scanId]/image?kind=calibrated|mean|amplitude|phase_of_max|contrast&step=&max=&resultId=
// One image from the stored result file (FORMATS §5), block-downsampled to at most `max` cells per side, as JSON
// with a base64 Float32 array. Cached in memory per result.
import { z } from 'zod';
import { apiRoute, idParam, jsonResponse } from '@/lib/api/route';
import { IMAGE_KINDS, readResultImage } from '@/lib/jobs/result-arrays';
import { resultWithFile, scanParams } from '../access';

const query = z.object({
  kind: z.enum(IMAGE_KINDS, `one of ${IMAGE_KINDS.join(', ')}`).default('calibrated'),
  step: z.coerce.number().int('a whole number').min(0, 'at least 0').max(4095).default(0),
  max: z.coerce.number().int().min(32, 'at least 32').max(1024, 'at most 1024').default(256),
  resultId: idParam.optional(),
});

export const GET = apiRoute({ params: scanParams, query }, async ({ actor, params, query }) => {
  const r = await resultWithFile(actor, params.scanId, query.resultId);
  const image = await readResultImage({
    resultId: r.id,
    bucket: r.derivedBucket,
    key: r.derivedKey,
    kind: query.kind,
    step: query.step,
    maxSide: query.max,
  });
  // Results never change once written: the browser may keep the image for a while.
  return jsonResponse({ resultId: r.id, ...image }, { headers: { 'cache-control': 'private, max-age=3600' } });
});
