// POST /api/raw-files/[id]/restore: bring an archived raw file back online (C10). Data stewards for every team, the
// team's PI for the team's own files (lib/policy.ts 'archive.restore'). Answers 202 with the file `restoring`; a job
// copies it back, verifies its SHA-256, marks it `online` and then removes the archive copy. Audited.
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { getRawFileTeamId } from '@/lib/db/queries/retention';
import { idParams } from '@/lib/ingest/schemas';
import { authorizeObject } from '@/lib/policy';
import { requestMove } from '@/lib/stewardship/move-requests';
import { moveBody } from '@/lib/stewardship/schemas';

export const POST = apiRoute({ params: idParams, body: moveBody.optional() }, async ({ actor, params, ip }) => {
  const teamId = await getRawFileTeamId({ rawFileId: params.id });
  authorizeObject(actor, 'archive.restore', { teamId, surface: 'upload' });
  const move = await requestMove({ rawFileId: params.id, kind: 'restore', actor, ip });
  return jsonResponse({ move }, { status: 202 });
});
