// GET /api/uploads/[uploadId]: where the caller's upload stands: the verdict once verified, else `verifying`
// (a worker checks large files after the completion answered), `open`, `failed` or `aborted` with the reason.
import { apiRoute } from '@/lib/api/route';
import { uploadParams } from '@/lib/ingest/schemas';
import { getUploadState } from '@/lib/ingest/service';

export const GET = apiRoute({ params: uploadParams }, ({ actor, params }) => getUploadState(actor, params.uploadId));
