// POST /api/deletion-requests/[requestId]/cancel: withdraw (the steward who asked) or refuse (a PI of the team or
// an administrator) a deletion that is not confirmed yet, with a reason. Audited; the file stays.
import { apiRoute } from '@/lib/api/route';
import { cancelDeletion } from '@/lib/db/queries/retention';
import { reasonBody } from '@/lib/stewardship/schemas';
import { requestFor, requestParams } from '../../access';

export const POST = apiRoute({ params: requestParams, body: reasonBody }, async ({ actor, params, body, ip }) => {
  const teamId = await requestFor(actor, params.requestId, 'cancel');
  return { request: await cancelDeletion({ requestId: params.requestId, teamId, reason: body.reason, actor, ip }) };
});
