// POST /api/raw-files/[id]/archive: move one stored raw file to the archive bucket in the archival storage class
// (C10; data stewards, lib/policy.ts 'archive.manage'). Answers 202 at once with the file `archiving`; a job copies,
// verifies the copy's SHA-256, marks the file `archived` and only then removes the original. Audited.
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { getRawFileTeamId } from '@/lib/db/queries/retention';
import { idParams } from '@/lib/ingest/schemas';
import { authorizeObject } from '@/lib/policy';
import { requestMove } from '@/lib/stewardship/move-requests';
import { moveBody } from '@/lib/stewardship/schemas';

export const POST = apiRoute({ params: idParams, body: moveBody.optional() }, async ({ actor, params, ip }) => {
  const teamId = await getRawFileTeamId({ rawFileId: params.id });
  authorizeObject(actor, 'archive.manage', { teamId, surface: 'upload' });
  const move = await requestMove({ rawFileId: params.id, kind: 'archive', actor, ip });
  return jsonResponse({ move }, { status: 202 });
});
