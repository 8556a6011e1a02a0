// POST /api/uploads/[uploadId]/complete: assemble the parts, check the stored size, then verify (copy to a key no
// URL names, SHA-256 streamed from storage, the scan-file reader's full validation) and catalogue it: accepted,
// quarantined or linked duplicate. Small files get the verdict in this answer (200); large ones are verified by a
// worker and the answer is 202 `verifying` (GET /api/uploads/[uploadId] gives the verdict when it is done).
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { completeBody, uploadParams } from '@/lib/ingest/schemas';
import { finishUpload } from '@/lib/ingest/service';

export const POST = apiRoute({ params: uploadParams, body: completeBody }, async ({ actor, params, body, ip }) => {
  const state = await finishUpload(actor, params.uploadId, body?.sha256, ip);
  return jsonResponse(state, { status: state.state === 'verifying' ? 202 : 200 });
});
