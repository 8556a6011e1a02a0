// GET /api/scans/[scanId]/download/h5?resultId=: the result file (FORMATS §5) of one result. Lobeline checks access,
// checks that the derived object is really stored (HEAD), then redirects to a short-lived presigned GET of exactly
// that object. The browser never sees the storage service's own error page: when the object is missing or storage
// does not answer, a browser (Accept: text/html) is sent back to the scan page with a sentence saying so; API
// clients get the usual JSON error.
import { apiRoute } from '@/lib/api/route';
import { AppError } from '@/lib/errors';
import { headObject, presignGet } from '@/lib/storage/s3';
import { resultQuery, resultWithFile, scanParams } from '../../access';

/** Why a download went back to the scan page (components/scans/scan-view.tsx says it in a sentence). */
export type DownloadProblem = 'missing' | 'unavailable';

export const GET = apiRoute({ params: scanParams, query: resultQuery }, async ({ actor, params, query, request }) => {
  const r = await resultWithFile(actor, params.scanId, query.resultId);
  const wantsPage = (request.headers.get('accept') ?? '').includes('text/html');
  const back = (problem: DownloadProblem) => {
    const to = new URL(`/scans/${params.scanId}`, request.url);
    to.searchParams.set('download', problem);
    if (query.resultId) to.searchParams.set('resultId', String(query.resultId));
    return new Response(null, {
      status: 303,
      headers: { location: to.pathname + to.search, 'cache-control': 'no-store' },
    });
  };
  try {
    await headObject(r.derivedBucket, r.derivedKey);
  } catch (err) {
    const missing = err instanceof AppError && err.code === 'not_found:storage';
    if (wantsPage) return back(missing ? 'missing' : 'unavailable');
    if (missing) {
      throw new AppError('not_found:reduction', {
        message: 'The stored result file of this scan is missing; reduce the scan again to rebuild it.',
        cause: err,
      });
    }
    throw err;
  }
  const url = await presignGet({
    bucket: r.derivedBucket,
    key: r.derivedKey,
    expiresIn: 300,
    downloadName: `lobeline-scan-${params.scanId}-cal-v${r.calibrationVersion}-set-v${r.settingsVersion}.h5`,
  });
  return new Response(null, { status: 303, headers: { location: url, 'cache-control': 'no-store' } });
});
