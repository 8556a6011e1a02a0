// POST /api/raw-files/[id]/deletion: step one of deleting a stored raw file (C10): a data steward asks, with a
// reason. Refused (409, reasons named) under a legal hold, without a retention date, or before it has passed.
// Nothing is removed here: a PI of the team or an administrator confirms (POST /api/deletion-requests/[id]/confirm).
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { getRawFileTeamId, requestDeletion } from '@/lib/db/queries/retention';
import { idParams } from '@/lib/ingest/schemas';
import { authorizeObject } from '@/lib/policy';
import { reasonBody } from '@/lib/stewardship/schemas';

export const POST = apiRoute({ params: idParams, body: reasonBody }, async ({ actor, params, body, ip }) => {
  const teamId = await getRawFileTeamId({ rawFileId: params.id });
  authorizeObject(actor, 'deletion.request', { teamId, surface: 'upload' });
  const request = await requestDeletion({ rawFileId: params.id, teamId, reason: body.reason, actor, ip });
  return jsonResponse({ request }, { status: 201 });
});
