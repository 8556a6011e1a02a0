// POST /api/uploads: start an upload, or resume the caller's unfinished upload of the same file (name + size +
// lastModified) in the same shift. The server picks the object key; the answer holds a presigned PUT (small
// files) or the multipart plan with the parts already stored.
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { startUploadBody } from '@/lib/ingest/schemas';
import { startUpload } from '@/lib/ingest/service';

export const POST = apiRoute({ body: startUploadBody }, async ({ actor, body }) => {
  const ticket = await startUpload(actor, body);
  return jsonResponse(ticket, { status: ticket.resumed ? 200 : 201 });
});
