// GET /api/scans/[scanId]/download/json?resultId=: the result JSON (FORMATS §4) as a file.
import { apiRoute } from '@/lib/api/route';
import { getScanResult } from '@/lib/db/queries/scans';
import { resultQuery, scanFor, scanParams } from '../../access';

export const GET = apiRoute({ params: scanParams, query: resultQuery }, async ({ actor, params, query }) => {
  await scanFor(actor, params.scanId, 'result.view');
  const r = await getScanResult({ scanId: params.scanId, resultId: query.resultId });
  const name = `lobeline-scan-${params.scanId}-cal-v${r.calibrationVersion}-set-v${r.settingsVersion}.json`;
  return new Response(`${JSON.stringify(r.result, null, 2)}\n`, {
    headers: {
      'content-type': 'application/json; charset=utf-8',
      'content-disposition': `attachment; filename="${name}"`,
      'cache-control': 'no-store',
    },
  });
});
