// POST /api/uploads/[uploadId]/complete: assemble the parts, verify the stored object (size, SHA-256 streamed
// from storage, the scan-file reader's full validation) and catalogue it: accepted, quarantined or linked duplicate.
import { apiRoute } from '@/lib/api/route';
import { completeBody, uploadParams } from '@/lib/ingest/schemas';
import { completeUpload } from '@/lib/ingest/service';

export const POST = apiRoute({ params: uploadParams, body: completeBody }, ({ actor, params, body, ip }) =>
  completeUpload(actor, params.uploadId, body?.sha256, ip),
);
