// GET  /api/uploads/[uploadId]/parts: parts already in the store (resume).
// POST /api/uploads/[uploadId]/parts: presigned URLs for the listed parts, each for one part size and ≤ 10 min.
import { apiRoute } from '@/lib/api/route';
import { partsBody, uploadParams } from '@/lib/ingest/schemas';
import { listUploadedParts, presignParts } from '@/lib/ingest/service';

export const GET = apiRoute({ params: uploadParams }, ({ actor, params }) => listUploadedParts(actor, params.uploadId));

export const POST = apiRoute({ params: uploadParams, body: partsBody }, async ({ actor, params, body }) => ({
  parts: await presignParts(actor, params.uploadId, body.partNumbers),
}));
