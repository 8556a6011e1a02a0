// GET /api/scans/[scanId]/download/h5?resultId=: after the access check, a redirect to a short-lived presigned GET of
// exactly this result's derived object (FORMATS §5).
import { apiRoute } from '@/lib/api/route';
import { presignGet } from '@/lib/storage/s3';
import { resultQuery, resultWithFile, scanParams } from '../../access';

export const GET = apiRoute({ params: scanParams, query: resultQuery }, async ({ actor, params, query }) => {
  const r = await resultWithFile(actor, params.scanId, query.resultId);
  const url = await presignGet({
    bucket: r.derivedBucket,
    key: r.derivedKey,
    expiresIn: 300,
    downloadName: `lobeline-scan-${params.scanId}-cal-v${r.calibrationVersion}-set-v${r.settingsVersion}.h5`,
  });
  return new Response(null, { status: 303, headers: { location: url, 'cache-control': 'no-store' } });
});
