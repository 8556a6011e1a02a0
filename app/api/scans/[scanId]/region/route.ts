// GET /api/scans/[scanId]/region?px0=&px1=&py0=&py1=&resultId=: counts inside a rectangle of the momentum plane
// (a.u.) for every step, with the step values, for a yield-versus-phase curve of a region the user drew.
import { z } from 'zod';
import { apiRoute, idParam } from '@/lib/api/route';
import { readRegionYield } from '@/lib/jobs/result-arrays';
import { resultWithFile, scanParams } from '../access';

const au = z.coerce.number().min(-50, 'at least −50 a.u.').max(50, 'at most 50 a.u.');
const query = z
  .object({ px0: au, px1: au, py0: au, py1: au, resultId: idParam.optional() })
  .refine((q) => q.px1 > q.px0 && q.py1 > q.py0, 'the rectangle needs px0 < px1 and py0 < py1');

export const GET = apiRoute({ params: scanParams, query }, async ({ actor, params, query }) => {
  const r = await resultWithFile(actor, params.scanId, query.resultId);
  const { yields, cells } = await readRegionYield({
    resultId: r.id,
    bucket: r.derivedBucket,
    key: r.derivedKey,
    px: [query.px0, query.px1],
    py: [query.py0, query.py1],
  });
  return {
    resultId: r.id,
    cells,
    stepQuantity: r.result.input.step_quantity,
    stepUnits: r.result.input.step_units,
    values: r.result.steps.map((s) => s.value),
    yields,
  };
});
