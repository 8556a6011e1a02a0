// GET /api/scans/[scanId]/download/csv?resultId=: the per-step table of a result as CSV (one row per step and lobe;
// units in the header; empty cells where a value does not apply).

import { resultToCsv } from '@/components/scans/result-csv';
import { apiRoute } from '@/lib/api/route';
import { getScanResult } from '@/lib/db/queries/scans';
import { resultQuery, scanFor, scanParams } from '../../access';

export const GET = apiRoute({ params: scanParams, query: resultQuery }, async ({ actor, params, query }) => {
  await scanFor(actor, params.scanId, 'result.view');
  const r = await getScanResult({ scanId: params.scanId, resultId: query.resultId });
  const name = `lobeline-scan-${params.scanId}-cal-v${r.calibrationVersion}-set-v${r.settingsVersion}.csv`;
  return new Response(resultToCsv(r.result), {
    headers: {
      'content-type': 'text/csv; charset=utf-8',
      'content-disposition': `attachment; filename="${name}"`,
      'cache-control': 'no-store',
    },
  });
});
