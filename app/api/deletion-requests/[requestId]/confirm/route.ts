// POST /api/deletion-requests/[requestId]/confirm: step two of a deletion (C10). A PI of the file's team or an
// administrator, never the person who asked, confirms; only then is the stored object removed. Audited.
import { apiRoute } from '@/lib/api/route';
import { confirmDeletion } from '@/lib/db/queries/retention';
import { requestFor, requestParams } from '../../access';

export const POST = apiRoute({ params: requestParams }, async ({ actor, params, ip }) => {
  const teamId = await requestFor(actor, params.requestId, 'confirm');
  return { request: await confirmDeletion({ requestId: params.requestId, teamId, actor, ip }) };
});
