// PUT /api/raw-files/[id]/retention: one file's own retention date, embargo and legal hold, where they differ from
// its campaign's (C10; data stewards, lib/policy.ts 'retention.manage'). Audited with the file's SHA-256.
import { apiRoute } from '@/lib/api/route';
import { getRawFileTeamId, setFileRetention } from '@/lib/db/queries/retention';
import { idParams } from '@/lib/ingest/schemas';
import { authorizeObject } from '@/lib/policy';
import { fileRetentionBody } from '@/lib/stewardship/schemas';

export const PUT = apiRoute({ params: idParams, body: fileRetentionBody }, async ({ actor, params, body, ip }) => {
  const teamId = await getRawFileTeamId({ rawFileId: params.id });
  authorizeObject(actor, 'retention.manage', { teamId, surface: 'upload' });
  return setFileRetention({ rawFileId: params.id, teamId, values: body, actor, ip });
});
