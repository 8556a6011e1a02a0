// POST /api/uploads/[uploadId]/abort: cancel an unfinished upload (aborts the multipart upload in storage).
import { apiRoute } from '@/lib/api/route';
import { uploadParams } from '@/lib/ingest/schemas';
import { abortUpload } from '@/lib/ingest/service';

export const POST = apiRoute({ params: uploadParams }, ({ actor, params, ip }) =>
  abortUpload(actor, params.uploadId, ip),
);
