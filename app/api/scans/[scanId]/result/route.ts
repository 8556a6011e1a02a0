// GET /api/scans/[scanId]/result?resultId=: the result JSON (FORMATS §4) of the latest (or a given) result, with the
// versions it was computed with.
import { apiRoute } from '@/lib/api/route';
import { getScanResult } from '@/lib/db/queries/scans';
import { resultQuery, scanFor, scanParams } from '../access';

export const GET = apiRoute({ params: scanParams, query: resultQuery }, async ({ actor, params, query }) => {
  await scanFor(actor, params.scanId, 'result.view');
  const r = await getScanResult({ scanId: params.scanId, resultId: query.resultId });
  return {
    id: r.id,
    calibrationId: r.calibrationId,
    settingsId: r.settingsId,
    calibrationVersion: r.calibrationVersion,
    settingsVersion: r.settingsVersion,
    createdAt: r.createdAt,
    hasResultFile: !!r.derivedKey,
    result: r.result,
  };
});
