// POST /api/raw-files/[id]/release: an analyst releases a quarantined file, either re-validated with corrected
// metadata (`mode: 'revalidate'`, metadataOverride) or accepted as it is with a recorded reason (`mode: 'accept'`).
import { apiRoute } from '@/lib/api/route';
import { idParams, releaseBody } from '@/lib/ingest/schemas';
import { releaseRawFile } from '@/lib/ingest/service';

export const POST = apiRoute({ params: idParams, body: releaseBody }, ({ actor, params, body, ip }) =>
  releaseRawFile(actor, params.id, body, ip),
);
